//! CSV waveforms: the documented layout, rate from comment or manifest hint, and reject reasons.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::float_cmp,
    reason = "tests: a panic is a failure, and exact float equality is what is being checked"
)]

use std::path::{Path, PathBuf};

use spallcast_formats::{FormatError, read_csv_waveform, read_recording};

fn file(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).unwrap();
    path
}

fn csv_err(path: &Path, hint: Option<f64>) -> String {
    let err = read_csv_waveform(path, hint).unwrap_err();
    assert!(matches!(err, FormatError::CsvWaveform { .. }), "{err}");
    let msg = err.to_string();
    assert!(msg.ends_with(&path.display().to_string()), "{msg}");
    msg
}

#[test]
fn rate_from_comment_and_values_as_stored() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(
        dir.path(),
        "w.csv",
        "# exported by the route simulator\n# sample_rate_hz = 25600\n0.5\n-1.25\n\n 3e-3 \n",
    );
    let rec = read_csv_waveform(&path, None).unwrap();
    assert_eq!(rec.sample_rate_hz, 25_600.0);
    assert_eq!(rec.channels, vec![vec![0.5, -1.25, 0.003]]);
    // The matching manifest hint is accepted too.
    assert_eq!(read_csv_waveform(&path, Some(25_600.0)).unwrap(), rec);
}

#[test]
fn rate_from_manifest_hint_and_columns_as_channels() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(dir.path(), "w.txt", "1,2\r\n3,4\r\n5,6\r\n");
    let rec = read_recording(&path, Some(10_240.0)).unwrap();
    assert_eq!(rec.sample_rate_hz, 10_240.0);
    assert_eq!(rec.channels, vec![vec![1.0, 3.0, 5.0], vec![2.0, 4.0, 6.0]]);
}

#[test]
fn non_number_is_rejected_with_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(
        dir.path(),
        "w.csv",
        "# sample_rate_hz=1000\n0.1\n0.2\nspike\n0.3\n",
    );
    let msg = csv_err(&path, None);
    assert!(msg.contains("line 4"), "{msg}");
    assert!(msg.contains("`spike` is not a number"), "{msg}");
}

#[test]
fn a_column_header_row_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(dir.path(), "w.csv", "accel_g\n0.1\n");
    let msg = csv_err(&path, Some(1000.0));
    assert!(msg.contains("line 1"), "{msg}");
}

#[test]
fn missing_rate_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(dir.path(), "w.csv", "0.1\n0.2\n");
    let msg = csv_err(&path, None);
    assert!(msg.contains("no sample rate"), "{msg}");
}

#[test]
fn conflicting_rates_are_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(dir.path(), "w.csv", "# sample_rate_hz=25600\n0.1\n");
    let msg = csv_err(&path, Some(12_800.0));
    assert!(msg.contains("must agree"), "{msg}");
    let path = file(
        dir.path(),
        "x.csv",
        "# sample_rate_hz=25600\n# sample_rate_hz=1000\n0.1\n",
    );
    let msg = csv_err(&path, None);
    assert!(msg.contains("line 2"), "{msg}");
}

#[test]
fn bad_rate_values_are_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(dir.path(), "w.csv", "# sample_rate_hz=0\n0.1\n");
    assert!(csv_err(&path, None).contains("above 0"));
    let path = file(dir.path(), "x.csv", "# sample_rate_hz=fast\n0.1\n");
    assert!(csv_err(&path, None).contains("not a number"));
    let path = file(dir.path(), "y.csv", "0.1\n");
    assert!(csv_err(&path, Some(-5.0)).contains("not a positive number"));
}

#[test]
fn ragged_columns_are_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(dir.path(), "w.csv", "1,2\n3\n");
    let msg = csv_err(&path, Some(1000.0));
    assert!(msg.contains("line 2"), "{msg}");
    assert!(
        msg.contains("1 columns where earlier lines have 2"),
        "{msg}"
    );
}

#[test]
fn unknown_extension_without_recognisable_content_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(dir.path(), "w.bin", "0.1\n0.2\n");
    let err = read_recording(&path, Some(1000.0)).unwrap_err();
    assert!(matches!(err, FormatError::UnknownFormat { .. }), "{err}");
    assert!(err.to_string().ends_with("w.bin"), "{err}");
}

#[test]
fn line_numbers_count_blank_and_comment_lines() {
    let dir = tempfile::tempdir().unwrap();
    let path = file(
        dir.path(),
        "w.csv",
        "# sample_rate_hz=1000\n\n0.1\n# note\n\n\r\n1..2\n",
    );
    let msg = csv_err(&path, None);
    assert!(msg.contains("line 7"), "{msg}");
}

#[test]
fn values_beyond_f32_range_fail_validation_not_reading() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::from("# sample_rate_hz=1000\n");
    for _ in 0..300 {
        text.push_str("0.1\n");
    }
    text.push_str("1e60\n");
    let path = file(dir.path(), "w.csv", &text);
    let rec = read_csv_waveform(&path, None).unwrap();
    let err = spallcast_formats::validate(&rec, &path).unwrap_err();
    assert!(
        err.to_string()
            .contains("sample 300 is not a finite number"),
        "{err}"
    );
}
