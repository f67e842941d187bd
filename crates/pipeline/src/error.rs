//! The pipeline's error: what was being done, and the store, simulator, file or encoding error
//! behind it (reachable as the error's `source`, so `{err:#}` prints "what: why").

use spallcast_simulate::SimError;
use spallcast_store::StoreError;

/// Why a pipeline step failed. The message says what was being done; the cause is its `source`.
#[derive(Debug, thiserror::Error)]
pub enum PipelineError {
    /// A store call failed; the store's message already names the database or file.
    #[error(transparent)]
    Stored(#[from] StoreError),
    /// A store call failed, with what was being done.
    #[error("{doing}")]
    Store {
        /// What was being done, e.g. "listing bearing positions".
        doing: String,
        /// The store's error.
        #[source]
        source: StoreError,
    },
    /// The simulator failed (demo plant).
    #[error("{doing}")]
    Simulate {
        /// What was being done.
        doing: String,
        /// The simulator's error.
        #[source]
        source: SimError,
    },
    /// A file or folder operation failed.
    #[error("{doing}")]
    Io {
        /// What was being done, naming the file.
        doing: String,
        /// The operating system's error.
        #[source]
        source: std::io::Error,
    },
    /// A pipeline step failed inside a larger one (e.g. the demo plant's assessment).
    #[error("{doing}")]
    Context {
        /// The larger step.
        doing: String,
        /// The step's own error.
        #[source]
        source: Box<PipelineError>,
    },
    /// A stage record could not be encoded for storage.
    #[error("encoding the stage record of reading {reading_id}")]
    Encode {
        /// The reading.
        reading_id: i64,
        /// The encoder's error.
        #[source]
        source: serde_json::Error,
    },
}

impl PipelineError {
    /// The message and every cause behind it, joined with ": " (as `anyhow` prints `{err:#}`).
    pub fn full_message(&self) -> String {
        let mut out = self.to_string();
        let mut cause = std::error::Error::source(self);
        while let Some(c) = cause {
            out.push_str(": ");
            out.push_str(&c.to_string());
            cause = c.source();
        }
        out
    }
}

/// A pipeline result.
pub type Result<T, E = PipelineError> = std::result::Result<T, E>;

/// Adds what was being done to a store, simulator or file error.
pub(crate) trait Doing<T> {
    /// Wraps the error with `doing()`.
    fn doing(self, doing: impl FnOnce() -> String) -> Result<T>;
}

impl<T> Doing<T> for std::result::Result<T, StoreError> {
    fn doing(self, doing: impl FnOnce() -> String) -> Result<T> {
        self.map_err(|source| PipelineError::Store {
            doing: doing(),
            source,
        })
    }
}

impl<T> Doing<T> for std::result::Result<T, SimError> {
    fn doing(self, doing: impl FnOnce() -> String) -> Result<T> {
        self.map_err(|source| PipelineError::Simulate {
            doing: doing(),
            source,
        })
    }
}

impl<T> Doing<T> for std::result::Result<T, std::io::Error> {
    fn doing(self, doing: impl FnOnce() -> String) -> Result<T> {
        self.map_err(|source| PipelineError::Io {
            doing: doing(),
            source,
        })
    }
}
