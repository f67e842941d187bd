//! The one error type every reader in this crate returns.

use std::path::PathBuf;

/// Everything that can go wrong while reading, checking or writing a recording or a route manifest.
///
/// Every message says what is wrong and ends with the file's path (shown with `Display`), so it can go
/// straight into a log line or a dialog.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum FormatError {
    /// The file could not be opened, read or written at the operating-system level.
    #[error("cannot access the file ({source}): {}", path.display())]
    Io {
        /// The file concerned.
        path: PathBuf,
        /// The underlying error.
        #[source]
        source: std::io::Error,
    },
    /// The file is larger than the reader accepts.
    #[error("the file is larger than {limit_bytes} bytes, the most this reader loads: {}", path.display())]
    TooLarge {
        /// The file concerned.
        path: PathBuf,
        /// The limit in bytes.
        limit_bytes: u64,
    },
    /// The file's extension and content match none of the supported recording formats.
    #[error("unrecognised recording format ({detail}): {}", path.display())]
    UnknownFormat {
        /// The file concerned.
        path: PathBuf,
        /// What was seen.
        detail: String,
    },
    /// A WAV file is malformed, truncated or uses an encoding this crate does not read.
    #[error("invalid WAV file ({detail}): {}", path.display())]
    Wav {
        /// The file concerned.
        path: PathBuf,
        /// What is wrong.
        detail: String,
    },
    /// A CSV waveform file is malformed.
    #[error("invalid CSV waveform{} ({detail}): {}", line_suffix(*line), path.display())]
    CsvWaveform {
        /// The file concerned.
        path: PathBuf,
        /// 1-based line number, where the problem has one.
        line: Option<u64>,
        /// What is wrong.
        detail: String,
    },
    /// A Universal File Format file (dataset 58, ASCII or binary) is malformed or unsupported.
    #[error("invalid UFF 58 file{} ({detail}): {}", line_suffix(*line), path.display())]
    Uff {
        /// The file concerned.
        path: PathBuf,
        /// 1-based line number, where the problem has one.
        line: Option<u64>,
        /// What is wrong.
        detail: String,
    },
    /// The route manifest as a whole is unusable (not CSV, missing a required column, ...).
    #[error("unusable route manifest ({detail}): {}", path.display())]
    Manifest {
        /// The manifest file.
        path: PathBuf,
        /// What is wrong.
        detail: String,
    },
    /// One row of the route manifest is bad; the other rows are unaffected.
    #[error("route manifest line {line}, column `{column}`: {detail}: {}", path.display())]
    ManifestRow {
        /// The manifest file.
        path: PathBuf,
        /// 1-based line number of the row in the file (the header is line 1).
        line: u64,
        /// Name of the offending column.
        column: String,
        /// What is wrong.
        detail: String,
    },
    /// A recording was read but its content is unusable for analysis (see [`crate::validate`]).
    #[error("recording rejected ({problem}): {}", path.display())]
    Invalid {
        /// The file the recording came from.
        path: PathBuf,
        /// What is wrong.
        problem: Problem,
    },
}

/// Why [`crate::validate`] rejected a recording.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum Problem {
    /// No channels, or no samples in any channel.
    #[error("it holds no samples")]
    Empty,
    /// Channels differ in length.
    #[error("channel {channel} has {len} samples but channel 1 has {expected}")]
    RaggedChannels {
        /// 1-based channel number.
        channel: usize,
        /// Its length.
        len: usize,
        /// Length of channel 1.
        expected: usize,
    },
    /// A sample is NaN or infinite.
    #[error("channel {channel}, sample {index} is not a finite number")]
    NonFinite {
        /// 1-based channel number.
        channel: usize,
        /// 0-based sample index.
        index: usize,
    },
    /// The sample rate is outside the accepted range.
    #[error("sample rate {sample_rate_hz} Hz is outside {min_hz} Hz..{max_hz} Hz")]
    SampleRate {
        /// The rate found.
        sample_rate_hz: f64,
        /// Lowest accepted rate.
        min_hz: f64,
        /// Highest accepted rate.
        max_hz: f64,
    },
    /// Too few samples for a spectrum.
    #[error("only {samples} samples per channel, at least {min} are needed")]
    TooShort {
        /// Samples per channel found.
        samples: usize,
        /// Minimum accepted.
        min: usize,
    },
}

fn line_suffix(line: Option<u64>) -> String {
    line.map_or_else(String::new, |l| format!(" at line {l}"))
}
