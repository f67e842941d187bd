//! Helpers shared by the command-line hardening tests: running `spallcast import` (this crate's own
//! binary), and the testkit fixtures those tests use, re-exported under the names they use: a route
//! folder of synthetic WAV recordings written with hound, the plant file it needs, and a reader of a
//! database's contents that checks every reading is complete (analysis row and scalars).
#![allow(
    dead_code,
    unused_imports,
    clippy::unwrap_used,
    reason = "test helpers: each test binary uses a different part; a failure is a broken test"
)]

use std::path::{Path, PathBuf};
use std::process::Command;

pub use spallcast_testkit::contents::{Contents, Key, Value, contents, contents_of, readings_of};
pub use spallcast_testkit::plants::{HARDENING_POINTS as POINTS, HARDENING_WORKS as PLANT};
pub use spallcast_testkit::route::write_mixed_route as write_route;

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

/// Runs this crate's `spallcast` binary with `args`.
/// `spallcast ARGS...`, run to completion.
pub fn spallcast(args: &[&std::ffi::OsStr]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_spallcast"))
        .args(args)
        .output()
        .unwrap()
}

/// An `OsStr` of anything that has one (for the argument lists of [`spallcast`]).
pub fn os<S: AsRef<std::ffi::OsStr> + ?Sized>(s: &S) -> &std::ffi::OsStr {
    s.as_ref()
}

/// A small imported plant database in `dir`, with its route folder and plant file.
pub fn small_database(dir: &Path, name: &str) -> PathBuf {
    let route = write_route(dir, &format!("{name}-route"), 4, 4096, 9, None);
    let db = dir.join(name);
    import_ok(&route, &db, &dir.join("plant.toml"));
    db
}
