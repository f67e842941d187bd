//! The store's error type.

use std::path::PathBuf;

/// Everything that can go wrong in the store. `Display` names the file and what is wrong.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum StoreError {
    /// The file exists but is not an `SQLite` database.
    #[error("{} is not a Spallcast database (not an SQLite file)", path.display())]
    NotADatabase {
        /// The file that was opened.
        path: PathBuf,
    },
    /// An `SQLite` file (or an empty file) without Spallcast's tables, given to a command that only reads.
    #[error(
        "{} is not a Spallcast database (an empty file or an SQLite file without Spallcast's tables); \
         only `spallcast import` and `spallcast demo` create databases",
        path.display()
    )]
    NotSpallcast {
        /// The file that was opened.
        path: PathBuf,
    },
    /// The database cannot be written (file permissions, a read-only folder or disk).
    #[error(
        "the database {} is read-only (its file, folder or disk does not allow writing); nothing was changed",
        path.display()
    )]
    ReadOnly {
        /// The database file.
        path: PathBuf,
    },
    /// The database was written by a newer Spallcast and this one will not touch it.
    #[error(
        "{} was written by a newer Spallcast (schema version {found}; this build understands up to {supported}); \
         open it with that newer version",
        path.display()
    )]
    NewerSchema {
        /// The database file.
        path: PathBuf,
        /// The `user_version` found in the file.
        found: i64,
        /// The newest schema this build knows.
        supported: i64,
    },
    /// Another program held a lock on the database for longer than the busy timeout.
    #[error(
        "the database {} is busy: another program kept it locked for more than {} s; close it or try again",
        path.display(),
        crate::BUSY_TIMEOUT.as_secs()
    )]
    Busy {
        /// The database file.
        path: PathBuf,
    },
    /// The file could not be backed up before a migration.
    #[error("could not back up {} to {} before upgrading it: {message}", path.display(), backup.display())]
    Backup {
        /// The database file.
        path: PathBuf,
        /// Where the backup was to go.
        backup: PathBuf,
        /// What went wrong.
        message: String,
    },
    /// The plant file is malformed (TOML syntax, an unknown key, a bad value).
    #[error("plant file {}: {message}", path.display())]
    PlantFile {
        /// The plant file.
        path: PathBuf,
        /// What is wrong, with the key or line where known.
        message: String,
    },
    /// A plant definition is inconsistent (an unknown bearing type, a duplicate id, ...).
    #[error("plant definition: {0}")]
    Plant(String),
    /// The route folder cannot be imported at all (no manifest, unreadable manifest).
    #[error("route folder {}: {message}", path.display())]
    Route {
        /// The folder or manifest file.
        path: PathBuf,
        /// What is wrong.
        message: String,
    },
    /// A named object (outage, life, reading, ...) does not exist.
    #[error("{0}")]
    NotFound(String),
    /// A request that does not make sense (e.g. a replacement dated before the installation).
    #[error("{0}")]
    Invalid(String),
    /// A file could not be read or written.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The I/O error.
        source: std::io::Error,
    },
    /// An `SQLite` error met while working on a named database (see [`crate::Store::named`]).
    #[error("{}: {}", path.display(), sqlite_message(source))]
    Database {
        /// The database file.
        path: PathBuf,
        /// The `SQLite` error.
        source: rusqlite::Error,
    },
    /// Any other `SQLite` error (a lock timeout reads "the database is busy ...").
    #[error("{}", sqlite_message(.0))]
    Sqlite(#[from] rusqlite::Error),
    /// A JSON document in the database could not be read or written.
    #[error("JSON document: {0}")]
    Json(#[from] serde_json::Error),
}

/// True when the `SQLite` error is a lock timeout (`SQLITE_BUSY` / `SQLITE_LOCKED`).
pub(crate) fn is_busy(err: &rusqlite::Error) -> bool {
    matches!(
        err.sqlite_error_code(),
        Some(rusqlite::ErrorCode::DatabaseBusy | rusqlite::ErrorCode::DatabaseLocked)
    )
}

fn sqlite_message(err: &rusqlite::Error) -> String {
    if is_busy(err) {
        format!(
            "the database is busy: another program kept it locked for more than {} s; close it or try again ({err})",
            crate::BUSY_TIMEOUT.as_secs()
        )
    } else {
        format!("database error: {err}")
    }
}

/// True when `SQLite` could not write because the file, folder or disk is read-only, or could not
/// open the file at all (as on a read-only disk, where the WAL index cannot be created).
pub(crate) fn is_read_only(err: &rusqlite::Error) -> bool {
    matches!(
        err.sqlite_error_code(),
        Some(rusqlite::ErrorCode::ReadOnly | rusqlite::ErrorCode::CannotOpen)
    )
}

/// True when `SQLite` says the file is not a database.
pub(crate) fn is_not_a_database(err: &rusqlite::Error) -> bool {
    matches!(
        err.sqlite_error_code(),
        Some(rusqlite::ErrorCode::NotADatabase)
    )
}

/// Store result type.
pub type Result<T, E = StoreError> = std::result::Result<T, E>;
