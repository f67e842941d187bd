//! `spallcast import` on the command line: JSON summary, --plant, exit codes and clear errors.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a failure is the test failing"
)]
use spallcast_testkit::plants::marrow_ridge;
use spallcast_testkit::route::write_sine_route;
use std::process::Command;

fn spallcast(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_spallcast"))
        .args(args)
        .output()
        .unwrap()
}

#[test]
fn json_summary_with_plant_rejects_and_reimport() {
    let tmp = tempfile::tempdir().unwrap();
    let route = tmp.path().join("route");
    write_sine_route(&route, 6, 2048, 3);
    // One extra row naming a point the plant does not have.
    let mut manifest = std::fs::read_to_string(route.join("route.csv")).unwrap();
    manifest.push_str("r0000.wav,NOT-A-POINT,2026-04-01T08:00:00+02:00,2970\n");
    std::fs::write(route.join("route.csv"), manifest).unwrap();
    let plant = tmp.path().join("plant.toml");
    std::fs::write(&plant, marrow_ridge(3)).unwrap();
    let db = tmp.path().join("plant.db");
    let (r, d, p) = (
        route.to_str().unwrap(),
        db.to_str().unwrap(),
        plant.to_str().unwrap(),
    );

    let out = spallcast(&["import", r, "--db", d, "--plant", p, "--json"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let s: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(s["new_readings"], 6);
    assert_eq!(s["duplicates"], 0);
    assert_eq!(s["rejected"].as_array().unwrap().len(), 1);
    assert!(
        s["rejected"][0]["reason"]
            .as_str()
            .unwrap()
            .contains("NOT-A-POINT")
    );
    assert_eq!(s["analysis_version"], spallcast_pipeline::ANALYZER_VERSION);

    let out = spallcast(&["import", r, "--db", d, "--json"]);
    assert!(
        out.status.success(),
        "rejects do not make the exit code fail"
    );
    let s: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        (s["new_readings"].as_u64(), s["duplicates"].as_u64()),
        (Some(0), Some(6))
    );

    let out = spallcast(&["import", r, "--db", d]);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("duplicates skipped:  6") && text.contains("NOT-A-POINT"),
        "{text}"
    );
}

#[test]
fn no_manifest_or_a_bad_database_fails_with_a_clear_message() {
    let tmp = tempfile::tempdir().unwrap();
    let empty = tmp.path().join("empty");
    std::fs::create_dir_all(&empty).unwrap();
    let db = tmp.path().join("plant.db");
    let out = spallcast(&[
        "import",
        empty.to_str().unwrap(),
        "--db",
        db.to_str().unwrap(),
    ]);
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("route.csv"));

    let notdb = tmp.path().join("notes.db");
    std::fs::write(&notdb, "not a database at all\n".repeat(100)).unwrap();
    let out = spallcast(&[
        "import",
        empty.to_str().unwrap(),
        "--db",
        notdb.to_str().unwrap(),
    ]);
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("notes.db") && err.contains("not a Spallcast database"),
        "{err}"
    );
}
