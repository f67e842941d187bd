//! File readers for the recordings and route manifests Spallcast imports.
//!
//! # Recording formats
//!
//! | format | extensions | reader |
//! |---|---|---|
//! | WAV (RIFF/WAVE): integer PCM 8, 16, 24, 32 bit and 32-bit IEEE float, any channel count | `.wav` | [`read_wav`] |
//! | CSV waveform (layout below) | `.csv`, `.txt` | [`read_csv_waveform`] |
//! | Universal File Format dataset 58 time records, ASCII and binary (`58b`) | `.uff`, `.unv`, `.uf58` | [`read_uff58`] |
//!
//! [`read_recording`] picks the reader by extension and, for an unknown extension, by content.
//!
//! **Scaling.** Integer PCM WAV samples are scaled to ±1.0 full scale: a sample is divided by
//! 2^(bits−1), so 16-bit 32767 reads as 0.99997 and −32768 as −1.0 (8-bit WAV is stored unsigned; its
//! offset of 128 is removed first). Float WAV, CSV and UFF values are returned as stored. None of the
//! readers knows the engineering unit: the route manifest's `units` column says what the numbers are.
//!
//! # CSV waveform layout
//!
//! ```text
//! # sample_rate_hz=25600
//! 0.0123
//! -0.0456
//! 1.5e-3
//! ```
//!
//! * Lines starting with `#` are comments. A comment of the exact form `# sample_rate_hz=<number>`
//!   (spaces around `=` allowed) gives the sample rate in Hz.
//! * Every other non-blank line is one sample time: one number per column, separated by commas
//!   (RFC 4180). One column is one channel; every line must have the same number of columns.
//! * There is no column-name header row: a field that is not a number is an error naming its line.
//! * Without the `sample_rate_hz` comment the rate must come from the manifest's `sample_rate_hz`
//!   column (the `sample_rate_hint_hz` argument); if both are given they must agree.
//!
//! # Route manifest
//!
//! [`read_manifest`] reads a folder's `route.csv`; see [`ManifestRow`] for the columns and rules.
//!
//! # Checks
//!
//! [`validate`] rejects recordings that cannot be analysed; [`clipping_fraction`] measures sensor
//! saturation so callers can mark a reading as suspect.
//!
//! Memory use is bounded by the real size of the input: lengths claimed in file headers are checked
//! against the bytes actually present before anything is allocated for them.
#![forbid(unsafe_code)]
#![warn(missing_docs)]

mod csv_waveform;
mod error;
mod line_index;
mod manifest;
mod uff58;
mod validate;
mod wav;

use std::path::Path;

pub use csv_waveform::read_csv_waveform;
pub use error::{FormatError, Problem};
pub use manifest::{
    EARLIEST_TAKEN_AT, FUTURE_TOLERANCE_H, MAX_MANIFEST_BYTES, MAX_RPM, ManifestRow, Units,
    read_manifest,
};
pub use uff58::read_uff58;
pub use validate::{
    MAX_SAMPLE_RATE_HZ, MIN_SAMPLE_RATE_HZ, MIN_SAMPLES, clipping_fraction, validate,
};
pub use wav::{read_wav, write_wav_f32};

/// A waveform recording: one or more channels sampled together at one rate.
///
/// Samples are in whatever unit the file stores (see the crate docs on scaling); the route manifest
/// says which unit that is.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Recording {
    /// Samples per channel, channel 1 first. Readers return channels of equal length.
    pub channels: Vec<Vec<f32>>,
    /// Sample rate in Hz.
    pub sample_rate_hz: f64,
}

impl Recording {
    /// Number of samples per channel (the length of channel 1; 0 when there are no channels).
    pub fn samples_per_channel(&self) -> usize {
        self.channels.first().map_or(0, Vec::len)
    }

    /// Duration in seconds (0 when the rate is not positive).
    pub fn duration_secs(&self) -> f64 {
        if self.sample_rate_hz > 0.0 {
            self.samples_per_channel() as f64 / self.sample_rate_hz
        } else {
            0.0
        }
    }

    /// The samples of a 1-based channel number, as the route manifest's `channel` column counts.
    pub fn channel(&self, channel: u32) -> Option<&[f32]> {
        let index = usize::try_from(channel).ok()?.checked_sub(1)?;
        self.channels.get(index).map(Vec::as_slice)
    }
}

/// The recording formats [`read_recording`] can recognise.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Kind {
    Wav,
    Csv,
    Uff,
}

/// Reads a recording in any supported format.
///
/// The format is chosen by extension (`.wav`; `.csv`/`.txt`; `.uff`/`.unv`/`.uf58`, case-insensitive);
/// for any other extension the first bytes decide (`RIFF` → WAV, a first line of `-1` → UFF).
/// `sample_rate_hint_hz` is used only by CSV waveforms (see [`read_csv_waveform`]).
///
/// Reading does not judge the content; call [`validate`] next.
///
/// ```
/// use spallcast_formats::{Recording, read_recording, validate, write_wav_f32};
///
/// let dir = tempfile::tempdir()?;
/// let path = dir.path().join("IN-P1-MNDE-H.wav");
/// let rec = Recording {
///     channels: vec![(0..2048).map(|i| (i as f32 * 0.05).sin()).collect()],
///     sample_rate_hz: 25_600.0,
/// };
/// write_wav_f32(&path, &rec)?;
/// let back = read_recording(&path, None)?;
/// validate(&back, &path)?;
/// assert_eq!(back, rec);
/// # Ok::<(), Box<dyn std::error::Error>>(())
/// ```
pub fn read_recording(
    path: &Path,
    sample_rate_hint_hz: Option<f64>,
) -> Result<Recording, FormatError> {
    match kind_of(path)? {
        Kind::Wav => read_wav(path),
        Kind::Csv => read_csv_waveform(path, sample_rate_hint_hz),
        Kind::Uff => read_uff58(path),
    }
}

fn kind_of(path: &Path) -> Result<Kind, FormatError> {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    match ext.as_deref() {
        Some("wav") => return Ok(Kind::Wav),
        Some("csv" | "txt") => return Ok(Kind::Csv),
        Some("uff" | "unv" | "uf58") => return Ok(Kind::Uff),
        _ => {}
    }
    let head = read_head(path, 256)?;
    if head.starts_with(b"RIFF") {
        return Ok(Kind::Wav);
    }
    let first_line = head
        .split(|&b| b == b'\n')
        .map(|l| String::from_utf8_lossy(l).trim().to_owned())
        .find(|l| !l.is_empty());
    if first_line.as_deref() == Some("-1") {
        return Ok(Kind::Uff);
    }
    Err(FormatError::UnknownFormat {
        path: path.to_owned(),
        detail:
            "extension is not .wav, .csv, .txt, .uff, .unv or .uf58 and the content is neither \
                 RIFF/WAVE nor a Universal File"
                .to_owned(),
    })
}

/// Largest recording file the text and UFF readers load (1 GiB); a bigger file is refused rather
/// than read into memory. Also protects against device files and pipes that never end.
pub const MAX_FILE_BYTES: u64 = 1 << 30;

/// Reads a whole file, refusing one larger than `limit` bytes (the read itself is capped, so a file
/// that grows or never ends cannot exhaust memory).
pub(crate) fn read_capped(path: &Path, limit: u64) -> Result<Vec<u8>, FormatError> {
    use std::io::Read as _;
    let io_err = |source| FormatError::Io {
        path: path.to_owned(),
        source,
    };
    let file = std::fs::File::open(path).map_err(io_err)?;
    let hint = file.metadata().map_or(0, |m| m.len()).min(limit);
    let mut bytes = Vec::with_capacity(usize::try_from(hint).unwrap_or(0));
    file.take(limit.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(io_err)?;
    if bytes.len() as u64 > limit {
        return Err(FormatError::TooLarge {
            path: path.to_owned(),
            limit_bytes: limit,
        });
    }
    Ok(bytes)
}

pub(crate) fn read_head(path: &Path, max: u64) -> Result<Vec<u8>, FormatError> {
    use std::io::Read as _;
    let io_err = |source| FormatError::Io {
        path: path.to_owned(),
        source,
    };
    let file = std::fs::File::open(path).map_err(io_err)?;
    let mut head = Vec::new();
    file.take(max).read_to_end(&mut head).map_err(io_err)?;
    Ok(head)
}
