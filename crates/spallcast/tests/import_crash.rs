//! A killed import leaves a sound database: every reading has its results, and re-running completes.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a failure is the test failing"
)]
use std::process::Command;
use std::time::{Duration, Instant};

use spallcast_store::{PlantFile, Store};
use spallcast_testkit::plants::marrow_ridge;
use spallcast_testkit::route::write_sine_route;

#[test]
fn killing_an_import_midway_leaves_a_valid_database_and_rerun_completes() {
    const TOTAL: usize = 400;
    let tmp = tempfile::tempdir().unwrap();
    let route = tmp.path().join("route");
    write_sine_route(&route, TOTAL, 65_536, 4);
    let db = tmp.path().join("plant.db");
    {
        let mut store = Store::open(&db).unwrap();
        let plant = PlantFile::parse(&marrow_ridge(4), std::path::Path::new("plant.toml")).unwrap();
        store.apply_plant(&plant).unwrap();
    }
    let exe = env!("CARGO_BIN_EXE_spallcast");
    let mut child = Command::new(exe)
        .args([
            "import",
            route.to_str().unwrap(),
            "--db",
            db.to_str().unwrap(),
            "--json",
        ])
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let watcher = Store::open(&db).unwrap();
    let start = Instant::now();
    let mut seen = 0;
    while start.elapsed() < Duration::from_mins(2) {
        seen = watcher.reading_count().unwrap();
        if seen >= 5 {
            break;
        }
        std::thread::sleep(Duration::from_millis(10));
    }
    // SIGKILL: no destructor, no rollback, no WAL checkpoint.
    child.kill().unwrap();
    child.wait().unwrap();
    drop(watcher);
    assert!(seen >= 5, "the import never wrote a reading");

    let store = Store::open(&db).unwrap();
    let at_kill = store.reading_count().unwrap();
    assert!(
        at_kill < TOTAL,
        "the import finished before it was killed ({at_kill} readings); use a bigger folder"
    );
    assert_eq!(store.integrity_check().unwrap(), vec!["ok".to_owned()]);
    assert_eq!(
        store.readings_without_results().unwrap(),
        0,
        "a reading without its results"
    );
    drop(store);

    let out = Command::new(exe)
        .args([
            "import",
            route.to_str().unwrap(),
            "--db",
            db.to_str().unwrap(),
            "--json",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let summary: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(summary["duplicates"].as_u64().unwrap() as usize, at_kill);
    assert_eq!(
        summary["new_readings"].as_u64().unwrap() as usize,
        TOTAL - at_kill
    );
    let store = Store::open(&db).unwrap();
    assert_eq!(store.reading_count().unwrap(), TOTAL);
    assert_eq!(store.readings_without_results().unwrap(), 0);
    assert_eq!(store.integrity_check().unwrap(), vec!["ok".to_owned()]);
}
