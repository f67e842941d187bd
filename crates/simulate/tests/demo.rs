//! Demo plant and route-generator checks.
#![allow(clippy::unwrap_used)]

use std::collections::BTreeSet;

use spallcast_simulate::{
    BAD_RECORDING_SAMPLES, FaultKind, PLANT_TOML, SCENARIO_TOML, dated_demo, demo_dir_default,
    demo_truth_from_str, generate_demo_routes_from_str,
};

/// The committed scenario covers what the demo promises: 18 monthly days, every fault location,
/// every stage, a replacement followed by a healthy new life, mostly healthy bearings, a speed
/// change and one bad recording.
#[test]
fn demo_truth_covers_the_story() {
    let truth = demo_truth_from_str(PLANT_TOML, SCENARIO_TOML).unwrap();
    let days: BTreeSet<_> = truth.iter().map(|t| t.date).collect();
    assert_eq!(days.len(), 18);
    let points: BTreeSet<_> = truth.iter().map(|t| t.point.as_str()).collect();
    assert!((20..=30).contains(&points.len()), "{} points", points.len());
    let kinds: BTreeSet<_> = truth
        .iter()
        .filter_map(|t| t.fault)
        .map(FaultKind::label)
        .collect();
    assert_eq!(kinds.len(), 4, "{kinds:?}");
    let stages: BTreeSet<_> = truth.iter().map(|t| t.stage.get()).collect();
    assert_eq!(stages, (0..=4).collect());
    // Mostly healthy: on the last day most bearing positions are healthy.
    let last = days.iter().max().unwrap();
    let on_last: Vec<_> = truth.iter().filter(|t| t.date == *last).collect();
    let healthy = on_last.iter().filter(|t| t.fault.is_none()).count();
    assert!(
        healthy * 3 > on_last.len() * 2,
        "{healthy} of {} healthy",
        on_last.len()
    );
    // RW-P1 PDE: stage 4 before the replacement on 2026-03-05, healthy after.
    let replaced = chrono::NaiveDate::from_ymd_opt(2026, 3, 5).unwrap();
    let pde: Vec<_> = truth.iter().filter(|t| t.point == "RW-P1-PDE-H").collect();
    let before = pde.iter().rfind(|t| t.date < replaced).unwrap();
    assert_eq!(before.stage.get(), 4);
    assert!(
        pde.iter()
            .filter(|t| t.date >= replaced)
            .all(|t| t.fault.is_none())
    );
    // Speed change on the variable-speed set.
    let rpms: Vec<f64> = truth
        .iter()
        .filter(|t| t.point == "TW-M1-MDE-H")
        .map(|t| t.rpm)
        .collect();
    assert!(rpms.iter().any(|r| (r - 990.0).abs() < 5.0));
    assert!(rpms.iter().any(|r| (r - 1180.0).abs() < 5.0));
    assert!(rpms.iter().any(|r| (r - 890.0).abs() < 5.0));
    assert_eq!(truth.iter().filter(|t| t.note.is_some()).count(), 1);
    // Some points at a rate that reaches the ultrasonic band, most not.
    assert!(truth.iter().any(|t| t.sample_rate_hz >= 51_200.0));
    assert!(truth.iter().any(|t| t.sample_rate_hz <= 25_600.0));
}

/// The oil-fed and grease-fed outer-race faults share onset and drawn durations; the oil one
/// (AE-F2 FDE) must lag the grease one (RW-P2 PDE) on every day (common practice, no source).
#[test]
fn demo_oil_fault_lags_grease_fault() {
    let truth = demo_truth_from_str(PLANT_TOML, SCENARIO_TOML).unwrap();
    let level = |p: &str| -> Vec<f64> {
        truth
            .iter()
            .filter(|t| t.point == p)
            .map(|t| f64::from(t.stage.get()) + t.severity)
            .collect()
    };
    let (grease, oil) = (level("RW-P2-PDE-H"), level("AE-F2-FDE-H"));
    assert!(grease.iter().zip(&oil).all(|(g, o)| o <= g));
    assert!(grease.last().unwrap() - oil.last().unwrap() >= 1.0);
}

#[test]
fn scenario_errors_name_the_problem() {
    let bad = SCENARIO_TOML.replace("point = \"AE-M1-MNDE-H\"", "point = \"NO-SUCH-POINT\"");
    let e = demo_truth_from_str(PLANT_TOML, &bad)
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("scenario.toml") && e.contains("NO-SUCH-POINT"),
        "{e}"
    );
    let bad = SCENARIO_TOML.replace("replaced = \"2026-03-05\"", "replaced = \"2026-03-06\"");
    let e = demo_truth_from_str(PLANT_TOML, &bad)
        .unwrap_err()
        .to_string();
    assert!(e.contains("installed"), "{e}");
    let e = demo_truth_from_str("[[areas]\n", SCENARIO_TOML)
        .unwrap_err()
        .to_string();
    assert!(e.contains("plant.toml"), "{e}");
}

/// Writes a shortened demo (two route days, short recordings) twice and checks the folder layout,
/// the WAV headers, the bad recording and byte-for-byte determinism.
#[test]
fn generated_routes_are_complete_and_deterministic() {
    let start = SCENARIO_TOML.find("route_days = [").unwrap();
    let end = start + SCENARIO_TOML[start..].find("]\n").unwrap() + 2;
    let short = format!(
        "{}route_days = [\n  {{ date = \"2025-06-10\", start = \"08:30\", offset = \"+01:00\" }},\n  {{ date = \"2026-01-13\", start = \"09:15\", offset = \"+00:00\" }},\n]\n{}",
        &SCENARIO_TOML[..start],
        &SCENARIO_TOML[end..]
    )
    .replace("samples = 65536", "samples = 4096")
    .replace("default_samples = 32768", "default_samples = 2048")
    .replace("samples = 32768", "samples = 2048");
    let a = tempfile::tempdir().unwrap();
    let b = tempfile::tempdir().unwrap();
    let sa = generate_demo_routes_from_str(PLANT_TOML, &short, a.path()).unwrap();
    let sb = generate_demo_routes_from_str(PLANT_TOML, &short, b.path()).unwrap();
    assert_eq!(sa.route_dirs.len(), 2);
    assert_eq!(sa.bad_recordings, 1);
    assert_eq!(sa.truth, sb.truth);
    for dir in &sa.route_dirs {
        let name = dir.file_name().unwrap().to_str().unwrap().to_owned();
        assert!(name.starts_with("route-20"), "{name}");
        let route = std::fs::read_to_string(dir.join("route.csv")).unwrap();
        let mut lines = route.lines();
        assert_eq!(lines.next(), Some("file,point,taken_at,rpm,units"));
        let rows: Vec<&str> = lines.collect();
        assert_eq!(rows.len(), 25);
        for row in &rows {
            let f: Vec<&str> = row.split(',').collect();
            chrono::DateTime::parse_from_rfc3339(f[2]).unwrap();
            assert!(f[3].parse::<f64>().unwrap() > 100.0);
            let wav = dir.join(f[0]);
            let bytes_a = std::fs::read(&wav).unwrap();
            let bytes_b = std::fs::read(b.path().join(&name).join(f[0])).unwrap();
            assert_eq!(bytes_a, bytes_b, "{}", wav.display());
            let reader = hound::WavReader::open(&wav).unwrap();
            let spec = reader.spec();
            assert_eq!((spec.channels, spec.bits_per_sample), (1, 32));
            assert_eq!(spec.sample_format, hound::SampleFormat::Float);
            let n = reader.len() as usize;
            if name == "route-2026-01-13" && f[1] == "AE-M1-MNDE-H" {
                assert_eq!(n, BAD_RECORDING_SAMPLES);
            } else {
                assert!(n == 2048 || n == 4096, "{n}");
            }
        }
        let truth = std::fs::read_to_string(dir.join("truth.csv")).unwrap();
        assert!(truth.starts_with("file,point,stage,fault,severity,note\n"));
        assert_eq!(truth.lines().count(), 26);
    }
    // Offsets are kept as written: summer +01:00, winter +00:00.
    let june = std::fs::read_to_string(sa.route_dirs[0].join("route.csv")).unwrap();
    assert!(june.contains("2025-06-10T08:30:00+01:00"));
    let jan = std::fs::read_to_string(sa.route_dirs[1].join("route.csv")).unwrap();
    assert!(jan.contains("2026-01-13T09:15:00+00:00"));
}

#[test]
fn embedded_files_match_the_demo_folder() {
    let dir = demo_dir_default();
    assert_eq!(
        std::fs::read_to_string(dir.join("plant.toml")).unwrap(),
        PLANT_TOML
    );
    assert_eq!(
        std::fs::read_to_string(dir.join("scenario.toml")).unwrap(),
        SCENARIO_TOML
    );
}

/// The stage-by-month table in `demo-plant/README.md` matches the scenario (one digit per route
/// month, June 2025 to November 2026).
#[test]
fn readme_table_matches_truth() {
    let truth = demo_truth_from_str(PLANT_TOML, SCENARIO_TOML).unwrap();
    let stages = |point: &str| -> String {
        truth
            .iter()
            .filter(|t| t.point == point)
            .map(|t| t.stage.to_string())
            .collect()
    };
    assert_eq!(stages("RW-P1-PDE-H"), "222223334000000000");
    assert_eq!(stages("RW-P2-PDE-H"), "000001111222223344");
    assert_eq!(stages("AE-F2-FDE-H"), "000001111111122222");
    assert_eq!(stages("FT-P1-PDE-H"), "000000000000122223");
    assert_eq!(stages("TW-M1-MDE-H"), "000111111222222222");
    // Replaced between the last two route days (scenario `replaced = "2026-11-04"`): healthy on the
    // last day, so the demo has a change on its last route day.
    assert_eq!(stages("AE-F1-FDE-H"), "111111222222222230");
    assert_eq!(stages("AE-G1-HSDE-H"), "000011111111111222");
    assert_eq!(stages("TW-P1-PDE-H"), "000000000000000000");
}

fn date(t: &str) -> chrono::NaiveDate {
    chrono::NaiveDate::parse_from_str(t, "%Y-%m-%d").unwrap()
}

/// Built on 2026-12-02 (the day the window was tried), the demo's last route day falls within the
/// week before, every planned outage lies ahead, and the story is the same as written, moved in
/// time: the same stages in the same order, dates moved by whole weeks.
#[test]
fn dated_demo_ends_in_the_week_before_it_is_built() {
    let today = date("2026-12-02");
    let dated = dated_demo(PLANT_TOML, SCENARIO_TOML, today).unwrap();
    let gap = (today - dated.last_route_day).num_days();
    assert!(
        (0..7).contains(&gap),
        "last route day {}",
        dated.last_route_day
    );
    assert_eq!(dated.shift_days, 21);

    let truth = demo_truth_from_str(&dated.plant_toml, &dated.scenario_toml).unwrap();
    let last = truth.iter().map(|t| t.date).max().unwrap();
    assert_eq!(last, dated.last_route_day);
    let written = demo_truth_from_str(PLANT_TOML, SCENARIO_TOML).unwrap();
    assert_eq!(truth.len(), written.len());
    for (moved, as_written) in truth.iter().zip(&written) {
        assert_eq!(moved.date - as_written.date, chrono::Duration::days(21));
        assert_eq!(
            (moved.stage, &moved.point),
            (as_written.stage, &as_written.point)
        );
    }

    // Every outage starts after today (plant.toml `[[outages]] start`).
    let plant: toml::Value = toml::from_str(&dated.plant_toml).unwrap();
    let outages = plant["outages"].as_array().unwrap();
    assert_eq!(outages.len(), 7);
    for o in outages {
        let start = date(o["start"].as_str().unwrap());
        assert!(start > today, "outage {} starts {start}", o["name"]);
    }
}

/// The last route day differs from the one before for at least one bearing (a replacement and a
/// stage change), so "Changed since the previous route day" has something to show.
#[test]
fn demo_changes_on_its_last_route_day() {
    let truth = demo_truth_from_str(PLANT_TOML, SCENARIO_TOML).unwrap();
    let days: BTreeSet<_> = truth.iter().map(|t| t.date).collect();
    let mut days = days.into_iter().rev();
    let (last, previous) = (days.next().unwrap(), days.next().unwrap());
    let stage_on = |day, point: &str| {
        truth
            .iter()
            .find(|t| t.date == day && t.point == point)
            .map(|t| t.stage.get())
            .unwrap()
    };
    let changed: Vec<&str> = truth
        .iter()
        .filter(|t| t.date == last && stage_on(previous, &t.point) != t.stage.get())
        .map(|t| t.point.as_str())
        .collect();
    assert!(changed.contains(&"AE-F1-FDE-H"), "{changed:?}");
    assert!(changed.contains(&"FT-P1-PDE-H"), "{changed:?}");
    assert_eq!(stage_on(last, "AE-F1-FDE-H"), 0);
    assert_eq!(stage_on(previous, "AE-F1-FDE-H"), 3);
}
