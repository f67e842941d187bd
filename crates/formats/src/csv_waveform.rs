//! CSV waveforms: one number per column per line, with an optional `# sample_rate_hz=` comment.

use std::path::Path;

use crate::line_index::LineIndex;
use crate::{FormatError, Recording};

fn csv_err(path: &Path, line: Option<u64>, detail: impl Into<String>) -> FormatError {
    FormatError::CsvWaveform {
        path: path.to_owned(),
        line,
        detail: detail.into(),
    }
}

/// Reads a CSV waveform (layout in the crate docs): each column is a channel, each line a sample time.
///
/// The sample rate comes from a `# sample_rate_hz=<Hz>` comment line or, failing that, from
/// `sample_rate_hint_hz` (the manifest's `sample_rate_hz` column). Both absent, a non-positive rate,
/// or the two disagreeing (by more than 1 part in 10⁹) is an error. A field that is not a number, or
/// a line with a different column count, is an error naming the line. Values are returned as stored.
pub fn read_csv_waveform(
    path: &Path,
    sample_rate_hint_hz: Option<f64>,
) -> Result<Recording, FormatError> {
    let bytes = crate::read_capped(path, crate::MAX_FILE_BYTES)?;
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(&bytes);

    let header_rate = rate_from_comments(path, bytes)?;
    let sample_rate_hz = match (header_rate, sample_rate_hint_hz) {
        (Some(h), Some(hint)) if (h - hint).abs() > 1e-9 * h.abs().max(hint.abs()) => {
            return Err(csv_err(
                path,
                None,
                format!(
                    "the file says sample_rate_hz={h} but the manifest says {hint}; they must agree"
                ),
            ));
        }
        (Some(h), _) => h,
        (None, Some(hint)) if hint.is_finite() && hint > 0.0 => hint,
        (None, Some(hint)) => {
            return Err(csv_err(
                path,
                None,
                format!("the sample rate given for it ({hint} Hz) is not a positive number"),
            ));
        }
        (None, None) => {
            return Err(csv_err(
                path,
                None,
                "no sample rate: add a `# sample_rate_hz=<Hz>` line or a sample_rate_hz column in \
                 the route manifest",
            ));
        }
    };

    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .comment(Some(b'#'))
        .flexible(false)
        .trim(csv::Trim::All)
        .from_reader(bytes);
    let mut channels: Vec<Vec<f32>> = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| {
            let line = e
                .position()
                .map(|p| LineIndex::new(bytes, Some(b'#')).line_of(p.byte()));
            let detail = match e.kind() {
                csv::ErrorKind::UnequalLengths {
                    expected_len, len, ..
                } => format!("{len} columns where earlier lines have {expected_len}"),
                _ => e.to_string(),
            };
            csv_err(path, line, detail)
        })?;
        if record.iter().all(str::is_empty) {
            continue;
        }
        if channels.is_empty() {
            channels = vec![Vec::new(); record.len()];
        }
        for (column, (field, ch)) in record.iter().zip(channels.iter_mut()).enumerate() {
            let value: f32 = field.parse().map_err(|_| {
                let line = record
                    .position()
                    .map(|p| LineIndex::new(bytes, Some(b'#')).line_of(p.byte()));
                csv_err(
                    path,
                    line,
                    format!("column {}: `{field}` is not a number", column + 1),
                )
            })?;
            ch.push(value);
        }
    }
    Ok(Recording {
        channels,
        sample_rate_hz,
    })
}

/// Finds `# sample_rate_hz=<value>` comment lines; repeated lines must agree.
fn rate_from_comments(path: &Path, bytes: &[u8]) -> Result<Option<f64>, FormatError> {
    let mut rate: Option<f64> = None;
    for (i, raw) in bytes.split(|&b| b == b'\n').enumerate() {
        let line = String::from_utf8_lossy(raw);
        let Some(comment) = line.trim().strip_prefix('#') else {
            continue;
        };
        let Some((key, value)) = comment.split_once('=') else {
            continue;
        };
        if key.trim() != "sample_rate_hz" {
            continue;
        }
        let line_no = Some(i as u64 + 1);
        let value = value.trim();
        let parsed: f64 = value.parse().map_err(|_| {
            csv_err(
                path,
                line_no,
                format!("sample_rate_hz `{value}` is not a number"),
            )
        })?;
        if !(parsed.is_finite() && parsed > 0.0) {
            return Err(csv_err(
                path,
                line_no,
                format!("sample_rate_hz must be above 0 Hz, found {value}"),
            ));
        }
        if rate.is_some_and(|r| r.to_bits() != parsed.to_bits()) {
            return Err(csv_err(
                path,
                line_no,
                "a second, different sample_rate_hz line",
            ));
        }
        rate = Some(parsed);
    }
    Ok(rate)
}
