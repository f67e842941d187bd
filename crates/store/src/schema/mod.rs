//! Schema, migrations and opening a store.
//!
//! Migrations are numbered from 1 and keyed on `PRAGMA user_version`. Each runs in one transaction
//! together with the update of `user_version`, so a crash mid-migration leaves the previous version.
//! The migration SQL itself lives in `migrations`.

mod migrations;

use std::path::{Path, PathBuf};

use rusqlite::{Connection, OpenFlags};

use crate::error::{Result, StoreError, is_busy, is_not_a_database, is_read_only};
use crate::{BUSY_TIMEOUT, Store};
use migrations::MIGRATIONS;

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
mod tests;
