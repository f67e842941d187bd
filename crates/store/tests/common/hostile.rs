//! The hostile-input tests' fixture (`hardening_hostile_route.rs`, `hardening_hostile_plant.rs`): a
//! store holding [`PLANT`], an empty route folder and a good recording outside it, and the checks
//! those tests share. The analyzer and the file-byte writers come from `spallcast-testkit`.
#![allow(
    clippy::unwrap_used,
    reason = "test fixtures: a failure here is a broken test"
)]

use std::path::{Path, PathBuf};

use spallcast_formats::write_wav_f32;
use spallcast_store::{ImportSummary, PlantFile, Store};
pub use spallcast_testkit::analyzers::RmsAnalyzer;
pub use spallcast_testkit::plants::HOSTILE_WORKS as PLANT;
pub use spallcast_testkit::wav::{float32, pcm16, sine_recording, uff_header, wav_bytes};

/// When the readings of the hostile routes were taken.
pub const TAKEN: &str = "2026-05-14T09:31:00+01:00";

/// A store holding [`PLANT`], its empty route folder, and a good recording outside that folder.
pub struct Fixture {
    /// Keeps the folder alive.
    pub _tmp: tempfile::TempDir,
    /// The (empty) route folder.
    pub route: PathBuf,
    /// A good WAV beside the route folder, not in it.
    pub outside: PathBuf,
    /// The store, plant applied.
    pub store: Store,
}

/// A fresh [`Fixture`].
pub fn fixture() -> Fixture {
    let tmp = tempfile::tempdir().unwrap();
    let route = tmp.path().join("route");
    std::fs::create_dir(&route).unwrap();
    let outside = tmp.path().join("outside.wav");
    write_wav_f32(&outside, &sine_recording(4096, 25_600.0, 0.5)).unwrap();
    let mut store = Store::open(&tmp.path().join("plant.db")).unwrap();
    let plant = PlantFile::parse(PLANT, Path::new("plant.toml")).unwrap();
    store.apply_plant(&plant).unwrap();
    Fixture {
        _tmp: tmp,
        route,
        outside,
        store,
    }
}

/// Writes `route.csv` with the given rows (see [`row`]).
pub fn write_manifest(route: &Path, rows: &[String]) {
    let mut text = String::from("file,point,taken_at,rpm,units,sensitivity,sample_rate_hz\n");
    for r in rows {
        text.push_str(r);
        text.push('\n');
    }
    std::fs::write(route.join("route.csv"), text).unwrap();
}

/// A manifest row for `file` at `point`, taken at [`TAKEN`], 1480 r/min.
pub fn row(file: &str, point: &str) -> String {
    format!("{file},{point},{TAKEN},1480,,,")
}

/// Imports the fixture's route folder with [`RmsAnalyzer`].
pub fn import(f: &mut Fixture) -> ImportSummary {
    f.store
        .import_route(&f.route, &RmsAnalyzer, &mut |_, _| {})
        .unwrap()
}

/// The database passes `PRAGMA integrity_check`.
pub fn assert_sound(store: &Store) {
    assert_eq!(store.integrity_check().unwrap(), vec!["ok".to_owned()]);
}

/// The reason given for `file`, failing when it was not rejected.
pub fn reason<'a>(summary: &'a ImportSummary, file: &str) -> &'a str {
    summary
        .rejected
        .iter()
        .find(|r| r.file == file || r.reason.contains(file))
        .map_or_else(
            || panic!("{file} was not rejected: {:#?}", summary.rejected),
            |r| r.reason.as_str(),
        )
}
