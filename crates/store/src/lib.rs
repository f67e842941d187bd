//! Spallcast's plant store: one `SQLite` database file (`rusqlite`, bundled `SQLite`) holding the plant
//! hierarchy, the readings of every route and the analysis results; the plant file (TOML) that
//! defines the hierarchy; and the route import.
//!
//! # Opening
//!
//! [`Store::open`] creates or opens a database. The connection uses WAL journaling, `synchronous =
//! NORMAL`, foreign keys on and a busy timeout of [`BUSY_TIMEOUT`], so a second process waits rather
//! than fails. A `rusqlite::Connection` is not `Sync`: open one `Store` per thread (opening is cheap
//! when the schema is current).
//!
//! # Schema (version [`SCHEMA_VERSION`], kept in `PRAGMA user_version`)
//!
//! Migrations run in one transaction each; before upgrading an existing file it is copied beside
//! itself as `<file>.v<old version>.bak`. A file with a newer version is refused.
//!
//! | table | holds |
//! |---|---|
//! | `site` | one row: name, default UTC offset |
//! | `area` | areas of the site |
//! | `bearing_type` | designation, geometry (n, d, D, φ) and/or fault factors in orders (BSF 1x convention) |
//! | `machine` | machine id (`tag`), kind, nominal r/min, ISO 20816-3 group and support |
//! | `bearing_position` | position on a machine, bearing type, lubrication (grease/oil), nominal r/min |
//! | `bearing_life` | one installed bearing: installed, removed, found condition; each life has its own baseline |
//! | `point` | measurement point id (`tag`), position, direction H/V/A, sensor, sensitivity mV/g |
//! | `reading` | point, position, life, `taken_at_utc` (RFC 3339 UTC) + `utc_offset_s`, `route_day` (local date), shaft Hz, sample rate, original units, waveform BLOB (f32 little-endian, in g), source file, SHA-256 of the file, `suspect` (e.g. `clipped`) |
//! | `analysis` | per reading: analyzer version, JSON document |
//! | `reading_scalar` | per reading: (name, value) indicators, indexed for trend queries |
//! | `stage_call` | per reading: stage 0..4, version, JSON evidence |
//! | `outage`, `outage_area`, `outage_machine` | planned outages and what they take down |
//! | `plan_entry` | bearing life ↔ outage, status planned/done/cancelled, note |
//! | `import_run`, `import_log` | each import, and each file's outcome (imported/duplicate/rejected) and reason |
//!
//! A reading, its `analysis` row and its scalars are written in one transaction: a reading is either
//! fully there or absent. Re-importing is idempotent: `(content_sha256, point_id, taken_at_utc)` is
//! unique.
//!
//! Fault factors are in orders of shaft speed. BSF is stored in the 1x ball-spin convention (rotation of
//! the element about its own axis); the rolling-element defect impact rate is 2×BSF.
#![forbid(unsafe_code)]
#![warn(missing_docs)]

mod analyzer;
mod annotations;
mod error;
mod import;
mod plan_undo;
mod planning;
mod plant;
mod plant_db;
mod queries;
mod records;
mod schema;
mod stage_calls;

use std::path::PathBuf;
use std::time::Duration;

pub use analyzer::{AnalysisInput, AnalysisOutput, AnalyzeError, FaultFactors, ReadingAnalyzer};
pub use annotations::{NOTE_MAX_CHARS, NewNote, Note, NoteKind};
pub use error::{Result, StoreError};
pub use import::{
    CLIPPED_FRACTION_THRESHOLD, FindingChange, ImportSummary, NewReading, RejectedFile,
    create_and_import,
};
pub use plan_undo::PlanSnapshot;
pub use planning::{Outage, OutageInput, PlanEntry, PlanStatus, StageCall};
pub use plant::{
    AreaDef, BearingDef, BearingTypeDef, Direction, IsoSupport, Lubrication, MachineDef,
    MachineKind, OutageDef, PastLifeDef, PlantFile, PointDef, SiteDef,
};
pub use plant_db::ApplySummary;
pub use queries::{
    AnalysisRecord, AreaNode, BearingNode, BearingState, ImportLogEntry, LifeInfo, LifeReadings,
    MachineNode, PlantTree, PointNode, ReadingMeta, RouteDay, TrendPoint, Waveform,
};
pub use schema::{SCHEMA_VERSION, copy_database, is_demo_database, is_sqlite_file};
pub use stage_calls::{NewStageCall, PointCall};

/// How long a connection waits for another process's lock before failing with a "busy" error.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(5);

/// An open plant database. Not `Sync`: open one per thread.
#[derive(Debug)]
pub struct Store {
    conn: rusqlite::Connection,
    path: PathBuf,
    /// Opened read-only (see [`Store::open_existing`]): nothing can be written.
    read_only: bool,
    /// Stored rows a query had to leave out (a timestamp that does not parse, say), in words; see
    /// [`Store::take_warnings`]. One bad row never makes every command fail.
    skipped: std::cell::RefCell<std::collections::BTreeSet<String>>,
}

impl Store {
    /// The rows left out by queries since the last call, each named, for the caller to show as
    /// warnings.
    pub fn take_warnings(&self) -> Vec<String> {
        std::mem::take(&mut *self.skipped.borrow_mut())
            .into_iter()
            .collect()
    }

    pub(crate) fn skip_row(&self, what: String) {
        self.skipped.borrow_mut().insert(what);
    }
}

/// Current UTC time as stored text.
pub(crate) fn now_text() -> String {
    utc_text(chrono::Utc::now())
}

/// UTC timestamps are stored as RFC 3339 with milliseconds and `Z`, so text order is time order.
pub(crate) fn utc_text(t: chrono::DateTime<chrono::Utc>) -> String {
    t.to_rfc3339_opts(chrono::SecondsFormat::Millis, true)
}

pub(crate) fn parse_utc(text: &str) -> Result<chrono::DateTime<chrono::Utc>> {
    chrono::DateTime::parse_from_rfc3339(text)
        .map(|t| t.with_timezone(&chrono::Utc))
        .map_err(|e| StoreError::Invalid(format!("bad timestamp {text:?} in the database: {e}")))
}

/// Rebuilds the original timezone-aware time from stored UTC text and offset seconds.
pub(crate) fn local_time(
    utc: &str,
    offset_s: i32,
) -> Result<chrono::DateTime<chrono::FixedOffset>> {
    let offset = chrono::FixedOffset::east_opt(offset_s).ok_or_else(|| {
        StoreError::Invalid(format!("bad UTC offset {offset_s} s in the database"))
    })?;
    Ok(parse_utc(utc)?.with_timezone(&offset))
}

/// Writes `bytes` to `path` atomically: into a temporary file in the same folder, synced to disk, then
/// renamed over `path`. On any failure the temporary file is removed and `path` is untouched.
pub fn write_file_atomic(path: &std::path::Path, bytes: &[u8]) -> std::io::Result<()> {
    use std::io::Write as _;
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => std::path::Path::new("."),
    };
    let mut tmp = tempfile::Builder::new()
        .prefix(".spallcast-")
        .suffix(".tmp")
        .tempfile_in(dir)?;
    tmp.write_all(bytes)?;
    tmp.as_file().sync_all()?;
    tmp.persist(path).map_err(|e| e.error)?;
    Ok(())
}
