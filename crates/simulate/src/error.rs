//! Error type of the simulator and the demo-route generator.

use std::path::PathBuf;

/// Everything that can go wrong while simulating or writing demo routes.
///
/// Every message names the file (or the parameter) and what is wrong.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum SimError {
    /// A simulation parameter is out of range (non-finite, non-positive, ...).
    #[error("invalid simulation parameter: {0}")]
    InvalidParameter(String),
    /// A TOML file could not be parsed.
    #[error("cannot parse {file}: {message}")]
    Toml {
        /// File name (or `plant.toml` / `scenario.toml` for embedded text).
        file: String,
        /// Parser message.
        message: String,
    },
    /// The scenario refers to something the plant file does not define, or is inconsistent.
    #[error("invalid scenario in {file}: {message}")]
    Scenario {
        /// File name.
        file: String,
        /// What is wrong.
        message: String,
    },
    /// Reading or writing a file failed.
    #[error("I/O error on {}: {source}", path.display())]
    Io {
        /// The file or folder.
        path: PathBuf,
        /// Underlying error.
        #[source]
        source: std::io::Error,
    },
    /// Writing a WAV file failed.
    #[error("cannot write WAV {}: {source}", path.display())]
    Wav {
        /// The WAV file.
        path: PathBuf,
        /// Underlying error.
        #[source]
        source: hound::Error,
    },
    /// Writing a CSV file failed.
    #[error("cannot write CSV {}: {source}", path.display())]
    Csv {
        /// The CSV file.
        path: PathBuf,
        /// Underlying error.
        #[source]
        source: csv::Error,
    },
}
