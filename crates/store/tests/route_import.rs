//! Route import: readings round trip, every reject reason, idempotent re-import, clipping, finding
#![allow(
    clippy::unwrap_used,
    clippy::float_cmp,
    reason = "tests: a panic is a failure"
)]
//! changes, re-analysis, and the queries and plan functions built on imported data.
mod common;

use std::fmt::Write as _;
use std::path::Path;

use chrono::NaiveDate;
use common::{PLANT, Row, TestAnalyzer, quiet, sine, write_manifest, write_wav};
use spallcast_store::{OutageInput, PlanStatus, PlantFile, Store, StoreError};

const FS: f64 = 8192.0;
const N: usize = 4096;

fn store_with_plant(dir: &Path) -> Store {
    let mut store = Store::open(&dir.join("plant.db")).unwrap();
    store
        .apply_plant(&PlantFile::parse(PLANT, Path::new("plant.toml")).unwrap())
        .unwrap();
    store
}

/// A route folder with three good WAV readings of day 2026-05-14.
fn good_route(dir: &Path, amp: f64, day: &str) {
    std::fs::create_dir_all(dir).unwrap();
    write_wav(&dir.join("a.wav"), sine(amp, 100.0, FS, N), FS);
    write_wav(&dir.join("b.wav"), sine(amp * 0.5, 150.0, FS, N), FS);
    write_wav(&dir.join("c.wav"), sine(amp * 0.25, 60.0, FS, N), FS);
    let t = |time: &str| format!("{day}T{time}+01:00");
    let (t1, t2, t3) = (t("09:00:00"), t("09:05:00"), t("10:15:00"));
    write_manifest(
        dir,
        &[
            Row::new("a.wav", "IN-P1-MNDE-H", &t1),
            Row::new("b.wav", "IN-P1-PDE-A", &t2),
            Row::new("c.wav", "FH-F1-FDE-V", &t3),
        ],
    );
}

#[test]
fn readings_round_trip_with_metadata_and_results() {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let route = tmp.path().join("r1");
    good_route(&route, 1.0, "2026-05-14");
    let mut calls = Vec::new();
    let sum = store
        .import_route(&route, &TestAnalyzer::new("t1"), &mut |d, t| {
            calls.push((d, t));
        })
        .unwrap();
    assert_eq!(
        (sum.new_readings, sum.duplicates, sum.rejected.len()),
        (3, 0, 0),
        "{sum:?}"
    );
    assert_eq!(calls.last(), Some(&(3, 3)));
    let day = store
        .readings_of_day(NaiveDate::from_ymd_opt(2026, 5, 14).unwrap())
        .unwrap();
    assert_eq!(day.len(), 3);
    let a = &day[0];
    assert_eq!(a.point, "IN-P1-MNDE-H");
    assert_eq!(
        a.taken_at.to_rfc3339(),
        "2026-05-14T09:00:00+01:00",
        "offset kept"
    );
    assert!((a.shaft_hz - 1480.0 / 60.0).abs() < 1e-12);
    assert_eq!(a.sample_count, N);
    assert_eq!(a.analysis_version.as_deref(), Some("t1"));
    assert_eq!(a.content_sha256.len(), 64);
    let w = store.waveforms(&[a.id]).unwrap();
    assert_eq!(
        w[0].samples_g,
        sine(1.0, 100.0, FS, N),
        "bit-exact f32 round trip"
    );
    let analysis = store.analysis(a.id).unwrap().unwrap();
    // RMS of a unit sine is 1/√2 (common practice, no source).
    assert!((analysis.scalars["accel_rms_g"] - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-3);
    assert_eq!(analysis.document["diagnosis"], "outer race");
    // The analyzer saw the position's factors and the machine's ISO class.
    assert!((analysis.document["bpfo"].as_f64().unwrap() - 3.6208).abs() < 1e-3);
    let fan = store.analysis(day[2].id).unwrap().unwrap();
    assert_eq!(fan.document["iso_flexible"], true);
    assert_eq!(fan.document["iso_group"], 1);
    assert_eq!(store.route_days().unwrap()[0].readings, 3);
    // The reading belongs to the current life of its position (installed 2024-02-12).
    let tree = store.plant_tree().unwrap();
    assert_eq!(
        a.life_id,
        tree.areas[0].machines[0].bearings[0].current_life_id
    );
}

#[test]
fn reimporting_the_same_folder_adds_nothing() {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let route = tmp.path().join("r1");
    good_route(&route, 1.0, "2026-05-14");
    let an = TestAnalyzer::new("t1");
    store.import_route(&route, &an, &mut quiet()).unwrap();
    let again = store.import_route(&route, &an, &mut quiet()).unwrap();
    assert_eq!((again.new_readings, again.duplicates), (0, 3));
    assert_eq!(store.reading_count().unwrap(), 3);
    // Same file listed twice at the same point and time in one manifest: one reading.
    let r2 = tmp.path().join("r2");
    std::fs::create_dir_all(&r2).unwrap();
    write_wav(&r2.join("x.wav"), sine(0.3, 80.0, FS, N), FS);
    std::fs::copy(r2.join("x.wav"), r2.join("y.wav")).unwrap();
    let t = "2026-06-01T08:00:00+01:00";
    write_manifest(
        &r2,
        &[
            Row::new("x.wav", "IN-P1-PDE-A", t),
            Row::new("y.wav", "IN-P1-PDE-A", t),
        ],
    );
    let s = store.import_route(&r2, &an, &mut quiet()).unwrap();
    assert_eq!((s.new_readings, s.duplicates), (1, 1), "{s:?}");
}

/// Imports a folder holding one good reading plus `bad`, and returns the single rejection's reason.
fn reject_reason(setup: impl FnOnce(&Path) -> Vec<(String, String, String)>) -> String {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let route = tmp.path().join("route");
    std::fs::create_dir_all(&route).unwrap();
    write_wav(&route.join("good.wav"), sine(0.2, 100.0, FS, N), FS);
    let mut rows = vec![(
        "good.wav".to_owned(),
        "IN-P1-MNDE-H".to_owned(),
        String::new(),
    )];
    rows.extend(setup(&route));
    let mut text =
        String::from("file,point,taken_at,rpm,units,sensitivity,channel,sample_rate_hz\n");
    for (file, point, rest) in &rows {
        let rest = if rest.is_empty() {
            "1480,g,,,"
        } else {
            rest.as_str()
        };
        writeln!(text, "{file},{point},2026-05-14T09:00:00+01:00,{rest}").unwrap();
    }
    std::fs::write(route.join("route.csv"), text).unwrap();
    let sum = store
        .import_route(&route, &TestAnalyzer::new("t"), &mut quiet())
        .unwrap();
    assert_eq!(sum.new_readings, 1, "the good file still imports: {sum:?}");
    assert_eq!(sum.rejected.len(), 1, "{sum:?}");
    assert_eq!(store.reading_count().unwrap(), 1);
    let logged = store.rejected_files(10).unwrap();
    assert_eq!(logged.len(), 1);
    assert_eq!(
        logged[0].reason.as_deref(),
        Some(sum.rejected[0].reason.as_str())
    );
    sum.rejected[0].reason.clone()
}

fn row(file: &str, point: &str) -> (String, String, String) {
    (file.to_owned(), point.to_owned(), String::new())
}

#[test]
fn reject_missing_file() {
    let reason = reject_reason(|_| vec![row("gone.wav", "IN-P1-MNDE-H")]);
    assert!(reason.contains("cannot read"), "{reason}");
}

#[test]
fn reject_empty_file() {
    let reason = reject_reason(|d| {
        std::fs::write(d.join("empty.wav"), b"").unwrap();
        vec![row("empty.wav", "IN-P1-MNDE-H")]
    });
    assert!(reason.contains("empty"), "{reason}");
}

#[test]
fn reject_truncated_wav() {
    let reason = reject_reason(|d| {
        write_wav(&d.join("full.wav"), sine(0.2, 100.0, FS, N), FS);
        let bytes = std::fs::read(d.join("full.wav")).unwrap();
        std::fs::write(d.join("cut.wav"), &bytes[..30]).unwrap();
        vec![row("cut.wav", "IN-P1-MNDE-H")]
    });
    assert!(
        reason.contains("cut.wav") && reason.to_lowercase().contains("wav"),
        "{reason}"
    );
}

#[test]
fn reject_unreadable_content() {
    let reason = reject_reason(|d| {
        std::fs::write(d.join("junk.wav"), vec![0x5a_u8; 4000]).unwrap();
        vec![row("junk.wav", "IN-P1-MNDE-H")]
    });
    assert!(reason.contains("junk.wav"), "{reason}");
}

#[test]
fn reject_non_finite_samples() {
    let reason = reject_reason(|d| {
        let mut s = sine(0.2, 100.0, FS, N);
        s[17] = f32::NAN;
        write_wav(&d.join("nan.wav"), s, FS);
        vec![row("nan.wav", "IN-P1-MNDE-H")]
    });
    assert!(reason.contains("finite"), "{reason}");
}

#[test]
fn reject_impossible_sample_rate() {
    let reason = reject_reason(|d| {
        let mut text = String::from("# sample_rate_hz=10\n");
        for v in sine(0.2, 1.0, 10.0, 600) {
            writeln!(text, "{v}").unwrap();
        }
        std::fs::write(d.join("slow.csv"), text).unwrap();
        vec![row("slow.csv", "IN-P1-MNDE-H")]
    });
    assert!(reason.contains("sample rate"), "{reason}");
}

#[test]
fn reject_unknown_point() {
    let reason = reject_reason(|d| {
        write_wav(&d.join("p.wav"), sine(0.2, 90.0, FS, N), FS);
        vec![row("p.wav", "NO-SUCH-POINT")]
    });
    assert!(
        reason.contains("unknown point") && reason.contains("NO-SUCH-POINT"),
        "{reason}"
    );
}

#[test]
fn reject_path_leaving_the_folder() {
    let reason = reject_reason(|d| {
        write_wav(
            &d.parent().unwrap().join("outside.wav"),
            sine(0.2, 90.0, FS, N),
            FS,
        );
        vec![row("../outside.wav", "IN-P1-MNDE-H")]
    });
    assert!(reason.contains(".."), "{reason}");
}

#[test]
fn reject_bad_manifest_row() {
    let reason = reject_reason(|d| {
        write_wav(&d.join("q.wav"), sine(0.2, 90.0, FS, N), FS);
        vec![(
            "q.wav".to_owned(),
            "IN-P1-MNDE-H".to_owned(),
            "-5,g,,,".to_owned(),
        )]
    });
    assert!(
        reason.contains("line 3") && reason.contains("rpm"),
        "{reason}"
    );
}

#[test]
fn reject_missing_channel() {
    let reason = reject_reason(|d| {
        write_wav(&d.join("mono.wav"), sine(0.2, 90.0, FS, N), FS);
        vec![(
            "mono.wav".to_owned(),
            "IN-P1-PDE-A".to_owned(),
            "1480,g,,2,".to_owned(),
        )]
    });
    assert!(reason.contains("channel 2"), "{reason}");
}

#[test]
fn reject_millivolts_without_sensitivity() {
    // IN-P1-PDE-A has no sensitivity in the plant file and the row gives none.
    let reason = reject_reason(|d| {
        write_wav(&d.join("mv.wav"), sine(20.0, 90.0, FS, N), FS);
        vec![(
            "mv.wav".to_owned(),
            "IN-P1-PDE-A".to_owned(),
            "1480,mV,,,".to_owned(),
        )]
    });
    assert!(reason.contains("sensitivity"), "{reason}");
}

#[test]
fn units_are_converted_to_g() {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let route = tmp.path().join("u");
    std::fs::create_dir_all(&route).unwrap();
    // 9.80665 m/s² is 1 g (standard gravity, CGPM 1901); 100 mV at 100 mV/g is 1 g, at 50 mV/g 2 g.
    write_wav(&route.join("ms2.wav"), sine(9.806_65, 100.0, FS, N), FS);
    write_wav(&route.join("mv.wav"), sine(100.0, 100.0, FS, N), FS);
    write_wav(&route.join("mv2.wav"), sine(100.0, 100.0, FS, N), FS);
    let mut r1 = Row::new("ms2.wav", "IN-P1-MNDE-H", "2026-05-14T09:00:00+01:00");
    r1.units = "m/s2";
    let mut r2 = Row::new("mv.wav", "IN-P1-MNDE-H", "2026-05-14T09:01:00+01:00");
    r2.units = "mV";
    r2.extra = "100,,";
    let mut r3 = Row::new("mv2.wav", "IN-P1-MNDE-H", "2026-05-14T09:02:00+01:00");
    r3.units = "mV";
    r3.extra = "50,,";
    write_manifest(&route, &[r1, r2, r3]);
    let sum = store
        .import_route(&route, &TestAnalyzer::new("t"), &mut quiet())
        .unwrap();
    assert_eq!(sum.new_readings, 3, "{sum:?}");
    assert!(sum.clipped.is_empty(), "{sum:?}");
    let day = store
        .readings_of_day(NaiveDate::from_ymd_opt(2026, 5, 14).unwrap())
        .unwrap();
    let ids: Vec<i64> = day.iter().map(|r| r.id).collect();
    let w = store.waveforms(&ids).unwrap();
    let unit = sine(1.0, 100.0, FS, N);
    for (k, gain) in [(0, 1.0_f32), (1, 1.0), (2, 2.0)] {
        let worst = w[k]
            .samples_g
            .iter()
            .zip(&unit)
            .map(|(a, b)| (a - gain * b).abs())
            .fold(0.0_f32, f32::max);
        assert!(worst < 1e-5, "reading {k}: {worst}");
    }
    assert_eq!(w[1].meta.units, "mV");
}

#[test]
fn clipped_recordings_import_flagged() {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let route = tmp.path().join("c");
    std::fs::create_dir_all(&route).unwrap();
    let clipped: Vec<f32> = sine(2.0, 100.0, FS, N)
        .into_iter()
        .map(|x| x.clamp(-1.0, 1.0))
        .collect();
    write_wav(&route.join("clip.wav"), clipped, FS);
    write_manifest(
        &route,
        &[Row::new(
            "clip.wav",
            "IN-P1-MNDE-H",
            "2026-05-14T09:00:00+01:00",
        )],
    );
    let sum = store
        .import_route(&route, &TestAnalyzer::new("t"), &mut quiet())
        .unwrap();
    assert_eq!(sum.new_readings, 1);
    assert_eq!(sum.clipped, vec!["clip.wav".to_owned()]);
    let r = &store
        .readings_of_day(NaiveDate::from_ymd_opt(2026, 5, 14).unwrap())
        .unwrap()[0];
    assert_eq!(r.suspect.as_deref(), Some("clipped"));
    assert!(r.clipped_fraction > 0.3, "{}", r.clipped_fraction);
}

#[test]
fn no_manifest_is_an_error_naming_the_folder() {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let empty = tmp.path().join("empty-route");
    std::fs::create_dir_all(&empty).unwrap();
    let err = store
        .import_route(&empty, &TestAnalyzer::new("t"), &mut quiet())
        .unwrap_err();
    assert!(matches!(err, StoreError::Route { .. }));
    assert!(
        err.to_string().contains("empty-route") && err.to_string().contains("route.csv"),
        "{err}"
    );
}

#[test]
fn changed_findings_are_reported_and_trends_follow_the_life() {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let an = TestAnalyzer::new("t1");
    let may = tmp.path().join("may");
    good_route(&may, 0.2, "2026-05-14");
    let s1 = store.import_route(&may, &an, &mut quiet()).unwrap();
    assert!(
        s1.finding_changes.is_empty(),
        "no previous reading to compare with"
    );
    let june = tmp.path().join("june");
    good_route(&june, 2.0, "2026-06-11");
    let s2 = store.import_route(&june, &an, &mut quiet()).unwrap();
    // RMS 0.2/√2 → 2/√2 crosses the test threshold 0.5 g at MNDE (a) and PDE (b: 1/√2), not at FDE
    // (c: 0.5/√2).
    let changed: Vec<(&str, &str)> = s2
        .finding_changes
        .iter()
        .map(|c| (c.machine.as_str(), c.position.as_str()))
        .collect();
    assert_eq!(changed, vec![("IN-P1", "MNDE"), ("IN-P1", "PDE")]);
    assert_eq!(s2.finding_changes[0].previous, "none");
    assert_eq!(s2.finding_changes[0].current, "outer race");

    let tree = store.plant_tree().unwrap();
    let life = tree.areas[0].machines[0].bearings[0]
        .current_life_id
        .unwrap();
    let trend = store.trend(life, "accel_rms_g").unwrap();
    assert_eq!(trend.len(), 2);
    assert!(trend[0].taken_at < trend[1].taken_at);
    assert!((trend[1].value / trend[0].value - 10.0).abs() < 1e-3);
    let states = store.latest_states().unwrap();
    assert_eq!(states.len(), 3);
    assert_eq!(states[0].machine, "IN-P1");
    assert_eq!(
        states[0].last_reading_at.unwrap().to_rfc3339(),
        "2026-06-11T09:00:00+01:00"
    );
    let last = store.scalars(states[0].last_reading_id.unwrap()).unwrap();
    assert!((last["accel_rms_g"] - trend[1].value).abs() < 1e-12);
    assert_eq!(states[0].life.as_ref().unwrap().id, life);
    assert!(states[0].latest_stage.is_none());
    store
        .put_stage_call(
            trend[1].reading_id,
            2,
            "stage-test",
            &serde_json::json!({"why": "test"}),
        )
        .unwrap();
    let states = store.latest_states().unwrap();
    assert_eq!(states[0].latest_stage.as_ref().unwrap().stage, 2);
    assert_eq!(store.route_days().unwrap().len(), 2);
}

#[test]
fn stale_results_are_recomputed_with_a_new_analyzer_version() {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let route = tmp.path().join("r");
    good_route(&route, 1.0, "2026-05-14");
    store
        .import_route(&route, &TestAnalyzer::new("v1"), &mut quiet())
        .unwrap();
    assert_eq!(
        store
            .reanalyze_stale(&TestAnalyzer::new("v1"), &mut quiet())
            .unwrap(),
        0
    );
    let mut v2 = TestAnalyzer::new("v2");
    v2.threshold_g = 100.0;
    let mut last = (0, 0);
    assert_eq!(
        store
            .reanalyze_stale(&v2, &mut |d, t| last = (d, t))
            .unwrap(),
        3
    );
    assert_eq!(last, (3, 3));
    let day = store
        .readings_of_day(NaiveDate::from_ymd_opt(2026, 5, 14).unwrap())
        .unwrap();
    let a = store.analysis(day[0].id).unwrap().unwrap();
    assert_eq!(a.version, "v2");
    assert_eq!(a.document["diagnosis"], "none");
    assert_eq!(store.reanalyze_stale(&v2, &mut quiet()).unwrap(), 0);
}

#[test]
fn outage_crud_planning_and_replacement_start_a_new_life() {
    let tmp = tempfile::tempdir().unwrap();
    let mut store = store_with_plant(tmp.path());
    let route = tmp.path().join("r");
    good_route(&route, 1.0, "2026-05-14");
    store
        .import_route(&route, &TestAnalyzer::new("t"), &mut quiet())
        .unwrap();
    let d = |s: &str| NaiveDate::parse_from_str(s, "%Y-%m-%d").unwrap();
    let input = OutageInput {
        name: "Autumn fan stop".to_owned(),
        start: d("2026-05-10"),
        end: d("2026-05-12"),
        areas: vec![],
        machines: vec!["FH-F1".to_owned()],
    };
    let id = store.add_outage(&input).unwrap();
    assert!(
        store
            .add_outage(&input)
            .unwrap_err()
            .to_string()
            .contains("already exists")
    );
    let mut changed = input.clone();
    changed.end = d("2026-05-13");
    store.update_outage(id, &changed).unwrap();
    assert_eq!(
        store
            .outages()
            .unwrap()
            .iter()
            .find(|o| o.id == id)
            .unwrap()
            .end,
        d("2026-05-13")
    );
    let bad = OutageInput {
        end: d("2026-05-01"),
        ..changed.clone()
    };
    assert!(store.update_outage(id, &bad).is_err(), "end before start");

    let tree = store.plant_tree().unwrap();
    let fde = &tree.areas[1].machines[0].bearings[0];
    let life = fde.current_life_id.unwrap();
    let entry = store.plan_life(life, id, "replace with spare").unwrap();
    let entries = store.plan_entries(Some(id)).unwrap();
    assert_eq!(entries.len(), 1);
    assert_eq!(
        (entries[0].status, entries[0].machine.as_str()),
        (PlanStatus::Planned, "FH-F1")
    );
    // The fan's reading of 2026-05-14 was taken after the replacement dated 2026-05-12: it moves to the new life.
    let new_life = store
        .mark_done(entry, d("2026-05-12"), "cage wear")
        .unwrap();
    let lives = store.lives_with_readings(fde.position_id).unwrap();
    assert_eq!(lives.len(), 2);
    assert_eq!(lives[0].life.removed, Some(d("2026-05-12")));
    assert_eq!(lives[0].life.found_condition.as_deref(), Some("cage wear"));
    assert!(lives[0].readings.is_empty());
    assert_eq!(lives[1].life.id, new_life);
    assert_eq!(lives[1].readings.len(), 1);
    assert_eq!(
        store.plan_entries(None).unwrap()[0].status,
        PlanStatus::Done
    );
    assert!(
        store.plan_life(life, id, "").is_err(),
        "a closed life cannot be planned"
    );
    assert!(
        store.mark_done(entry, d("2026-06-01"), "").is_err(),
        "already done"
    );
    // The export writes the replacement as history.
    let exported = store.export_plant().unwrap();
    let fan = &exported.areas[1].machines[0].bearings[0];
    assert_eq!(fan.installed, d("2026-05-12"));
    assert_eq!(fan.history.len(), 1);
    let entry2 = store.plan_life(new_life, id, "").unwrap();
    store.unplan(entry2).unwrap();
    assert!(store.unplan(entry2).is_err());
    store.delete_outage(id).unwrap();
    assert!(store.outages().unwrap().iter().all(|o| o.id != id));
    assert!(store.plan_entries(Some(id)).unwrap().is_empty());
}

#[test]
fn reject_symlink_leading_out_of_the_folder() {
    let reason = reject_reason(|d| {
        let outside = d.parent().unwrap().join("elsewhere.wav");
        write_wav(&outside, sine(0.2, 90.0, FS, N), FS);
        std::os::unix::fs::symlink(&outside, d.join("link.wav")).unwrap();
        vec![row("link.wav", "IN-P1-MNDE-H")]
    });
    assert!(reason.contains("outside the route folder"), "{reason}");
}

#[test]
fn reject_a_folder_named_like_a_recording() {
    let reason = reject_reason(|d| {
        std::fs::create_dir(d.join("dir.wav")).unwrap();
        vec![row("dir.wav", "IN-P1-MNDE-H")]
    });
    assert!(reason.contains("not a regular file"), "{reason}");
}
