//! Schema, migrations and opening a store.
//!
//! Migrations are numbered from 1 and keyed on `PRAGMA user_version`. Each runs in one transaction
//! together with the update of `user_version`, so a crash mid-migration leaves the previous version.

use std::path::{Path, PathBuf};

use rusqlite::{Connection, OpenFlags};

use crate::error::{Result, StoreError, is_busy, is_not_a_database, is_read_only};
use crate::{BUSY_TIMEOUT, Store};

/// The schema version this build writes. A database with a higher `user_version` is refused.
pub const SCHEMA_VERSION: i64 = MIGRATIONS.len() as i64;

/// Page size of new databases, bytes (see `open_to_version`). Measured with `store_bench -- import`
/// (1,000 readings of 65,536 samples, 2-core machine, two runs each): 4 KiB pages 241–261 readings/s,
/// 16 KiB 342–363/s, 32 KiB 336/s, 64 KiB 367–389/s. 16 KiB keeps most of the gain while a small commit
/// (a plan entry, a stage call) still rewrites only 16 KiB pages in the WAL.
const PAGE_SIZE: i64 = 16_384;

/// `PRAGMA application_id` of a database made by `spallcast demo` (ASCII "SPDM"), so the demo command
/// replaces only its own databases.
const DEMO_APPLICATION_ID: i64 = 0x5350_444D;

/// Migration `i` brings the schema from version `i` to `i + 1`.
const MIGRATIONS: &[&str] = &[
    // 1: plant hierarchy, readings and their analysis.
    r"
CREATE TABLE site (
    id INTEGER PRIMARY KEY CHECK (id = 1),
    name TEXT NOT NULL,
    timezone_offset TEXT NOT NULL
);
CREATE TABLE area (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    sort_order INTEGER NOT NULL DEFAULT 0
);
CREATE TABLE bearing_type (
    id INTEGER PRIMARY KEY,
    designation TEXT NOT NULL UNIQUE,
    kind TEXT NOT NULL,
    rolling_elements INTEGER,
    element_diameter_mm REAL,
    pitch_diameter_mm REAL,
    contact_angle_deg REAL,
    ftf REAL, bsf REAL, bpfo REAL, bpfi REAL
);
CREATE TABLE machine (
    id INTEGER PRIMARY KEY,
    area_id INTEGER NOT NULL REFERENCES area(id) ON DELETE CASCADE,
    tag TEXT NOT NULL UNIQUE,
    name TEXT NOT NULL,
    kind TEXT NOT NULL,
    nominal_rpm REAL NOT NULL,
    iso_group INTEGER NOT NULL CHECK (iso_group IN (1, 2)),
    iso_support TEXT NOT NULL CHECK (iso_support IN ('rigid', 'flexible')),
    sort_order INTEGER NOT NULL DEFAULT 0
);
CREATE INDEX machine_area ON machine(area_id);
CREATE TABLE bearing_position (
    id INTEGER PRIMARY KEY,
    machine_id INTEGER NOT NULL REFERENCES machine(id) ON DELETE CASCADE,
    position TEXT NOT NULL,
    description TEXT NOT NULL DEFAULT '',
    bearing_type_id INTEGER NOT NULL REFERENCES bearing_type(id),
    lubrication TEXT NOT NULL CHECK (lubrication IN ('grease', 'oil')),
    nominal_rpm REAL,
    sort_order INTEGER NOT NULL DEFAULT 0,
    UNIQUE (machine_id, position)
);
CREATE TABLE bearing_life (
    id INTEGER PRIMARY KEY,
    position_id INTEGER NOT NULL REFERENCES bearing_position(id) ON DELETE CASCADE,
    installed TEXT NOT NULL,
    removed TEXT,
    found_condition TEXT,
    UNIQUE (position_id, installed),
    CHECK (removed IS NULL OR removed >= installed)
);
CREATE TABLE point (
    id INTEGER PRIMARY KEY,
    tag TEXT NOT NULL UNIQUE,
    position_id INTEGER NOT NULL REFERENCES bearing_position(id) ON DELETE CASCADE,
    direction TEXT NOT NULL CHECK (direction IN ('H', 'V', 'A')),
    sensor TEXT NOT NULL,
    sensitivity_mv_per_g REAL,
    sort_order INTEGER NOT NULL DEFAULT 0
);
CREATE INDEX point_position ON point(position_id);
CREATE TABLE reading (
    id INTEGER PRIMARY KEY,
    point_id INTEGER NOT NULL REFERENCES point(id) ON DELETE CASCADE,
    position_id INTEGER NOT NULL REFERENCES bearing_position(id) ON DELETE CASCADE,
    life_id INTEGER REFERENCES bearing_life(id) ON DELETE SET NULL,
    taken_at_utc TEXT NOT NULL,
    utc_offset_s INTEGER NOT NULL,
    route_day TEXT NOT NULL,
    shaft_hz REAL NOT NULL,
    sample_rate_hz REAL NOT NULL,
    units TEXT NOT NULL,
    sample_count INTEGER NOT NULL,
    waveform BLOB,
    source_file TEXT NOT NULL,
    content_sha256 TEXT NOT NULL,
    suspect TEXT,
    clipped_fraction REAL NOT NULL DEFAULT 0,
    imported_at TEXT NOT NULL,
    UNIQUE (content_sha256, point_id, taken_at_utc)
);
CREATE INDEX reading_point_time ON reading(point_id, taken_at_utc);
CREATE INDEX reading_position_time ON reading(position_id, taken_at_utc);
CREATE INDEX reading_life_time ON reading(life_id, taken_at_utc);
CREATE INDEX reading_day ON reading(route_day);
CREATE TABLE analysis (
    reading_id INTEGER PRIMARY KEY REFERENCES reading(id) ON DELETE CASCADE,
    version TEXT NOT NULL,
    document TEXT NOT NULL,
    analyzed_at TEXT NOT NULL
);
CREATE INDEX analysis_version ON analysis(version);
CREATE TABLE reading_scalar (
    reading_id INTEGER NOT NULL REFERENCES reading(id) ON DELETE CASCADE,
    name TEXT NOT NULL,
    value REAL NOT NULL,
    PRIMARY KEY (reading_id, name)
) WITHOUT ROWID;
CREATE INDEX reading_scalar_name ON reading_scalar(name, reading_id);
",
    // 2: outages, replacement plan and the import log.
    r"
CREATE TABLE outage (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    start_date TEXT NOT NULL,
    end_date TEXT NOT NULL,
    CHECK (end_date >= start_date)
);
CREATE TABLE outage_area (
    outage_id INTEGER NOT NULL REFERENCES outage(id) ON DELETE CASCADE,
    area_id INTEGER NOT NULL REFERENCES area(id) ON DELETE CASCADE,
    PRIMARY KEY (outage_id, area_id)
) WITHOUT ROWID;
CREATE TABLE outage_machine (
    outage_id INTEGER NOT NULL REFERENCES outage(id) ON DELETE CASCADE,
    machine_id INTEGER NOT NULL REFERENCES machine(id) ON DELETE CASCADE,
    PRIMARY KEY (outage_id, machine_id)
) WITHOUT ROWID;
CREATE TABLE plan_entry (
    id INTEGER PRIMARY KEY,
    life_id INTEGER NOT NULL REFERENCES bearing_life(id) ON DELETE CASCADE,
    outage_id INTEGER NOT NULL REFERENCES outage(id) ON DELETE CASCADE,
    status TEXT NOT NULL CHECK (status IN ('planned', 'done', 'cancelled')),
    note TEXT NOT NULL DEFAULT '',
    UNIQUE (life_id, outage_id)
);
CREATE INDEX plan_entry_outage ON plan_entry(outage_id);
CREATE TABLE import_run (
    id INTEGER PRIMARY KEY,
    folder TEXT NOT NULL,
    started_at TEXT NOT NULL,
    finished_at TEXT,
    new_readings INTEGER NOT NULL DEFAULT 0,
    duplicates INTEGER NOT NULL DEFAULT 0,
    rejected INTEGER NOT NULL DEFAULT 0
);
CREATE TABLE import_log (
    id INTEGER PRIMARY KEY,
    run_id INTEGER NOT NULL REFERENCES import_run(id) ON DELETE CASCADE,
    file TEXT NOT NULL,
    point TEXT,
    outcome TEXT NOT NULL CHECK (outcome IN ('imported', 'duplicate', 'rejected')),
    reason TEXT,
    reading_id INTEGER REFERENCES reading(id) ON DELETE SET NULL
);
CREATE INDEX import_log_outcome ON import_log(outcome, run_id);
",
    // 3: stage calls, one per reading, with their evidence as JSON.
    r"
CREATE TABLE stage_call (
    reading_id INTEGER PRIMARY KEY REFERENCES reading(id) ON DELETE CASCADE,
    stage INTEGER NOT NULL CHECK (stage BETWEEN 0 AND 4),
    version TEXT NOT NULL,
    evidence TEXT NOT NULL,
    called_at TEXT NOT NULL
);
",
    // 4: the latest stage call of a position without scanning its readings: the call carries its
    // reading's position and time (a reading's point and time never change).
    r"
ALTER TABLE stage_call ADD COLUMN position_id INTEGER;
ALTER TABLE stage_call ADD COLUMN taken_at_utc TEXT;
UPDATE stage_call SET
    position_id = (SELECT r.position_id FROM reading r WHERE r.id = stage_call.reading_id),
    taken_at_utc = (SELECT r.taken_at_utc FROM reading r WHERE r.id = stage_call.reading_id);
CREATE INDEX stage_call_position_time ON stage_call(position_id, taken_at_utc);
",
    // 5: one vocabulary for stored results.
    // - The diagnosis label gets its own column, so the store never reads inside the analyzer's
    //   document. Existing analyses do not have it: they are marked stale (their version gets a
    //   suffix), so `Store::reanalyze_stale` recomputes them and fills the column.
    // - One set of trend-scalar names: the analyzer used to store each stage indicator twice (a flat
    //   name and a `stage.` name). Flat names with a `stage.` twin are renamed where the twin is missing
    //   and dropped otherwise; the other flat names of the analyzer become `stage.` names too.
    // - Stage calls written by the stage runner (`{"call":..,"forecast":..,"point":..}`) are rewritten
    //   into the versioned stage record by adding `"schema_version":1` (the only difference); calls of
    //   any other shape are left as they are and read as "no record" (their stage number still shows).
    r#"
ALTER TABLE analysis ADD COLUMN diagnosis TEXT;
UPDATE analysis SET version = version || '+before-diagnosis-column';
UPDATE OR IGNORE reading_scalar SET name = 'stage.' || name
    WHERE name IN ('accel_rms_g', 'accel_peak_g', 'crest_factor', 'kurtosis', 'velocity_rms_mm_s',
                   'noise_floor_g');
UPDATE OR IGNORE reading_scalar SET name = 'stage.one_x_amplitude' WHERE name = 'one_x_velocity_rms_mm_s';
UPDATE OR IGNORE reading_scalar SET name = 'stage.band.' || substr(name, 6)
    WHERE name LIKE 'band\_%\_rms\_g' ESCAPE '\';
DELETE FROM reading_scalar
    WHERE name IN ('accel_rms_g', 'accel_peak_g', 'crest_factor', 'kurtosis', 'velocity_rms_mm_s',
                   'noise_floor_g', 'one_x_velocity_rms_mm_s', 'iso_zone_index', 'envelope_score_db',
                   'envelope_harmonics', 'linear_defect_harmonics', 'linear_sidebands')
       OR name LIKE 'band\_%\_rms\_g' ESCAPE '\'
       OR name LIKE 'envelope\_%\_score\_db' ESCAPE '\';
UPDATE stage_call SET evidence = '{"schema_version":1,' || substr(evidence, 2)
    WHERE evidence LIKE '{"call":%' AND evidence NOT LIKE '%"schema_version":%';
"#,
    // 6: the analyst's own records: notes on a bearing or one of its readings (observations,
    // lubrication and maintenance events), and readings marked as a life's baseline. A change of the
    // marks is dated per position, so the position's stage calls go stale and are recomputed.
    r"
CREATE TABLE note (
    id INTEGER PRIMARY KEY,
    position_id INTEGER NOT NULL REFERENCES bearing_position(id) ON DELETE CASCADE,
    reading_id INTEGER REFERENCES reading(id) ON DELETE CASCADE,
    on_day TEXT NOT NULL,
    kind TEXT NOT NULL CHECK (kind IN ('observation', 'lubrication', 'maintenance')),
    text TEXT NOT NULL CHECK (length(text) BETWEEN 1 AND 2000),
    created_at TEXT NOT NULL
);
CREATE INDEX note_position ON note(position_id, on_day);
CREATE TABLE baseline_mark (
    reading_id INTEGER PRIMARY KEY REFERENCES reading(id) ON DELETE CASCADE,
    marked_at TEXT NOT NULL
);
CREATE TABLE baseline_change (
    position_id INTEGER PRIMARY KEY REFERENCES bearing_position(id) ON DELETE CASCADE,
    changed_at TEXT NOT NULL
);
",
    // 7: waveforms in a table of their own, the blob as the row's last column. SQLite writes a
    // trailing zero-filled blob without building it in memory, and the import then fills it in
    // blocks through incremental blob I/O, so a long recording is not copied whole while stored.
    r"
CREATE TABLE waveform (
    reading_id INTEGER PRIMARY KEY REFERENCES reading(id) ON DELETE CASCADE,
    samples BLOB NOT NULL
);
INSERT INTO waveform (reading_id, samples)
    SELECT id, waveform FROM reading WHERE waveform IS NOT NULL;
ALTER TABLE reading DROP COLUMN waveform;
",
];

impl Store {
    /// Opens (creating if missing) the database at `path`, upgrading an older schema after backing the
    /// file up beside itself (`<file>.v<N>.bak`). Cheap when the schema is current: open one `Store`
    /// per thread.
    ///
    /// Errors: [`StoreError::NotADatabase`] for a file that is not `SQLite`, [`StoreError::NewerSchema`]
    /// for a database written by a newer build, [`StoreError::Busy`] when another process holds a lock
    /// for longer than [`BUSY_TIMEOUT`].
    pub fn open(path: &Path) -> Result<Store> {
        if path.is_file() && !file_is_writable(path) {
            return Err(StoreError::ReadOnly {
                path: path.to_path_buf(),
            });
        }
        let started = std::time::Instant::now();
        loop {
            match Self::open_to_version(path, SCHEMA_VERSION) {
                // Two processes creating or migrating one file at once: SQLite gives the loser an
                // immediate "busy" on the journal-mode switch or the migration lock without waiting, so
                // try again for as long as the busy timeout allows.
                Err(StoreError::Busy { .. }) if started.elapsed() < BUSY_TIMEOUT => {
                    std::thread::sleep(std::time::Duration::from_millis(20));
                }
                Err(StoreError::Sqlite(e)) if is_busy(&e) && started.elapsed() < BUSY_TIMEOUT => {
                    std::thread::sleep(std::time::Duration::from_millis(20));
                }
                Err(StoreError::Database { source, .. }) if is_read_only(&source) => {
                    return Err(StoreError::ReadOnly {
                        path: path.to_path_buf(),
                    });
                }
                other => return other,
            }
        }
    }

    /// Opens an existing Spallcast database without creating or changing it on opening: a missing
    /// file, an empty file or an `SQLite` file without Spallcast's tables is refused
    /// ([`StoreError::NotSpallcast`]). A database that cannot be written (file permissions, a
    /// read-only folder or disk) is opened read-only: every query works, every write fails, and
    /// [`Store::is_read_only`] says so. An older schema is upgraded as by [`Store::open`] when the
    /// file is writable.
    pub fn open_existing(path: &Path) -> Result<Store> {
        if !path.is_file() {
            return Err(StoreError::Io {
                path: path.to_path_buf(),
                source: std::io::Error::new(std::io::ErrorKind::NotFound, "no such database file"),
            });
        }
        let probe = Self::open_read_only(path)?;
        let version = probe.schema_version().map_err(|e| probe.named(e))?;
        let has_tables: bool = probe
            .conn
            .query_row(
                "SELECT EXISTS (SELECT 1 FROM sqlite_schema WHERE type = 'table')",
                [],
                |r| r.get(0),
            )
            .map_err(|e| classify(e, path))?;
        if version == 0 || !has_tables {
            return Err(StoreError::NotSpallcast {
                path: path.to_path_buf(),
            });
        }
        if version > SCHEMA_VERSION {
            return Err(StoreError::NewerSchema {
                path: path.to_path_buf(),
                found: version,
                supported: SCHEMA_VERSION,
            });
        }
        if !file_is_writable(path) {
            if version < SCHEMA_VERSION {
                return Err(StoreError::Invalid(format!(
                    "{} is read-only and holds schema version {version}; this build needs {SCHEMA_VERSION}: \
                     copy it somewhere writable to upgrade it",
                    path.display()
                )));
            }
            return Ok(probe);
        }
        drop(probe);
        match Self::open(path) {
            Err(StoreError::ReadOnly { .. }) if version == SCHEMA_VERSION => {
                Self::open_read_only(path)
            }
            other => other,
        }
    }

    /// Opens the database read-only. On a read-only disk a WAL database cannot get its shared-memory
    /// index, so `SQLite` is told the file is immutable there (nobody can write it anyway).
    fn open_read_only(path: &Path) -> Result<Store> {
        let flags = OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX;
        let try_open = |conn: Connection| -> std::result::Result<Connection, rusqlite::Error> {
            conn.busy_timeout(BUSY_TIMEOUT)?;
            conn.pragma_query_value(None, "user_version", |r| r.get::<_, i64>(0))?;
            conn.query_row("SELECT count(*) FROM sqlite_schema", [], |r| {
                r.get::<_, i64>(0)
            })?;
            Ok(conn)
        };
        let conn = match Connection::open_with_flags(path, flags).and_then(try_open) {
            Ok(c) => c,
            Err(e) if is_read_only(&e) => {
                let uri = format!("file:{}?immutable=1", uri_path(path));
                Connection::open_with_flags(uri, flags | OpenFlags::SQLITE_OPEN_URI)
                    .and_then(try_open)
                    .map_err(|e| classify(e, path))?
            }
            Err(e) => return Err(classify(e, path)),
        };
        Ok(Store {
            conn,
            path: path.to_path_buf(),
            read_only: true,
            skipped: std::cell::RefCell::default(),
        })
    }

    /// True when the database was opened read-only (see [`Store::open_existing`]).
    pub fn is_read_only(&self) -> bool {
        self.read_only
    }

    /// Marks the database as one made by `spallcast demo` (see [`is_demo_database`]).
    pub fn mark_demo(&self) -> Result<()> {
        self.conn
            .pragma_update(None, "application_id", DEMO_APPLICATION_ID)
            .map_err(|e| self.named(e.into()))
    }

    pub(crate) fn open_to_version(path: &Path, target: i64) -> Result<Store> {
        let conn = Connection::open_with_flags(
            path,
            OpenFlags::SQLITE_OPEN_READ_WRITE
                | OpenFlags::SQLITE_OPEN_CREATE
                | OpenFlags::SQLITE_OPEN_NO_MUTEX,
        )
        .map_err(|e| classify(e, path))?;
        conn.busy_timeout(BUSY_TIMEOUT)
            .map_err(|e| classify(e, path))?;
        // The first real read: a file that is not SQLite fails here.
        let version: i64 = conn
            .pragma_query_value(None, "user_version", |r| r.get(0))
            .map_err(|e| classify(e, path))?;
        if version > SCHEMA_VERSION {
            return Err(StoreError::NewerSchema {
                path: path.to_path_buf(),
                found: version,
                supported: SCHEMA_VERSION,
            });
        }
        if version == 0 {
            // A new database gets larger pages than SQLite's 4 KiB default: a 65,536-sample waveform is
            // 256 KiB, which at 4 KiB pages costs ~64 page writes into the WAL and 64 more at each
            // checkpoint. Has no effect on an existing file (its page size is fixed).
            conn.pragma_update(None, "page_size", PAGE_SIZE)
                .map_err(|e| classify(e, path))?;
        }
        conn.pragma_update(None, "journal_mode", "WAL")
            .map_err(|e| classify(e, path))?;
        conn.pragma_update(None, "synchronous", "NORMAL")
            .map_err(|e| classify(e, path))?;
        conn.pragma_update(None, "foreign_keys", "ON")
            .map_err(|e| classify(e, path))?;
        let mut store = Store {
            conn,
            path: path.to_path_buf(),
            read_only: false,
            skipped: std::cell::RefCell::default(),
        };
        if version < target {
            store.migrate(target)?;
        }
        Ok(store)
    }

    fn migrate(&mut self, to: i64) -> Result<()> {
        let path = self.path.clone();
        // Back up an existing database first, outside any transaction (`VACUUM INTO` reads one
        // consistent snapshot; SQLite refuses it inside a transaction).
        let version: i64 = self
            .conn
            .pragma_query_value(None, "user_version", |r| r.get(0))?;
        let has_tables: bool = self
            .conn
            .query_row(
                "SELECT EXISTS (SELECT 1 FROM sqlite_schema WHERE type = 'table')",
                [],
                |r| r.get(0),
            )
            .map_err(|e| classify(e, &path))?;
        // Another opener may have migrated it since this one looked (concurrent first use).
        if version >= to {
            return Ok(());
        }
        if version > 0 || has_tables {
            backup_beside(&self.conn, &path, version)?;
        }
        // Take the write lock so two processes do not migrate at once; re-read the version under it.
        let tx = self
            .conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)
            .map_err(|e| classify(e, &path))?;
        let current: i64 = tx.pragma_query_value(None, "user_version", |r| r.get(0))?;
        if current >= to {
            return Ok(());
        }
        for (i, sql) in MIGRATIONS
            .iter()
            .enumerate()
            .take(to as usize)
            .skip(current as usize)
        {
            tx.execute_batch(sql)?;
            tx.pragma_update(None, "user_version", (i + 1) as i64)?;
        }
        tx.commit().map_err(|e| classify(e, &path))?;
        Ok(())
    }

    /// The schema version of the open database.
    pub fn schema_version(&self) -> Result<i64> {
        Ok(self
            .conn
            .pragma_query_value(None, "user_version", |r| r.get(0))?)
    }

    /// `SQLite`'s `PRAGMA data_version` of this connection: it changes when another connection (another
    /// process, another thread's store) commits a change to the database, not for this one's own writes.
    /// A window polls it to pick up readings imported elsewhere.
    pub fn data_version(&self) -> Result<i64> {
        Ok(self
            .conn
            .pragma_query_value(None, "data_version", |r| r.get(0))?)
    }

    /// Makes a bare `SQLite` error name this database: a lock timeout becomes [`StoreError::Busy`], any
    /// other becomes [`StoreError::Database`]. Other errors pass through.
    pub fn named(&self, err: StoreError) -> StoreError {
        match err {
            StoreError::Sqlite(e) if is_busy(&e) => StoreError::Busy {
                path: self.path.clone(),
            },
            StoreError::Sqlite(source) => StoreError::Database {
                path: self.path.clone(),
                source,
            },
            other => other,
        }
    }

    /// The database file.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Runs `SQLite`'s `PRAGMA integrity_check`; returns its lines (`["ok"]` for a sound file).
    pub fn integrity_check(&self) -> Result<Vec<String>> {
        let mut stmt = self.conn.prepare("PRAGMA integrity_check")?;
        let rows = stmt.query_map([], |r| r.get::<_, String>(0))?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }
}

/// True when the file exists and starts with the `SQLite` header (`SQLite format 3` and a NUL, the
/// file format's first 16 bytes): commands that write files refuse to write over one.
pub fn is_sqlite_file(path: &Path) -> bool {
    use std::io::Read as _;
    let mut head = [0u8; 16];
    std::fs::File::open(path)
        .and_then(|mut f| f.read_exact(&mut head))
        .is_ok_and(|()| &head == b"SQLite format 3\0")
}

/// True when `path` is a database that `spallcast demo` made (and may therefore replace).
pub fn is_demo_database(path: &Path) -> bool {
    let Ok(store) = Store::open_read_only(path) else {
        return false;
    };
    store
        .conn
        .pragma_query_value(None, "application_id", |r| r.get::<_, i64>(0))
        .is_ok_and(|id| id == DEMO_APPLICATION_ID)
}

/// Copies a database (committed contents, WAL included) to `to` with `SQLite`'s `VACUUM INTO`.
pub fn copy_database(from: &Path, to: &Path) -> Result<()> {
    let store = Store::open_read_only(from)?;
    store
        .conn
        .execute("VACUUM INTO ?1", [to.to_string_lossy().as_ref()])
        .map_err(|e| StoreError::Backup {
            path: from.to_path_buf(),
            backup: to.to_path_buf(),
            message: e.to_string(),
        })?;
    Ok(())
}

/// True when the file can be opened for writing (without creating or truncating it). As root this is
/// true for a 0444 file, which root can indeed write; false on a read-only disk.
fn file_is_writable(path: &Path) -> bool {
    std::fs::OpenOptions::new().write(true).open(path).is_ok()
}

/// A path for an `SQLite` `file:` URI: `%`, `?` and `#` percent-encoded.
fn uri_path(path: &Path) -> String {
    let mut out = String::new();
    for c in path.to_string_lossy().chars() {
        match c {
            '%' => out.push_str("%25"),
            '?' => out.push_str("%3f"),
            '#' => out.push_str("%23"),
            c => out.push(c),
        }
    }
    out
}

/// Copies the database to `<file>.v<version>.bak` (or `.v<version>.<n>.bak` when that exists) with
/// `SQLite`'s `VACUUM INTO`, which writes a consistent copy even in WAL mode.
fn backup_beside(conn: &Connection, path: &Path, version: i64) -> Result<PathBuf> {
    // Reserve the name by creating the file (an empty file is a valid `VACUUM INTO` target), so two
    // openers backing up at once never write into the same file.
    let mut backup = sibling(path, &format!("v{version}.bak"));
    let mut n = 1;
    loop {
        match std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&backup)
        {
            Ok(_) => break,
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
                backup = sibling(path, &format!("v{version}.{n}.bak"));
                n += 1;
            }
            Err(e) => {
                return Err(StoreError::Backup {
                    path: path.to_path_buf(),
                    backup: backup.clone(),
                    message: e.to_string(),
                });
            }
        }
    }
    let target = backup.to_string_lossy().into_owned();
    conn.execute("VACUUM INTO ?1", [&target])
        .map_err(|e| StoreError::Backup {
            path: path.to_path_buf(),
            backup: backup.clone(),
            message: e.to_string(),
        })?;
    Ok(backup)
}

fn sibling(path: &Path, suffix: &str) -> PathBuf {
    let mut name = path
        .file_name()
        .map(std::ffi::OsStr::to_os_string)
        .unwrap_or_default();
    name.push(".");
    name.push(suffix);
    path.with_file_name(name)
}

/// Turns an `SQLite` error met while opening into the store's clear errors.
fn classify(err: rusqlite::Error, path: &Path) -> StoreError {
    if is_not_a_database(&err) {
        StoreError::NotADatabase {
            path: path.to_path_buf(),
        }
    } else if is_busy(&err) {
        StoreError::Busy {
            path: path.to_path_buf(),
        }
    } else {
        StoreError::Database {
            path: path.to_path_buf(),
            source: err,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fresh_database_is_current_with_wal_and_foreign_keys() {
        let dir = tempfile::tempdir().unwrap();
        let store = Store::open(&dir.path().join("p.db")).unwrap();
        assert_eq!(store.schema_version().unwrap(), SCHEMA_VERSION);
        let mode: String = store
            .conn
            .pragma_query_value(None, "journal_mode", |r| r.get(0))
            .unwrap();
        assert_eq!(mode.to_lowercase(), "wal");
        let fk: i64 = store
            .conn
            .pragma_query_value(None, "foreign_keys", |r| r.get(0))
            .unwrap();
        assert_eq!(fk, 1);
        // Large pages for waveform blobs (set before WAL, or SQLite keeps 4 KiB).
        let page: i64 = store
            .conn
            .pragma_query_value(None, "page_size", |r| r.get(0))
            .unwrap();
        assert_eq!(page, PAGE_SIZE);
        // A fresh file has nothing to back up.
        assert!(!dir.path().join("p.db.v0.bak").exists());
    }

    #[test]
    fn migration_backs_up_the_older_file_first() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("old.db");
        {
            let store = Store::open_to_version(&path, 1).unwrap();
            assert_eq!(store.schema_version().unwrap(), 1);
            store
                .conn
                .execute("INSERT INTO area (name) VALUES ('Old area')", [])
                .unwrap();
        }
        let store = Store::open(&path).unwrap();
        assert_eq!(store.schema_version().unwrap(), SCHEMA_VERSION);
        let backup = dir.path().join("old.db.v1.bak");
        assert!(backup.is_file(), "backup beside the file");
        let old = Connection::open(&backup).unwrap();
        let v: i64 = old
            .pragma_query_value(None, "user_version", |r| r.get(0))
            .unwrap();
        assert_eq!(v, 1);
        let name: String = old
            .query_row("SELECT name FROM area", [], |r| r.get(0))
            .unwrap();
        assert_eq!(name, "Old area");
        // Opening again migrates nothing and makes no second backup.
        drop(store);
        let _again = Store::open(&path).unwrap();
        assert!(!dir.path().join("old.db.v1.1.bak").exists());
    }

    #[test]
    fn migration_5_moves_results_to_one_vocabulary() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("v4.db");
        {
            let store = Store::open_to_version(&path, 4).unwrap();
            // Result rows only (no plant): their reading rows are not needed for this check.
            store
                .conn
                .pragma_update(None, "foreign_keys", "OFF")
                .unwrap();
            store
                .conn
                .execute_batch(
                    r#"
INSERT INTO analysis VALUES (1, 'spallcast-analysis-2', '{"diagnosis":"outer race"}', 'then');
INSERT INTO reading_scalar VALUES (1, 'accel_rms_g', 0.5), (1, 'stage.accel_rms_g', 0.5),
    (1, 'accel_peak_g', 2.0), (1, 'band_ultrasonic_rms_g', 0.1), (1, 'iso_zone_index', 1.0),
    (1, 'envelope_bpfo_score_db', 9.0), (1, 'stage.kurtosis', 3.1), (2, 'kurtosis', 4.0);
INSERT INTO stage_call VALUES (1, 2, 'spallcast-stage-1', '{"call":{"stage":2},"forecast":null,"point":"P"}', 'then', 1, 't'),
    (2, 1, 'other', '{"evidence":["x"]}', 'then', 1, 't');
"#,
                )
                .unwrap();
        }
        let store = Store::open(&path).unwrap();
        let names: Vec<(i64, String)> = store
            .conn
            .prepare("SELECT reading_id, name FROM reading_scalar ORDER BY reading_id, name")
            .unwrap()
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
            .unwrap()
            .map(Result::unwrap)
            .collect();
        let expect = [
            (1, "stage.accel_peak_g"),
            (1, "stage.accel_rms_g"),
            (1, "stage.band.ultrasonic_rms_g"),
            (1, "stage.kurtosis"),
            (2, "stage.kurtosis"),
        ];
        assert_eq!(
            names,
            expect.map(|(i, n)| (i, n.to_owned())).to_vec(),
            "flat names renamed where no twin, dropped where one exists"
        );
        let (version, label): (String, Option<String>) = store
            .conn
            .query_row("SELECT version, diagnosis FROM analysis", [], |r| {
                Ok((r.get(0)?, r.get(1)?))
            })
            .unwrap();
        assert_ne!(version, "spallcast-analysis-2", "marked stale");
        assert_eq!(
            label, None,
            "filled when re-analysed, not read from the document"
        );
        let evidence: Vec<String> = store
            .conn
            .prepare("SELECT evidence FROM stage_call ORDER BY reading_id")
            .unwrap()
            .query_map([], |r| r.get(0))
            .unwrap()
            .map(Result::unwrap)
            .collect();
        let first: serde_json::Value = serde_json::from_str(&evidence[0]).unwrap();
        assert_eq!(first["schema_version"], 1);
        assert_eq!(first["point"], "P");
        assert_eq!(
            evidence[1], r#"{"evidence":["x"]}"#,
            "other shapes left alone"
        );
    }

    #[test]
    fn migration_7_moves_waveforms_to_their_own_table() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("v6.db");
        {
            let store = Store::open_to_version(&path, 6).unwrap();
            store
                .conn
                .pragma_update(None, "foreign_keys", "OFF")
                .unwrap();
            store
                .conn
                .execute_batch(
                    "INSERT INTO reading (id, point_id, position_id, taken_at_utc, utc_offset_s, route_day,
                        shaft_hz, sample_rate_hz, units, sample_count, waveform, source_file,
                        content_sha256, imported_at)
                     VALUES (1, 1, 1, 't', 0, '2026-01-01', 25.0, 1000.0, 'g', 2, x'0000803f000000c0',
                        'a.wav', 'h1', 'now'),
                        (2, 1, 1, 't2', 0, '2026-01-01', 25.0, 1000.0, 'g', 0, NULL, 'b.wav', 'h2', 'now');",
                )
                .unwrap();
        }
        let store = Store::open(&path).unwrap();
        let rows: Vec<(i64, Vec<u8>)> = store
            .conn
            .prepare("SELECT reading_id, samples FROM waveform ORDER BY reading_id")
            .unwrap()
            .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
            .unwrap()
            .map(Result::unwrap)
            .collect();
        assert_eq!(
            rows.len(),
            1,
            "a reading without samples has no waveform row"
        );
        assert_eq!(
            crate::queries::decode_waveform(&rows[0].1),
            vec![1.0_f32, -2.0],
            "the samples moved intact"
        );
        let has_column: i64 = store
            .conn
            .query_row(
                "SELECT count(*) FROM pragma_table_info('reading') WHERE name = 'waveform'",
                [],
                |r| r.get(0),
            )
            .unwrap();
        assert_eq!(has_column, 0, "the old column is gone");
    }

    #[test]
    fn newer_database_is_refused() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("new.db");
        {
            let conn = Connection::open(&path).unwrap();
            conn.pragma_update(None, "user_version", SCHEMA_VERSION + 1)
                .unwrap();
        }
        let err = Store::open(&path).err().unwrap();
        assert!(
            matches!(err, StoreError::NewerSchema { found, .. } if found == SCHEMA_VERSION + 1)
        );
        assert!(err.to_string().contains("newer"), "{err}");
        assert!(err.to_string().contains("new.db"), "{err}");
    }

    #[test]
    fn a_text_file_is_not_a_database() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("notes.db");
        std::fs::write(&path, "these are my notes, not a database\n".repeat(200)).unwrap();
        let err = Store::open(&path).err().unwrap();
        assert!(matches!(err, StoreError::NotADatabase { .. }), "{err:?}");
        assert!(err.to_string().contains("notes.db"), "{err}");
    }

    #[test]
    fn a_held_write_lock_gives_a_busy_error() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("busy.db");
        let store = Store::open(&path).unwrap();
        store
            .conn
            .busy_timeout(std::time::Duration::from_millis(50))
            .unwrap();
        let other = Connection::open(&path).unwrap();
        other
            .execute_batch("BEGIN IMMEDIATE; INSERT INTO area (name) VALUES ('x');")
            .unwrap();
        let err = StoreError::from(
            store
                .conn
                .execute("INSERT INTO area (name) VALUES ('y')", [])
                .unwrap_err(),
        );
        assert!(err.to_string().contains("busy"), "{err}");
        other.execute_batch("COMMIT").unwrap();
    }
}
