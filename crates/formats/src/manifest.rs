//! The route folder's manifest, `route.csv`.

use std::collections::HashMap;
use std::path::Path;

use chrono::{DateTime, FixedOffset};

use crate::FormatError;

/// Highest shaft speed a manifest row may give, in r/min. Faster is taken for a typing error
/// (common practice, no source: plant rotating machinery on a walk-around route runs far below this).
pub const MAX_RPM: f64 = 100_000.0;

/// Earliest `taken_at` accepted: 1 January 1970 UTC. No portable data collector recorded before it; an
/// earlier time is a clock that was never set.
pub const EARLIEST_TAKEN_AT: &str = "1970-01-01T00:00:00Z";

/// How far in the future (by this computer's clock) `taken_at` may lie, hours: a day covers any UTC
/// offset written wrongly and a collector's clock running a little ahead; a later time is refused.
pub const FUTURE_TOLERANCE_H: i64 = 24;

/// Unit of the numbers in a recording, as the manifest's `units` column gives it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Units {
    /// Acceleration in g (standard gravity, 9.80665 m/s²). Manifest text `g` (the default).
    G,
    /// Acceleration in m/s². Manifest text `m/s2` (also `m/s^2`, `m/s²`).
    MetresPerSecond2,
    /// Sensor output in millivolts; needs the `sensitivity` column (mV/g). Manifest text `mV`.
    Millivolts,
}

impl Units {
    /// Parses the manifest text (surrounding spaces ignored; `g`/`G` and `mV`/`mv` case-insensitive).
    pub fn parse(text: &str) -> Option<Self> {
        match text.trim() {
            "g" | "G" => Some(Self::G),
            "m/s2" | "m/s^2" | "m/s²" => Some(Self::MetresPerSecond2),
            t if t.eq_ignore_ascii_case("mv") => Some(Self::Millivolts),
            _ => None,
        }
    }

    /// The canonical manifest text: `g`, `m/s2` or `mV`.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::G => "g",
            Self::MetresPerSecond2 => "m/s2",
            Self::Millivolts => "mV",
        }
    }
}

impl std::fmt::Display for Units {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// One reading listed in a route folder's `route.csv`.
///
/// The manifest is RFC 4180 CSV, UTF-8, with a header row. Column order is free; names are fixed.
/// Required: `file` (path relative to the folder, `/` or `\` separated, never absolute and never
/// through `..`), `point` (point id from the plant file), `taken_at` (RFC 3339 with an offset, e.g.
/// `2026-05-14T09:31:00+01:00`; from [`EARLIEST_TAKEN_AT`] up to [`FUTURE_TOLERANCE_H`] hours after
/// now), `rpm` (shaft speed, r/min, above 0 and at most [`MAX_RPM`]).
/// Optional (an empty cell means "not given"): `units` (`g` default, `m/s2`, `mV`), `sensitivity`
/// (mV/g, above 0; required with `mV`), `channel` (1-based, default 1), `sample_rate_hz` (for CSV
/// waveforms without a rate comment; above 0). Other columns are ignored. A repeated
/// (`file`, `point`, `channel`) is a row error on the later row.
#[derive(Debug, Clone, PartialEq)]
pub struct ManifestRow {
    /// 1-based line number of the row in the manifest (the header is line 1).
    pub line: usize,
    /// Recording path relative to the route folder, as written but with `\` separators turned into `/`.
    pub file: String,
    /// Measurement point id.
    pub point: String,
    /// When the reading was taken, with the offset the file gave.
    pub taken_at: DateTime<FixedOffset>,
    /// Shaft speed in r/min.
    pub rpm: f64,
    /// Unit of the recording's numbers.
    pub units: Units,
    /// Sensor sensitivity in mV/g, when given.
    pub sensitivity_mv_per_g: Option<f64>,
    /// 1-based channel of the recording to use.
    pub channel: u32,
    /// Sample rate for CSV waveforms without their own, when given.
    pub sample_rate_hz: Option<f64>,
}

/// Largest route manifest accepted (16 MiB, far more than any route's rows).
pub const MAX_MANIFEST_BYTES: u64 = 16 << 20;

const REQUIRED: [&str; 4] = ["file", "point", "taken_at", "rpm"];

#[derive(Default)]
struct Columns {
    file: usize,
    point: usize,
    taken_at: usize,
    rpm: usize,
    units: Option<usize>,
    sensitivity: Option<usize>,
    channel: Option<usize>,
    sample_rate_hz: Option<usize>,
}

/// Reads a route manifest.
///
/// The outer `Err` means the manifest as a whole is unusable: it cannot be read, is not valid UTF-8
/// CSV, has no header, repeats a column name or lacks a required column. Otherwise each data row
/// becomes an inner `Ok` or an inner [`FormatError::ManifestRow`] naming its line and column, so good
/// rows can be imported while bad ones are reported. Rows come back in file order; blank lines are
/// skipped.
pub fn read_manifest(path: &Path) -> Result<Vec<Result<ManifestRow, FormatError>>, FormatError> {
    let outer = |detail: String| FormatError::Manifest {
        path: path.to_owned(),
        detail,
    };
    let bytes = crate::read_capped(path, MAX_MANIFEST_BYTES)?;
    let bytes = bytes.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(&bytes);
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(false)
        .from_reader(bytes);
    let headers = reader
        .headers()
        .map_err(|e| outer(format!("cannot read the header row: {e}")))?
        .clone();
    if headers.iter().all(|h| h.trim().is_empty()) {
        return Err(outer("the file is empty or has no header row".to_owned()));
    }
    let cols = find_columns(&headers).map_err(outer)?;

    let mut rows = Vec::new();
    let mut seen: HashMap<(String, String, u32), u64> = HashMap::new();
    let mut index = crate::line_index::LineIndex::new(bytes, None);
    for record in reader.records() {
        let record = match record {
            Ok(r) => r,
            Err(e) => {
                let line = e.position().map_or(0, |p| index.line_of(p.byte()));
                if matches!(e.kind(), csv::ErrorKind::UnequalLengths { .. }) {
                    rows.push(Err(FormatError::ManifestRow {
                        path: path.to_owned(),
                        line,
                        column: "*".to_owned(),
                        detail: format!(
                            "the row has a different number of fields than the header ({e})"
                        ),
                    }));
                    continue;
                }
                return Err(outer(format!("not valid CSV: {e}")));
            }
        };
        let line = record.position().map_or(0, |p| index.line_of(p.byte()));
        let row =
            parse_row(&record, &cols, line).map_err(|(column, detail)| FormatError::ManifestRow {
                path: path.to_owned(),
                line,
                column: column.to_owned(),
                detail,
            });
        let row = row.and_then(|row| {
            let key = (normalise(&row.file), row.point.clone(), row.channel);
            if let Some(first) = seen.get(&key) {
                Err(FormatError::ManifestRow {
                    path: path.to_owned(),
                    line,
                    column: "file".to_owned(),
                    detail: format!(
                        "file `{}`, point `{}`, channel {} is already listed on line {first}",
                        row.file, row.point, row.channel
                    ),
                })
            } else {
                seen.insert(key, line);
                Ok(row)
            }
        });
        rows.push(row);
    }
    Ok(rows)
}

fn find_columns(headers: &csv::StringRecord) -> Result<Columns, String> {
    let mut found: HashMap<&str, usize> = HashMap::new();
    for (i, h) in headers.iter().enumerate() {
        let name = h.trim();
        if name.is_empty() {
            continue;
        }
        if found.insert(name, i).is_some() {
            return Err(format!("column `{name}` appears twice in the header"));
        }
    }
    let missing: Vec<&str> = REQUIRED
        .iter()
        .copied()
        .filter(|c| !found.contains_key(c))
        .collect();
    if !missing.is_empty() {
        return Err(format!(
            "missing required column(s) {}; the header has: {}",
            missing.join(", "),
            headers.iter().collect::<Vec<_>>().join(", ")
        ));
    }
    let get = |name: &str| found.get(name).copied();
    Ok(Columns {
        file: get("file").unwrap_or_default(),
        point: get("point").unwrap_or_default(),
        taken_at: get("taken_at").unwrap_or_default(),
        rpm: get("rpm").unwrap_or_default(),
        units: get("units"),
        sensitivity: get("sensitivity"),
        channel: get("channel"),
        sample_rate_hz: get("sample_rate_hz"),
    })
}

type RowError = (&'static str, String);

fn required<'r>(
    record: &'r csv::StringRecord,
    index: usize,
    name: &'static str,
) -> Result<&'r str, RowError> {
    let value = record.get(index).unwrap_or("").trim();
    if value.is_empty() {
        Err((name, "the field is empty".to_owned()))
    } else {
        Ok(value)
    }
}

fn optional(record: &csv::StringRecord, index: Option<usize>) -> Option<&str> {
    let value = record.get(index?)?.trim();
    (!value.is_empty()).then_some(value)
}

fn positive_number(text: &str, name: &'static str) -> Result<f64, RowError> {
    let value: f64 = text
        .parse()
        .map_err(|_| (name, format!("`{text}` is not a number")))?;
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err((name, format!("`{text}` must be a finite number above 0")))
    }
}

fn parse_row(
    record: &csv::StringRecord,
    cols: &Columns,
    line: u64,
) -> Result<ManifestRow, RowError> {
    let file = required(record, cols.file, "file")?;
    check_relative(file).map_err(|d| ("file", d))?;
    let point = required(record, cols.point, "point")?;
    let taken_text = required(record, cols.taken_at, "taken_at")?;
    let taken_at = DateTime::parse_from_rfc3339(taken_text).map_err(|e| {
        (
            "taken_at",
            format!(
                "`{taken_text}` is not an RFC 3339 time with an offset, like \
                 2026-05-14T09:31:00+01:00 ({e})"
            ),
        )
    })?;
    check_taken_at(taken_at, taken_text)?;
    let rpm = positive_number(required(record, cols.rpm, "rpm")?, "rpm")?;
    if rpm > MAX_RPM {
        return Err((
            "rpm",
            format!("{rpm} r/min is above the plausible limit of {MAX_RPM}"),
        ));
    }
    let units = match optional(record, cols.units) {
        None => Units::G,
        Some(t) => Units::parse(t).ok_or((
            "units",
            format!("unknown units `{t}` (expected g, m/s2 or mV)"),
        ))?,
    };
    let sensitivity_mv_per_g = optional(record, cols.sensitivity)
        .map(|t| positive_number(t, "sensitivity"))
        .transpose()?;
    if units == Units::Millivolts && sensitivity_mv_per_g.is_none() {
        return Err((
            "sensitivity",
            "units are mV but no sensitivity (mV/g) is given".to_owned(),
        ));
    }
    let channel = match optional(record, cols.channel) {
        None => 1,
        Some(t) => match t.parse::<u32>() {
            Ok(0) => {
                return Err((
                    "channel",
                    "channels are numbered from 1; 0 is not one".to_owned(),
                ));
            }
            Ok(c) => c,
            Err(_) => {
                return Err((
                    "channel",
                    format!("`{t}` is not a channel number (1, 2, ...)"),
                ));
            }
        },
    };
    let sample_rate_hz = optional(record, cols.sample_rate_hz)
        .map(|t| positive_number(t, "sample_rate_hz"))
        .transpose()?;
    Ok(ManifestRow {
        line: usize::try_from(line).unwrap_or(usize::MAX),
        file: file.replace('\\', "/"),
        point: point.to_owned(),
        taken_at,
        rpm,
        units,
        sensitivity_mv_per_g,
        channel,
        sample_rate_hz,
    })
}

/// A reading time within the plausible range (see [`ManifestRow`]).
fn check_taken_at(taken_at: DateTime<FixedOffset>, text: &str) -> Result<(), RowError> {
    let earliest =
        DateTime::parse_from_rfc3339(EARLIEST_TAKEN_AT).map_or(i64::MIN, |t| t.timestamp());
    let latest = chrono::Utc::now() + chrono::Duration::hours(FUTURE_TOLERANCE_H);
    if taken_at.timestamp() < earliest {
        return Err((
            "taken_at",
            format!("`{text}` is before {EARLIEST_TAKEN_AT}: the collector's clock was not set"),
        ));
    }
    if taken_at > latest {
        return Err((
            "taken_at",
            format!(
                "`{text}` is more than {FUTURE_TOLERANCE_H} h in the future (now is {}): check the collector's clock",
                chrono::Utc::now().format("%Y-%m-%d %H:%M UTC")
            ),
        ));
    }
    Ok(())
}

/// Accepts only a path that stays inside the route folder on any platform.
fn check_relative(file: &str) -> Result<(), String> {
    if file.starts_with('/') || file.starts_with('\\') {
        return Err(format!(
            "`{file}` is an absolute path; give it relative to the route folder"
        ));
    }
    let bytes = file.as_bytes();
    if bytes.len() >= 2 && bytes[0].is_ascii_alphabetic() && bytes[1] == b':' {
        return Err(format!(
            "`{file}` starts with a drive letter; give it relative to the route folder"
        ));
    }
    if file.split(['/', '\\']).any(|part| part == "..") {
        return Err(format!("`{file}` leaves the route folder through `..`"));
    }
    if file.contains('\0') {
        return Err("the path contains a NUL character".to_owned());
    }
    Ok(())
}

/// The folder-relative path with `.` segments, empty segments and the separator style removed, so
/// `./a/b.wav` and `a\b.wav` name the same file when looking for repeats.
fn normalise(file: &str) -> String {
    file.split(['/', '\\'])
        .filter(|p| !p.is_empty() && *p != ".")
        .collect::<Vec<_>>()
        .join("/")
}
