//! Universal File Format dataset 58 time records, checked against reference files written by pyuff.
//!
//! Reference implementation: pyuff (<https://pypi.org/project/pyuff/>), the open Python reader and
//! writer for Universal File datasets. `tests/golden/uff58/generate_uff58.py` writes the files and
//! `expected.json` (the samples and abscissa increment as pyuff reads them back).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::float_cmp,
    reason = "tests: a panic is a failure, and exact float equality is what is being checked"
)]

use std::path::{Path, PathBuf};

use spallcast_formats::{FormatError, read_recording, read_uff58, validate};

fn golden_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../tests/golden/uff58")
}

fn expected() -> serde_json::Value {
    let text = std::fs::read_to_string(golden_dir().join("expected.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

/// Compares one golden file; `rel_tol` is relative to the channel's peak magnitude.
fn check_golden(name: &str, rate_hz: f64, rel_tol: f64) {
    let all = expected();
    let want = &all["files"][name];
    let path = golden_dir().join(name);
    let rec = read_uff58(&path).unwrap();
    validate(&rec, &path).unwrap();
    let want_channels = want["channels"].as_array().unwrap();
    assert_eq!(
        rec.channels.len(),
        want_channels.len(),
        "{name}: channel count"
    );
    // pyuff's abscissa increment is the 6-digit E13.5 text of record 7; its reciprocal is within
    // 5 ppm of the nominal rate, which the reader snaps to.
    let inc = want["abscissa_inc"][0].as_f64().unwrap();
    assert!(
        ((1.0 / inc) - rate_hz).abs() / rate_hz < 5e-6,
        "{name}: golden increment"
    );
    assert_eq!(rec.sample_rate_hz, rate_hz, "{name}: sample rate");
    for (ch, (got, want)) in rec.channels.iter().zip(want_channels).enumerate() {
        let want: Vec<f64> = want
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_f64().unwrap())
            .collect();
        assert_eq!(got.len(), want.len(), "{name} channel {ch}: length");
        let peak = want.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
        assert!(peak > 0.1, "{name}: golden signal is not trivial");
        for (i, (&g, &w)) in got.iter().zip(&want).enumerate() {
            assert!(
                (f64::from(g) - w).abs() <= rel_tol * peak,
                "{name} channel {ch} sample {i}: {g} vs pyuff {w}"
            );
        }
    }
}

#[test]
fn ascii_single_precision_matches_pyuff() {
    // Values are stored as E13.5 text and held as f32: agreement to f32 rounding (2^-23 relative).
    check_golden("ascii_single.uff", 25_600.0, 2e-7);
}

#[test]
fn ascii_double_two_channels_match_pyuff() {
    check_golden("ascii_double.uff", 48_000.0, 2e-7);
}

#[test]
fn binary_double_two_channels_match_pyuff() {
    check_golden("binary_double.uff", 20_480.0, 2e-7);
}

#[test]
fn read_recording_picks_uff_by_extension_and_by_content() {
    let path = golden_dir().join("ascii_single.uff");
    let by_ext = read_recording(&path, None).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let other = dir.path().join("export.dat");
    std::fs::copy(&path, &other).unwrap();
    assert_eq!(read_recording(&other, None).unwrap(), by_ext);
}

/// Rewrites a pyuff binary double file into single precision (type 2) with the given byte order,
/// to cover the variants pyuff does not write correctly itself.
fn binary_variant(big_endian: bool, single: bool) -> Vec<u8> {
    let path = golden_dir().join("binary_double.uff");
    let bytes = std::fs::read(path).unwrap();
    let mut out = Vec::new();
    let mut pos = 0;
    let mut values_per_set = Vec::new();
    // Walk the two datasets: `-1`, 58b line, 11 header lines, data, `    -1\n`.
    for _ in 0..2 {
        let mut lines = Vec::new();
        for _ in 0..13 {
            let end = pos + bytes[pos..].iter().position(|&b| b == b'\n').unwrap() + 1;
            lines.push(String::from_utf8(bytes[pos..end].to_vec()).unwrap());
            pos = end;
        }
        let n: usize = lines[8].split_whitespace().nth(1).unwrap().parse().unwrap();
        let data: Vec<f64> = bytes[pos..pos + n * 8]
            .chunks_exact(8)
            .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
            .collect();
        pos += n * 8 + "    -1\n".len();
        let width = if single { 4 } else { 8 };
        let order = if big_endian { 2 } else { 1 };
        lines[1] = format!(
            "    58b{order:6}{:6}{:12}{:12}{:6}{:6}{:12}{:12}\n",
            2,
            11,
            n * width,
            0,
            0,
            0,
            0
        );
        if single {
            lines[8] = format!("{:10}{}", 2, &lines[8][10..]);
        }
        for l in &lines {
            out.extend_from_slice(l.as_bytes());
        }
        for v in &data {
            match (single, big_endian) {
                (true, true) => out.extend_from_slice(&(*v as f32).to_be_bytes()),
                (true, false) => out.extend_from_slice(&(*v as f32).to_le_bytes()),
                (false, true) => out.extend_from_slice(&v.to_be_bytes()),
                (false, false) => out.extend_from_slice(&v.to_le_bytes()),
            }
        }
        out.extend_from_slice(b"    -1\n");
        values_per_set.push(data);
    }
    out
}

#[test]
fn binary_single_and_big_endian_variants_read_the_same_values() {
    let reference = read_uff58(&golden_dir().join("binary_double.uff")).unwrap();
    let dir = tempfile::tempdir().unwrap();
    for (big, single) in [(true, false), (false, true), (true, true)] {
        let path = dir.path().join(format!("v_{big}_{single}.uff"));
        std::fs::write(&path, binary_variant(big, single)).unwrap();
        let rec = read_uff58(&path).unwrap();
        assert_eq!(rec, reference, "big endian {big}, single {single}");
    }
}

fn ascii_single_text() -> String {
    std::fs::read_to_string(golden_dir().join("ascii_single.uff")).unwrap()
}

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, bytes).unwrap();
    path
}

fn uff_err(path: &Path) -> String {
    let err = read_uff58(path).unwrap_err();
    assert!(matches!(err, FormatError::Uff { .. }), "{err}");
    let msg = err.to_string();
    assert!(msg.ends_with(&path.display().to_string()), "{msg}");
    msg
}

#[test]
fn huge_claimed_point_count_is_rejected_before_allocating() {
    let dir = tempfile::tempdir().unwrap();
    let text = ascii_single_text().replace(
        "         2      2048         1",
        "         29999999999         1",
    );
    let path = write(dir.path(), "huge.uff", text.as_bytes());
    let msg = uff_err(&path);
    assert!(msg.contains("claims 9999999999 points"), "{msg}");
    assert!(msg.contains("line 9"), "{msg}");
}

#[test]
fn huge_binary_byte_count_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let bytes = std::fs::read(golden_dir().join("binary_double.uff")).unwrap();
    let head = String::from_utf8_lossy(&bytes[..200]).into_owned();
    let line = head.lines().nth(1).unwrap().to_owned();
    let forged = line.replace("        8000", " 99999999999");
    let mut out = bytes.clone();
    let at = bytes
        .windows(line.len())
        .position(|w| w == line.as_bytes())
        .unwrap();
    out.splice(at..at + line.len(), forged.bytes());
    let path = write(dir.path(), "hugebin.uff", &out);
    let msg = uff_err(&path);
    assert!(msg.contains("announces 99999999999 data bytes"), "{msg}");
}

#[test]
fn truncated_binary_file_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let bytes = std::fs::read(golden_dir().join("binary_double.uff")).unwrap();
    let path = write(dir.path(), "cut.uff", &bytes[..bytes.len() - 100]);
    let msg = uff_err(&path);
    assert!(msg.contains("truncated"), "{msg}");
}

#[test]
fn truncated_ascii_file_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let text = ascii_single_text();
    let path = write(dir.path(), "cut.uff", &text.as_bytes()[..text.len() / 2]);
    let msg = uff_err(&path);
    assert!(msg.contains("truncated"), "{msg}");
}

#[test]
fn fewer_values_than_claimed_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let text = ascii_single_text().replace("      2048         1", "      2049         1");
    let path = write(dir.path(), "short.uff", text.as_bytes());
    let msg = uff_err(&path);
    assert!(
        msg.contains("holds 2048 values but its header claims 2049"),
        "{msg}"
    );
}

#[test]
fn non_number_in_data_is_rejected_with_its_line() {
    let dir = tempfile::tempdir().unwrap();
    let mut lines: Vec<String> = ascii_single_text().lines().map(str::to_owned).collect();
    lines[20] = lines[20].replacen('e', "x", 1);
    let path = write(dir.path(), "nan.uff", lines.join("\n").as_bytes());
    let msg = uff_err(&path);
    assert!(msg.contains("line 21"), "{msg}");
    assert!(msg.contains("is not a number"), "{msg}");
}

#[test]
fn non_time_function_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    // Function type 4 is a frequency response function.
    let text = ascii_single_text().replacen("\n    1         0", "\n    4         0", 1);
    let path = write(dir.path(), "frf.uff", text.as_bytes());
    let msg = uff_err(&path);
    assert!(
        msg.contains("function type 4 is not a time response"),
        "{msg}"
    );
}

#[test]
fn complex_and_uneven_records_are_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let complex = ascii_single_text().replace("         2      2048", "         5      2048");
    let msg = uff_err(&write(dir.path(), "c.uff", complex.as_bytes()));
    assert!(msg.contains("complex"), "{msg}");
    let uneven = ascii_single_text().replace("      2048         1", "      2048         0");
    let msg = uff_err(&write(dir.path(), "u.uff", uneven.as_bytes()));
    assert!(msg.contains("uneven"), "{msg}");
}

#[test]
fn datasets_of_different_rates_are_rejected_as_channels() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = ascii_single_text();
    text.push_str(&std::fs::read_to_string(golden_dir().join("ascii_double.uff")).unwrap());
    let msg = uff_err(&write(dir.path(), "mixed.uff", text.as_bytes()));
    assert!(msg.contains("channels in one file must match"), "{msg}");
}

#[test]
fn other_datasets_are_skipped() {
    let dir = tempfile::tempdir().unwrap();
    // A dataset 164 (units) ahead of the time record; its content is irrelevant to us.
    let mut text = String::from(
        "    -1\n   164\n         1SI - mks (Newton)     2\n    1.00000000000000000e+00    1.00000000000000000e+00    1.00000000000000000e+00\n    2.73150000000000000e+02\n    -1\n",
    );
    text.push_str(&ascii_single_text());
    let path = write(dir.path(), "units.uff", text.as_bytes());
    let with_units = read_uff58(&path).unwrap();
    assert_eq!(
        with_units,
        read_uff58(&golden_dir().join("ascii_single.uff")).unwrap()
    );
}

#[test]
fn file_without_time_records_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let msg = uff_err(&write(
        dir.path(),
        "none.uff",
        b"    -1\n   151\nmodel\n    -1\n",
    ));
    assert!(msg.contains("no dataset 58"), "{msg}");
    let msg = uff_err(&write(dir.path(), "junk.uff", b"hello\n"));
    assert!(msg.contains("delimiter"), "{msg}");
}

#[test]
fn binary_point_count_beyond_announced_bytes_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let bytes = std::fs::read(golden_dir().join("binary_double.uff")).unwrap();
    let line = "         4      1000         1";
    let forged = "         4      1001         1";
    let at = bytes
        .windows(line.len())
        .position(|w| w == line.as_bytes())
        .unwrap();
    let mut out = bytes.clone();
    out.splice(at..at + line.len(), forged.bytes());
    let msg = uff_err(&write(dir.path(), "over.uff", &out));
    assert!(
        msg.contains("claims 1001 points of 8 bytes but announces only 8000"),
        "{msg}"
    );
    assert!(msg.contains("line 9"), "{msg}");
}
