//! The stage runner over a real store: a small invented plant, simulated recordings imported through
//! the ordinary route import and analysed by the real analyzer, then assessed. One bearing position
//! has a replaced life (an outer-race fault run through the stages, simulator truth) and a new healthy
//! life. Expectations follow the four-stage model (common practice, no source).
#![allow(
    clippy::unwrap_used,
    reason = "test code: a broken fixture should fail the test loudly"
)]

use std::fmt::Write as _;
use std::path::Path;

use spallcast_analysis::stage::StageOptions;
use spallcast_pipeline::SpallcastAnalyzer;
use spallcast_pipeline::assess::{STAGE_VERSION, assess_position, assess_store};
use spallcast_simulate::{BearingFactors, Condition, FaultKind, MachineParams, Stage, simulate};
use spallcast_store::{PlantFile, Store};

/// The test plant (an invented site).
const PLANT: &str = spallcast_testkit::plants::MARSH_LANE;

const FS_HZ: f64 = 102_400.0;

fn write_route(dir: &Path, day: &str, condition: &Condition, seed: u64) {
    std::fs::create_dir_all(dir).unwrap();
    let f = BearingFactors::from_geometry(9, 12.7, 65.0, 0.0);
    let params = MachineParams::typical(1480.0 / 60.0, f);
    let samples = simulate(&params, condition, FS_HZ, 51_200, seed).unwrap();
    let rec = spallcast_formats::Recording {
        channels: vec![samples],
        sample_rate_hz: FS_HZ,
    };
    spallcast_formats::write_wav_f32(&dir.join("r.wav"), &rec).unwrap();
    let mut csv = String::from("file,point,taken_at,rpm\n");
    let _ = writeln!(csv, "r.wav,FL-P2-PDE-H,{day}T09:00:00+00:00,1480");
    std::fs::write(dir.join("route.csv"), csv).unwrap();
}

#[test]
fn the_runner_stores_a_call_per_reading_and_replays_the_replaced_life() {
    let tmp = tempfile::tempdir().unwrap();
    let db = tmp.path().join("plant.sqlite");
    let mut store = Store::open(&db).unwrap();
    store
        .apply_plant(&PlantFile::parse(PLANT, Path::new("plant.toml")).unwrap())
        .unwrap();
    // Old life: healthy three months, then an outer-race fault through stages 2, 3 and 4.
    let or = |s: u8, sev: f64| Condition::new(FaultKind::OuterRace, Stage::new(s).unwrap(), sev);
    let old = [
        ("2025-01-05", Condition::healthy()),
        ("2025-02-05", Condition::healthy()),
        ("2025-03-05", Condition::healthy()),
        ("2025-04-05", Condition::healthy()),
        ("2025-05-05", or(2, 0.3)),
        ("2025-06-05", or(2, 0.8)),
        ("2025-07-05", or(3, 0.5)),
        ("2025-08-05", or(4, 0.5)),
    ];
    let new = [
        ("2025-10-05", Condition::healthy()),
        ("2025-11-05", Condition::healthy()),
        ("2025-12-05", Condition::healthy()),
    ];
    for (i, (day, c)) in old.iter().chain(new.iter()).enumerate() {
        let dir = tmp.path().join(format!("route-{day}"));
        write_route(&dir, day, c, 100 + i as u64);
        let summary = store
            .import_route(&dir, &SpallcastAnalyzer, &mut |_, _| {})
            .unwrap();
        assert_eq!(summary.new_readings, 1, "{day}");
    }

    let report = assess_store(&mut store, &StageOptions::default()).unwrap();
    assert_eq!(report.positions, 1);
    assert_eq!(report.calls_written, 11);
    assert_eq!(report.readings_skipped, 0);
    // The current life is healthy; the position's summary says so.
    let summary = &report.summaries[0];
    assert_eq!(summary.stage, Some(0), "{summary:#?}");
    assert_eq!(summary.machine, "FL-P2");

    let state = store.latest_states().unwrap().remove(0);
    let lives = assess_position(&store, &state, &StageOptions::default()).unwrap();
    assert_eq!(lives.len(), 2);
    let old_life = &lives[0];
    let stages: Vec<u8> = old_life.points[0].calls.iter().map(|c| c.stage).collect();
    println!("old life stages {stages:?}");
    assert!(stages[..4].iter().all(|&s| s == 0), "{stages:?}");
    assert!(stages[4] >= 2 && stages[7] >= 3, "{stages:?}");
    // Stored per reading, with the call as evidence.
    let last_old = old_life.points[0].reading_ids[7];
    let stored = store.stage_call(last_old).unwrap().unwrap();
    assert_eq!(stored.version, STAGE_VERSION);
    assert_eq!(stored.stage, stages[7]);
    assert!(
        stored.evidence["call"]["evidence"]
            .as_array()
            .is_some_and(|e| !e.is_empty())
    );
    // The replaced life is replayed against its removal date: stage 2 flagged before it.
    let (_, bt) = &old_life.backtests[0];
    let lead_days = bt.lead_s[2].unwrap() / 86_400.0;
    println!(
        "stage-2 lead before replacement: {lead_days:.0} days; median |replace_by error| {:?} days",
        bt.median_abs_error_s.map(|e| (e / 86_400.0).round())
    );
    assert!(lead_days > 60.0, "{lead_days}");
    // Re-running replaces the calls rather than adding to them.
    let again = assess_store(&mut store, &StageOptions::default()).unwrap();
    assert_eq!(again.calls_written, 11);
    // For trying the command line by hand on this database.
    if let Some(keep) = std::env::var_os("SPALLCAST_STAGE_TEST_DB") {
        drop(store);
        std::fs::copy(&db, keep).unwrap();
    }
}

/// The planner reads the forecast the runner stores with each call: a bearing whose current life is in
/// stage 2 needs a slot, with the same replace-by and risk-from dates as the runner's summary.
#[test]
fn the_planner_reads_the_runners_stored_forecast() {
    let tmp = tempfile::tempdir().unwrap();
    let db = tmp.path().join("plant.sqlite");
    let mut store = Store::open(&db).unwrap();
    // The same plant, but the faulty bearing is still in: no replacement history.
    let plant = PLANT.replace(
        "installed = \"2025-09-01\"\n    history = [ { installed = \"2024-12-01\", removed = \"2025-09-01\", found = \"outer race spall\" } ]",
        "installed = \"2024-12-01\"",
    );
    assert_ne!(plant, PLANT, "the fixture edit applied");
    store
        .apply_plant(&PlantFile::parse(&plant, Path::new("plant.toml")).unwrap())
        .unwrap();
    let or = |s: u8, sev: f64| Condition::new(FaultKind::OuterRace, Stage::new(s).unwrap(), sev);
    let days = [
        ("2025-01-05", Condition::healthy()),
        ("2025-02-05", Condition::healthy()),
        ("2025-03-05", Condition::healthy()),
        ("2025-04-05", Condition::healthy()),
        ("2025-05-05", or(2, 0.3)),
        ("2025-06-05", or(2, 0.6)),
        ("2025-07-05", or(2, 0.9)),
    ];
    for (i, (day, c)) in days.iter().enumerate() {
        let dir = tmp.path().join(format!("route-{day}"));
        write_route(&dir, day, c, 300 + i as u64);
        store
            .import_route(&dir, &SpallcastAnalyzer, &mut |_, _| {})
            .unwrap();
    }
    let report = assess_store(&mut store, &StageOptions::default()).unwrap();
    let summary = &report.summaries[0];
    println!("{summary:#?}");
    assert!(summary.stage.is_some_and(|s| s >= 2), "{summary:#?}");
    let replace_by = summary
        .replace_by
        .expect("a stage-2 life has a replace-by date")
        .date_naive();
    let risk_from = summary
        .risk_from
        .expect("and a risk-from date")
        .date_naive();

    let today = "2025-07-06".parse().unwrap();
    let board = spallcast_plan::source::load_board(&store, today).unwrap();
    let need = board
        .needs
        .iter()
        .find(|n| n.life.machine_id == "FL-P2" && n.life.position == "PDE")
        .expect("the stage-2 bearing needs a slot");
    assert_eq!(need.forecast.replace_by, replace_by);
    assert_eq!(need.forecast.risk_from, risk_from);
    assert_eq!(Some(need.forecast.stage), summary.stage);
    assert!(
        !need.forecast.evidence.is_empty(),
        "the call's evidence sentences come along"
    );
}
