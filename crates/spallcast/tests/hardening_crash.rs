//! SIGKILL at random moments during `spallcast import`: after every kill the database passes
//! `PRAGMA integrity_check` and each reading is either complete (its analysis row and scalars, equal
//! to those of an uninterrupted import) or absent; re-running then finishes with exactly the contents
//! of an uninterrupted import: the same set of (point, `taken_at`, sha256) and the same scalar values.
//!
//! Kill moments come from a seeded generator spread over the measured length of a whole import, so
//! they land during start-up, plant-file application, decoding, analysis and the writes. Set
//! `SPALLCAST_CRASH_SEED` to try other moments.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

mod common;

use std::process::Stdio;
use std::time::Instant;

use common::{contents, import_command, write_route};

/// Readings in the route folder.
const READINGS: usize = 24;
/// Trials: each kills an import into a fresh database once, checks it, then lets a re-run finish.
const DATABASES: usize = 24;
const KILLS_PER_DB: usize = 1;

/// xorshift64*, seeded: the kill moments.
struct Rng(u64);

impl Rng {
    fn unit(&mut self) -> f64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        (self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 / (1u64 << 53) as f64
    }
}

#[test]
fn killed_imports_leave_complete_or_absent_readings_and_rerun_matches_an_uninterrupted_import() {
    let seed: u64 = std::env::var("SPALLCAST_CRASH_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(0x5EED_8A11);
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "route", READINGS, 8192, 14, Some(5));
    let plant = tmp.path().join("plant.toml");

    // The uninterrupted import: the reference contents, and how long a whole run takes.
    let reference_db = tmp.path().join("reference.db");
    let start = Instant::now();
    let out = import_command(&route, &reference_db, &plant)
        .output()
        .unwrap();
    let whole_run = start.elapsed();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let summary: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(
        summary["new_readings"].as_u64(),
        Some(READINGS as u64),
        "{summary}"
    );
    assert_eq!(
        summary["clipped"],
        serde_json::json!(["route-05.wav"]),
        "{summary}"
    );
    let reference = contents(&reference_db);
    assert_eq!(reference.len(), READINGS);

    let mut rng = Rng(seed | 1);
    let mut at_kill = Vec::new();
    for d in 0..DATABASES {
        let db = tmp.path().join(format!("crash{d}.db"));
        for _ in 0..KILLS_PER_DB {
            // Most moments fall inside a whole run's length; a few just beyond it.
            let delay = whole_run.mul_f64(1.1 * rng.unit());
            let mut child = import_command(&route, &db, &plant)
                .stdout(Stdio::null())
                .stderr(Stdio::null())
                .spawn()
                .unwrap();
            std::thread::sleep(delay);
            child.kill().unwrap(); // SIGKILL: no destructors, no rollback, no checkpoint
            child.wait().unwrap();
            if !db.exists() {
                at_kill.push(0);
                continue; // killed before the database was created
            }
            let partial = contents(&db);
            for (key, value) in &partial {
                assert_eq!(
                    reference.get(key),
                    Some(value),
                    "reading {key:?} differs from the uninterrupted import"
                );
            }
            at_kill.push(partial.len());
        }
        let out = import_command(&route, &db, &plant).output().unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let summary: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let before = *at_kill.last().unwrap() as u64;
        assert_eq!(summary["duplicates"].as_u64(), Some(before), "{summary}");
        assert_eq!(
            summary["new_readings"].as_u64(),
            Some(READINGS as u64 - before),
            "{summary}"
        );
        assert_eq!(contents(&db), reference, "database {d} after re-running");
    }
    println!("whole import {whole_run:?}; readings present after each kill: {at_kill:?}");
    assert_eq!(at_kill.len(), DATABASES * KILLS_PER_DB);
    // The test proves something only if some kills landed part-way through the readings.
    let midway = at_kill.iter().filter(|&&n| n > 0 && n < READINGS).count();
    assert!(
        midway >= 3,
        "only {midway} kills landed mid-import: {at_kill:?}"
    );
}
