//! Helpers shared by the hardening tests (included with `#[path]`): a route folder of synthetic WAV
//! recordings written with hound, the plant file it needs, and a reader of a database's contents that
//! checks every reading is complete (analysis row and scalars).
#![allow(
    dead_code,
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test helpers"
)]

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::Command;

use spallcast_store::Store;

pub const PLANT: &str = r#"[site]
name = "Hardening Test Works"
timezone_offset = "+01:00"

[[bearing_types]]
designation = "HC-7"
kind = "deep-groove ball"
rolling_elements = 7
element_diameter_mm = 10.0
pitch_diameter_mm = 42.0
contact_angle_deg = 0.0

[[areas]]
name = "Test hall"
  [[areas.machines]]
  id = "HC-M1"
  name = "Test pump"
  kind = "pump"
  nominal_rpm = 1480.0
  iso_group = 2
  iso_support = "rigid"
    [[areas.machines.bearings]]
    position = "DE"
    bearing_type = "HC-7"
    lubrication = "grease"
    installed = "2025-01-01"
    [[areas.machines.bearings]]
    position = "NDE"
    bearing_type = "HC-7"
    lubrication = "oil"
    installed = "2025-01-01"
    [[areas.machines.points]]
    id = "HC-M1-DE-H"
    bearing = "DE"
    direction = "H"
    [[areas.machines.points]]
    id = "HC-M1-DE-V"
    bearing = "DE"
    direction = "V"
    [[areas.machines.points]]
    id = "HC-M1-NDE-H"
    bearing = "NDE"
    direction = "H"
    [[areas.machines.points]]
    id = "HC-M1-NDE-A"
    bearing = "NDE"
    direction = "A"
"#;

pub const POINTS: [&str; 4] = ["HC-M1-DE-H", "HC-M1-DE-V", "HC-M1-NDE-H", "HC-M1-NDE-A"];

/// Writes `count` WAV files (hound; 16-bit PCM and 32-bit float alternately, `samples` each, the one
/// numbered `clipped` saturated) into `dir/name`, with route.csv taking readings on `day` (1..=28 of
/// May 2026), and `plant.toml` into `dir`. Returns the route folder.
pub fn write_route(
    dir: &Path,
    name: &str,
    count: usize,
    samples: u32,
    day: u32,
    clipped: Option<usize>,
) -> PathBuf {
    let route = dir.join(name);
    std::fs::create_dir_all(&route).unwrap();
    let rate = 25_600_u32;
    let mut manifest = String::from("file,point,taken_at,rpm\n");
    for i in 0..count {
        let file = format!("{name}-{i:02}.wav");
        let float = i % 2 == 1;
        let spec = hound::WavSpec {
            channels: 1,
            sample_rate: rate,
            bits_per_sample: if float { 32 } else { 16 },
            sample_format: if float {
                hound::SampleFormat::Float
            } else {
                hound::SampleFormat::Int
            },
        };
        let mut w = hound::WavWriter::create(route.join(&file), spec).unwrap();
        let amplitude = 0.2 + 0.02 * i as f64 + 0.001 * f64::from(day);
        for k in 0..samples {
            let t = f64::from(k) / f64::from(rate);
            let mut v = amplitude
                * (2.0 * std::f64::consts::PI * (120.0 + 7.0 * i as f64) * t).sin()
                + 0.05 * (2.0 * std::f64::consts::PI * 3100.0 * t).sin();
            if clipped == Some(i) {
                v = (3.0 * v).clamp(-0.5, 0.5); // a saturated sensor
            }
            if float {
                w.write_sample(v as f32).unwrap();
            } else {
                w.write_sample((v * 32_000.0).round() as i16).unwrap();
            }
        }
        w.finalize().unwrap();
        let point = POINTS[i % POINTS.len()];
        let (hour, minute) = (9 + i / 240, (i / POINTS.len()) % 60);
        writeln!(
            manifest,
            "{file},{point},2026-05-{day:02}T{hour:02}:{minute:02}:00+01:00,{}",
            1470 + i
        )
        .unwrap();
    }
    std::fs::write(route.join("route.csv"), manifest).unwrap();
    std::fs::write(dir.join("plant.toml"), PLANT).unwrap();
    route
}

/// `spallcast import ROUTE --db DB --plant PLANT --json`.
pub fn import_command(route: &Path, db: &Path, plant: &Path) -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_spallcast"));
    c.arg("import")
        .arg(route)
        .arg("--db")
        .arg(db)
        .arg("--plant")
        .arg(plant)
        .arg("--json");
    c
}

/// Runs an import to completion and returns its JSON summary, failing on a non-zero exit.
pub fn import_ok(route: &Path, db: &Path, plant: &Path) -> serde_json::Value {
    let out = import_command(route, db, plant).output().unwrap();
    assert!(
        out.status.success(),
        "import failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

/// (point, `taken_at` UTC, sha256) of a reading.
pub type Key = (String, String, String);
/// Suspect flag, analyzer version and scalars of a reading.
pub type Value = (Option<String>, String, BTreeMap<String, f64>);
/// The readings of a database.
pub type Contents = BTreeMap<Key, Value>;

/// Everything the database holds about its readings. Fails if `PRAGMA integrity_check` is not `ok`,
/// if a reading has no analysis row or no scalars, or if a reading is stored twice.
pub fn contents(db: &Path) -> Contents {
    let store = Store::open(db).unwrap();
    contents_of(&store, db)
}

/// As [`contents`], through a store that is already open.
pub fn contents_of(store: &Store, db: &Path) -> Contents {
    let out = readings_of(store, db);
    assert_eq!(
        out.len(),
        store.reading_count().unwrap(),
        "readings outside the route days"
    );
    out
}

/// As [`contents_of`] without the final count check, for a database another process is writing
/// to (the queries are separate statements, so a commit may land between them).
pub fn readings_of(store: &Store, db: &Path) -> Contents {
    assert_eq!(
        store.integrity_check().unwrap(),
        vec!["ok".to_owned()],
        "{}",
        db.display()
    );
    let mut out = Contents::new();
    for day in store.route_days().unwrap() {
        for r in store.readings_of_day(day.day).unwrap() {
            let analysis = store.analysis(r.id).unwrap().unwrap_or_else(|| {
                panic!("reading {} ({}) has no analysis row", r.id, r.source_file)
            });
            assert!(
                !analysis.scalars.is_empty(),
                "reading {} ({}) has no scalars",
                r.id,
                r.source_file
            );
            let key = (
                r.point.clone(),
                r.taken_at.with_timezone(&chrono::Utc).to_rfc3339(),
                r.content_sha256.clone(),
            );
            let old = out.insert(key, (r.suspect.clone(), analysis.version, analysis.scalars));
            assert!(old.is_none(), "reading {} stored twice", r.source_file);
        }
    }
    out
}
