//! SIGKILL while `spallcast import` writes its stage calls. The test polls the database from outside
//! until every reading is visible and the stage calls are part-written (some bearing positions have
//! theirs, others not yet; how many is drawn from a seeded generator), kills the import there, and checks that:
//!
//! - the database passes `PRAGMA integrity_check`;
//! - each bearing position's calls are all there or all absent (one transaction per position), and the
//!   ones there equal those of an uninterrupted import;
//! - the next command that reads stage calls (`spallcast bearings`) completes them, so the database
//!   then holds exactly the calls of the uninterrupted import.
//!
//! Trials are repeated until 20 kills have landed part-way through the stage calls (a kill that lands
//! before the first or after the last position's commit is retried, up to a limit).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

mod common;

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use common::import_command;
use spallcast_simulate::{BearingFactors, Condition, FaultKind, MachineParams, Stage, simulate};

/// Machines in the invented test plant; each has two bearings with one measurement point each.
const MACHINES: usize = 12;
/// Route days (one reading per point per day, a month apart).
const DAYS: usize = 5;
/// Samples per recording (25.6 kHz).
const SAMPLES: u32 = 16_384;
/// Kills that must land part-way through the stage calls.
const PART_WRITTEN_KILLS: usize = 20;
/// Attempts allowed to get them.
const MAX_ATTEMPTS: usize = 60;

fn positions() -> usize {
    2 * MACHINES
}

fn readings() -> usize {
    positions() * DAYS
}

/// Writes the plant file and a route folder (WAVs with hound, and `route.csv`) into `dir`.
fn write_plant_and_route(dir: &Path) -> (PathBuf, PathBuf) {
    let mut plant = String::from(
        r#"[site]
name = "Stage Kill Test Works"
timezone_offset = "+00:00"

[[bearing_types]]
designation = "SK-9"
kind = "deep-groove ball"
rolling_elements = 9
element_diameter_mm = 9.0
pitch_diameter_mm = 46.0
contact_angle_deg = 0.0

[[areas]]
name = "Kill hall"
"#,
    );
    for m in 0..MACHINES {
        write!(
            plant,
            r#"  [[areas.machines]]
  id = "SK-M{m}"
  name = "Test fan {m}"
  kind = "fan"
  nominal_rpm = 1480.0
  iso_group = 2
  iso_support = "rigid"
"#
        )
        .unwrap();
        for pos in ["DE", "NDE"] {
            write!(
                plant,
                r#"    [[areas.machines.bearings]]
    position = "{pos}"
    bearing_type = "SK-9"
    lubrication = "grease"
    installed = "2025-01-01"
"#
            )
            .unwrap();
        }
        for pos in ["DE", "NDE"] {
            write!(
                plant,
                r#"    [[areas.machines.points]]
    id = "SK-M{m}-{pos}-H"
    bearing = "{pos}"
    direction = "H"
"#
            )
            .unwrap();
        }
    }
    let plant_path = dir.join("plant.toml");
    std::fs::write(&plant_path, plant).unwrap();

    let route = dir.join("route");
    std::fs::create_dir_all(&route).unwrap();
    let rate = 25_600_u32;
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: rate,
        bits_per_sample: 32,
        sample_format: hound::SampleFormat::Float,
    };
    // The simulator's outer-race defect on every other bearing, a stage further each month from the
    // third; the others stay healthy.
    let shaft_hz = 1480.0 / 60.0;
    let factors = BearingFactors::from_geometry(9, 9.0, 46.0, 0.0);
    let params = MachineParams::typical(shaft_hz, factors);
    let mut manifest = String::from("file,point,taken_at,rpm\n");
    let mut i = 0_usize;
    for day in 0..DAYS {
        for m in 0..MACHINES {
            for pos in ["DE", "NDE"] {
                let file = format!("r{i:03}.wav");
                let faulty = (m + usize::from(pos == "NDE")) % 2 == 0;
                let condition = match (faulty, day) {
                    (true, d) if d >= 2 => Condition::new(
                        FaultKind::OuterRace,
                        Stage::new((d - 1).min(4) as u8).unwrap(),
                        0.6,
                    ),
                    _ => Condition::healthy(),
                };
                let samples = simulate(
                    &params,
                    &condition,
                    f64::from(rate),
                    SAMPLES as usize,
                    i as u64 + 7,
                )
                .unwrap();
                let mut w = hound::WavWriter::create(route.join(&file), spec).unwrap();
                for v in samples {
                    w.write_sample(v).unwrap();
                }
                w.finalize().unwrap();
                writeln!(
                    manifest,
                    "{file},SK-M{m}-{pos}-H,2026-{:02}-10T09:{:02}:00+00:00,1480",
                    day + 1,
                    i % 60
                )
                .unwrap();
                i += 1;
            }
        }
    }
    std::fs::write(route.join("route.csv"), manifest).unwrap();
    (route, plant_path)
}

/// (point, `taken_at`) → (stage, stage-logic version, evidence) of every stored stage call.
type Calls = BTreeMap<(String, String), (u8, String, String)>;

fn stage_calls(conn: &rusqlite::Connection) -> rusqlite::Result<Calls> {
    let mut stmt = conn.prepare(
        "SELECT p.tag, r.taken_at_utc, s.stage, s.version, s.evidence
         FROM stage_call s JOIN reading r ON r.id = s.reading_id JOIN point p ON p.id = r.point_id",
    )?;
    let rows = stmt.query_map([], |r| {
        Ok(((r.get(0)?, r.get(1)?), (r.get(2)?, r.get(3)?, r.get(4)?)))
    })?;
    rows.collect()
}

fn open(db: &Path) -> rusqlite::Connection {
    let conn = rusqlite::Connection::open(db).unwrap();
    conn.busy_timeout(Duration::from_secs(10)).unwrap();
    conn
}

/// (readings, stage calls) now visible, or `None` while the schema is not there yet.
fn counts(conn: &rusqlite::Connection) -> Option<(usize, usize)> {
    conn.query_row(
        "SELECT (SELECT count(*) FROM reading), (SELECT count(*) FROM stage_call)",
        [],
        |r| Ok((r.get::<_, i64>(0)? as usize, r.get::<_, i64>(1)? as usize)),
    )
    .ok()
}

/// Point of a reading key, to group calls by bearing position (one point per position here).
fn point_of(key: &(String, String)) -> &str {
    &key.0
}

#[test]
fn a_kill_while_stage_calls_are_written_is_completed_by_the_next_command() {
    let tmp = tempfile::tempdir().unwrap();
    let (route, plant) = write_plant_and_route(tmp.path());

    let reference_db = tmp.path().join("reference.db");
    let out = import_command(&route, &reference_db, &plant)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let reference = stage_calls(&open(&reference_db)).unwrap();
    assert_eq!(
        reference.len(),
        readings(),
        "every reading of the uninterrupted import has a stage call"
    );
    // The test means something only if the calls differ between positions and over time.
    let stages: std::collections::BTreeSet<u8> = reference.values().map(|v| v.0).collect();
    println!("stages in the reference: {stages:?}");
    assert!(stages.len() >= 2, "stages in the reference: {stages:?}");

    let mut part_written = Vec::new();
    let mut missed = 0_usize;
    // Seeded kill targets spread over the stage-call phase: kill once at least `target` calls are
    // visible (and not all of them).
    let mut seed: u64 = 0x57A6_E0C1;
    for attempt in 0..MAX_ATTEMPTS {
        seed ^= seed << 13;
        seed ^= seed >> 7;
        seed ^= seed << 17;
        let target = DAYS * (1 + (seed % (positions() as u64 - 1)) as usize);
        if part_written.len() == PART_WRITTEN_KILLS {
            break;
        }
        let db = tmp.path().join(format!("kill{attempt}.db"));
        let mut child = import_command(&route, &db, &plant)
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        let started = Instant::now();
        let mut conn = None;
        let mut landed = None;
        while started.elapsed() < Duration::from_mins(2) {
            if conn.is_none() && db.exists() {
                conn = rusqlite::Connection::open_with_flags(
                    &db,
                    rusqlite::OpenFlags::SQLITE_OPEN_READ_ONLY,
                )
                .ok();
            }
            if let Some((r, s)) = conn.as_ref().and_then(counts) {
                if r == readings() && s >= target && s < readings() {
                    child.kill().unwrap(); // SIGKILL: no destructors, no rollback
                    landed = Some(s);
                    break;
                }
                if s == readings() {
                    break; // too late: every call was written
                }
            }
            if child.try_wait().unwrap().is_some() {
                break;
            }
            std::thread::sleep(Duration::from_millis(1));
        }
        child.kill().ok();
        child.wait().unwrap();
        drop(conn);
        let Some(seen) = landed else {
            missed += 1;
            continue;
        };

        // The state the kill left.
        let conn = open(&db);
        let check: String = conn
            .query_row("PRAGMA integrity_check", [], |r| r.get(0))
            .unwrap();
        assert_eq!(check, "ok", "attempt {attempt}");
        let after_kill = stage_calls(&conn).unwrap();
        assert!(
            after_kill.len() >= seen && after_kill.len() < readings(),
            "attempt {attempt}: {} calls after the kill (saw {seen})",
            after_kill.len()
        );
        for (key, value) in &after_kill {
            assert_eq!(
                reference.get(key),
                Some(value),
                "attempt {attempt}: call of {key:?} differs from the uninterrupted import"
            );
        }
        // All or nothing per position.
        let mut per_point: BTreeMap<&str, usize> = BTreeMap::new();
        for key in after_kill.keys() {
            *per_point.entry(point_of(key)).or_default() += 1;
        }
        for (point, n) in &per_point {
            assert_eq!(
                *n, DAYS,
                "attempt {attempt}: position of {point} has {n} of {DAYS} calls"
            );
        }
        drop(conn);

        // The next command that reads stage calls completes them.
        let out = Command::new(env!("CARGO_BIN_EXE_spallcast"))
            .arg("bearings")
            .arg("--db")
            .arg(&db)
            .arg("--json")
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "attempt {attempt}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        assert_eq!(
            stage_calls(&open(&db)).unwrap(),
            reference,
            "attempt {attempt}: after `bearings`"
        );
        part_written.push(after_kill.len());
        std::fs::remove_file(&db).ok();
    }
    println!(
        "stage calls present at each part-written kill (of {}): {part_written:?}; attempts that landed \
         outside the stage-call phase: {missed}",
        readings()
    );
    assert_eq!(
        part_written.len(),
        PART_WRITTEN_KILLS,
        "only {} of {MAX_ATTEMPTS} kills landed while the stage calls were part-written",
        part_written.len()
    );
}
