//! Universal File Format dataset 58 (function at nodal degree of freedom), ASCII and binary (`58b`).
//!
//! A Universal File is a sequence of datasets, each opened and closed by a line holding `-1`. The line
//! after the opening delimiter gives the dataset number (`58`, or `58b` plus a binary-layout header).
//! Dataset 58 has eleven header records (five ID lines; record 6 with the function type; record 7 with
//! ordinate data type, point count, abscissa spacing, minimum and increment; records 8–11 with axis
//! descriptions) followed by the data: ASCII numbers, or in `58b` a block of the announced byte count.
//! Datasets of other numbers are skipped.

use std::path::Path;

use crate::{FormatError, Recording};

/// Function type code for a time response (record 6, field 1).
const FUNCTION_TIME_RESPONSE: i64 = 1;
/// Abscissa specific data type meaning "time" (record 8, field 1); 0 means unknown.
const ABSCISSA_TIME: i64 = 17;
/// Header records (ASCII lines) of a dataset 58.
const HEADER_LINES: usize = 11;
/// Record 7 prints the abscissa increment with 6 significant digits (E13.5), so 1/increment is only
/// good to about 5 parts in 10⁶; a rate that close to a whole number of Hz is snapped to it.
const RATE_SNAP_RELATIVE: f64 = 5e-6;

struct Lines<'a> {
    data: &'a [u8],
    pos: usize,
    line: u64,
}

impl<'a> Lines<'a> {
    /// Next line without its line ending, or `None` at the end of the data.
    fn next_line(&mut self) -> Option<&'a [u8]> {
        if self.pos >= self.data.len() {
            return None;
        }
        let rest = &self.data[self.pos..];
        let end = rest.iter().position(|&b| b == b'\n');
        let (line, advance) = match end {
            Some(e) => (&rest[..e], e + 1),
            None => (rest, rest.len()),
        };
        self.pos += advance;
        self.line += 1;
        Some(line.strip_suffix(b"\r").unwrap_or(line))
    }

    fn remaining(&self) -> usize {
        self.data.len().saturating_sub(self.pos)
    }
}

fn text(line: &[u8]) -> String {
    String::from_utf8_lossy(line).into_owned()
}

fn is_delimiter(line: &[u8]) -> bool {
    text(line).trim() == "-1"
}

/// One dataset-58 time record, before the checks across datasets.
struct TimeRecord {
    line: u64,
    samples: Vec<f32>,
    sample_rate_hz: f64,
}

struct Header {
    /// Line of record 7, which holds the point count.
    record7_line: u64,
    ord_data_type: i64,
    points: u64,
    sample_rate_hz: f64,
}

struct Parser<'p> {
    path: &'p Path,
}

impl Parser<'_> {
    fn err(&self, line: Option<u64>, detail: impl Into<String>) -> FormatError {
        FormatError::Uff {
            path: self.path.to_owned(),
            line,
            detail: detail.into(),
        }
    }

    fn parse_file(&self, data: &[u8]) -> Result<Vec<TimeRecord>, FormatError> {
        let mut lines = Lines {
            data,
            pos: 0,
            line: 0,
        };
        let mut records = Vec::new();
        while let Some(line) = lines.next_line() {
            if text(line).trim().is_empty() {
                continue;
            }
            if !is_delimiter(line) {
                return Err(self.err(
                    Some(lines.line),
                    format!(
                        "expected a `-1` dataset delimiter, found `{}`",
                        text(line).trim()
                    ),
                ));
            }
            let Some(kind_line) = lines.next_line() else {
                return Err(self.err(
                    Some(lines.line),
                    "the file ends right after a `-1` delimiter",
                ));
            };
            let kind_text = text(kind_line);
            let tokens: Vec<&str> = kind_text.split_whitespace().collect();
            match tokens.first().copied() {
                Some("58") => records.push(self.ascii58(&mut lines)?),
                Some("58b") => records.push(self.binary58(&mut lines, &tokens)?),
                Some(other) => self.skip_dataset(&mut lines, other)?,
                None => {
                    return Err(self.err(
                        Some(lines.line),
                        "expected a dataset number after the `-1` delimiter, found a blank line",
                    ));
                }
            }
        }
        Ok(records)
    }

    fn skip_dataset(&self, lines: &mut Lines<'_>, kind: &str) -> Result<(), FormatError> {
        let start = lines.line;
        while let Some(line) = lines.next_line() {
            if is_delimiter(line) {
                return Ok(());
            }
        }
        Err(self.err(
            Some(start),
            format!("dataset {kind} has no closing `-1` delimiter (truncated file)"),
        ))
    }

    fn header(&self, lines: &mut Lines<'_>, count: usize) -> Result<Header, FormatError> {
        let start = lines.line + 1;
        let mut header_lines = Vec::with_capacity(HEADER_LINES);
        for _ in 0..count.max(HEADER_LINES) {
            let Some(line) = lines.next_line() else {
                return Err(self.err(
                    Some(start),
                    "the file ends inside the dataset 58 header (truncated)",
                ));
            };
            if header_lines.len() < HEADER_LINES {
                header_lines.push((lines.line, text(line)));
            }
        }
        let (r6_line, r6) = &header_lines[5];
        let function_type = fixed_or_token_int(r6, 0, 5, 0)
            .ok_or_else(|| self.err(Some(*r6_line), "record 6 has no function type"))?;
        if function_type != FUNCTION_TIME_RESPONSE {
            return Err(self.err(
                Some(*r6_line),
                format!(
                    "function type {function_type} is not a time response (type 1); only time \
                     records can be imported"
                ),
            ));
        }
        let (record7_line, r7) = &header_lines[6];
        let record7_line = *record7_line;
        let r7_line = Some(record7_line);
        let fields = record7(r7).ok_or_else(|| {
            self.err(
                r7_line,
                format!("record 7 is not `data type, points, spacing, min, increment, z`: `{r7}`"),
            )
        })?;
        let [ord_data_type, points, spacing] = fields.ints;
        let increment = fields.increment;
        match ord_data_type {
            2 | 4 => {}
            5 | 6 => {
                return Err(self.err(
                    r7_line,
                    format!("ordinate data type {ord_data_type} is complex; a time record is real"),
                ));
            }
            other => {
                return Err(self.err(
                    r7_line,
                    format!(
                        "ordinate data type {other} is not real single (2) or real double (4) \
                         precision"
                    ),
                ));
            }
        }
        if spacing != 1 {
            return Err(self.err(
                r7_line,
                "the abscissa spacing is uneven; only evenly sampled time records are read",
            ));
        }
        let Ok(points) = u64::try_from(points) else {
            return Err(self.err(r7_line, format!("negative point count {points}")));
        };
        if !(increment.is_finite() && increment > 0.0) {
            return Err(self.err(
                r7_line,
                format!("abscissa increment {increment} s is not a positive time step"),
            ));
        }
        let (r8_line, r8) = &header_lines[7];
        if let Some(kind) = fixed_or_token_int(r8, 0, 10, 0)
            && kind != 0
            && kind != ABSCISSA_TIME
        {
            return Err(self.err(
                Some(*r8_line),
                format!("the abscissa data type is {kind}, not time (17)"),
            ));
        }
        Ok(Header {
            record7_line,
            ord_data_type,
            points,
            sample_rate_hz: rate_from_increment(increment),
        })
    }

    fn ascii58(&self, lines: &mut Lines<'_>) -> Result<TimeRecord, FormatError> {
        let start = lines.line;
        let header = self.header(lines, HEADER_LINES)?;
        // Each ASCII value takes at least two bytes (a digit and a separator).
        let possible = (lines.remaining() / 2) as u64;
        if header.points > possible {
            return Err(self.err(
                Some(header.record7_line),
                format!(
                    "the header claims {} points but only {} bytes of data follow (truncated or \
                     corrupt)",
                    header.points,
                    lines.remaining()
                ),
            ));
        }
        let wanted = usize::try_from(header.points).unwrap_or(usize::MAX);
        let mut samples = Vec::with_capacity(wanted);
        loop {
            let Some(line) = lines.next_line() else {
                return Err(self.err(
                    Some(start),
                    format!(
                        "the file ends after {} of {} points, with no closing `-1` (truncated)",
                        samples.len(),
                        header.points
                    ),
                ));
            };
            if is_delimiter(line) {
                break;
            }
            let line_text = text(line);
            for token in line_text.split_whitespace() {
                let value = parse_real(token).ok_or_else(|| {
                    self.err(Some(lines.line), format!("`{token}` is not a number"))
                })?;
                if samples.len() == wanted {
                    return Err(self.err(
                        Some(lines.line),
                        format!("more values than the {wanted} points the header claims"),
                    ));
                }
                samples.push(value as f32);
            }
        }
        if samples.len() != wanted {
            return Err(self.err(
                Some(lines.line),
                format!(
                    "the dataset holds {} values but its header claims {wanted} points",
                    samples.len()
                ),
            ));
        }
        Ok(TimeRecord {
            line: start,
            samples,
            sample_rate_hz: header.sample_rate_hz,
        })
    }

    fn binary58(&self, lines: &mut Lines<'_>, tokens: &[&str]) -> Result<TimeRecord, FormatError> {
        let start = lines.line;
        let field = |i: usize, name: &str| -> Result<i64, FormatError> {
            tokens
                .get(i)
                .and_then(|t| t.parse::<i64>().ok())
                .ok_or_else(|| self.err(Some(start), format!("the 58b line lacks its {name}")))
        };
        let byte_order = field(1, "byte order")?;
        let float_format = field(2, "floating-point format")?;
        let ascii_lines = field(3, "count of ASCII header lines")?;
        let data_bytes = field(4, "byte count")?;
        let little_endian = match byte_order {
            1 => true,
            2 => false,
            other => {
                return Err(self.err(
                    Some(start),
                    format!("byte order {other} is neither 1 (little endian) nor 2 (big endian)"),
                ));
            }
        };
        if float_format != 2 {
            return Err(self.err(
                Some(start),
                format!("floating-point format {float_format} is not IEEE 754 (2)"),
            ));
        }
        let Ok(ascii_lines) = usize::try_from(ascii_lines) else {
            return Err(self.err(Some(start), "negative count of ASCII header lines"));
        };
        if !(HEADER_LINES..=1000).contains(&ascii_lines) {
            return Err(self.err(
                Some(start),
                format!("{ascii_lines} ASCII header lines; dataset 58 has {HEADER_LINES}"),
            ));
        }
        let header = self.header(lines, ascii_lines)?;
        let Ok(data_bytes) = usize::try_from(data_bytes) else {
            return Err(self.err(Some(start), format!("negative byte count {data_bytes}")));
        };
        if data_bytes > lines.remaining() {
            return Err(self.err(
                Some(start),
                format!(
                    "the header announces {data_bytes} data bytes but only {} remain (truncated)",
                    lines.remaining()
                ),
            ));
        }
        let width: usize = if header.ord_data_type == 2 { 4 } else { 8 };
        let needed = usize::try_from(header.points)
            .ok()
            .and_then(|p| p.checked_mul(width));
        let Some(needed) = needed.filter(|&n| n <= data_bytes) else {
            return Err(self.err(
                Some(header.record7_line),
                format!(
                    "the header claims {} points of {width} bytes but announces only {data_bytes} \
                     data bytes",
                    header.points
                ),
            ));
        };
        let block = &lines.data[lines.pos..lines.pos + data_bytes];
        let samples: Vec<f32> = block[..needed]
            .chunks_exact(width)
            .map(|c| decode(c, little_endian))
            .collect();
        lines.pos += data_bytes;
        lines.line += block.split(|&b| b == b'\n').count() as u64 - 1;
        loop {
            match lines.next_line() {
                Some(l) if text(l).trim().is_empty() => {}
                Some(l) if is_delimiter(l) => break,
                _ => {
                    return Err(self.err(
                        Some(start),
                        "no closing `-1` after the binary data block (byte count wrong or file \
                         truncated)",
                    ));
                }
            }
        }
        Ok(TimeRecord {
            line: start,
            samples,
            sample_rate_hz: header.sample_rate_hz,
        })
    }
}

fn decode(bytes: &[u8], little_endian: bool) -> f32 {
    if let Ok(b) = <[u8; 4]>::try_from(bytes) {
        if little_endian {
            f32::from_le_bytes(b)
        } else {
            f32::from_be_bytes(b)
        }
    } else {
        let mut b = [0u8; 8];
        b.copy_from_slice(bytes.get(..8).unwrap_or(&[0; 8]));
        (if little_endian {
            f64::from_le_bytes(b)
        } else {
            f64::from_be_bytes(b)
        }) as f32
    }
}

/// Parses a Fortran real (`E` or `D` exponent).
fn parse_real(token: &str) -> Option<f64> {
    if token.contains(['D', 'd']) {
        token.replace(['D', 'd'], "e").parse().ok()
    } else {
        token.parse().ok()
    }
}

/// An integer from fixed columns `from..to`, else the `index`-th whitespace token.
fn fixed_or_token_int(line: &str, from: usize, to: usize, index: usize) -> Option<i64> {
    line.get(from..to.min(line.len()))
        .and_then(|s| s.trim().parse().ok())
        .or_else(|| line.split_whitespace().nth(index)?.parse().ok())
}

struct Record7 {
    ints: [i64; 3],
    increment: f64,
}

/// Record 7, format (3I10,3E13.5): fixed columns first, whitespace tokens as a fallback.
fn record7(line: &str) -> Option<Record7> {
    let fixed = || -> Option<Record7> {
        let int = |a: usize, b: usize| line.get(a..b)?.trim().parse::<i64>().ok();
        Some(Record7 {
            ints: [int(0, 10)?, int(10, 20)?, int(20, 30)?],
            increment: parse_real(line.get(43..56)?.trim())?,
        })
    };
    fixed().or_else(|| {
        let t: Vec<&str> = line.split_whitespace().collect();
        Some(Record7 {
            ints: [
                t.first()?.parse().ok()?,
                t.get(1)?.parse().ok()?,
                t.get(2)?.parse().ok()?,
            ],
            increment: parse_real(t.get(4)?)?,
        })
    })
}

fn rate_from_increment(increment: f64) -> f64 {
    let rate = 1.0 / increment;
    let whole = rate.round();
    if (rate - whole).abs() <= rate * RATE_SNAP_RELATIVE {
        whole
    } else {
        rate
    }
}

/// Reads the time records of a Universal File: dataset 58 in ASCII or binary (`58b`) form.
///
/// Each dataset 58 must be a time response (function type 1) with real single- (2) or double- (4)
/// precision ordinates and even abscissa spacing; the abscissa increment, in seconds, gives the sample
/// rate (its reciprocal; snapped to a whole number of Hz when within the 6-digit precision record 7
/// is printed with). Binary data may be little or big endian IEEE 754. Every dataset 58 in the file
/// becomes one channel, in file order; all must have the same point count and sample rate. Datasets
/// of other numbers (units, header, geometry) are skipped. Values are returned as stored.
///
/// Point and byte counts claimed by a header are checked against the bytes that actually follow
/// before anything is allocated for them.
pub fn read_uff58(path: &Path) -> Result<Recording, FormatError> {
    let data = crate::read_capped(path, crate::MAX_FILE_BYTES)?;
    let parser = Parser { path };
    let records = parser.parse_file(&data)?;
    let Some(first) = records.first() else {
        return Err(parser.err(None, "the file holds no dataset 58 time record"));
    };
    let (len, rate) = (first.samples.len(), first.sample_rate_hz);
    for (i, r) in records.iter().enumerate().skip(1) {
        if r.samples.len() != len || (r.sample_rate_hz - rate).abs() > 1e-9 * rate {
            return Err(parser.err(
                Some(r.line),
                format!(
                    "dataset 58 number {} has {} points at {} Hz but the first has {len} points at \
                     {rate} Hz; channels in one file must match",
                    i + 1,
                    r.samples.len(),
                    r.sample_rate_hz
                ),
            ));
        }
    }
    Ok(Recording {
        channels: records.into_iter().map(|r| r.samples).collect(),
        sample_rate_hz: rate,
    })
}
