//! The planning crate's error type.

use std::path::PathBuf;

/// What can go wrong while planning or exporting. `Display` names the file and what is wrong.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum PlanError {
    /// The store refused a read or write.
    #[error(transparent)]
    Store(#[from] spallcast_store::StoreError),
    /// An export file could not be written.
    #[error("could not write {}: {source}", path.display())]
    Write {
        /// The file being written.
        path: PathBuf,
        /// The I/O error.
        source: std::io::Error,
    },
    /// The CSV writer failed.
    #[error("CSV export: {0}")]
    Csv(#[from] csv::Error),
    /// A request that does not make sense (an unknown outage, a life without a forecast, ...).
    #[error("{0}")]
    Invalid(String),
}

/// Result type of the planning crate.
pub type Result<T, E = PlanError> = std::result::Result<T, E>;
