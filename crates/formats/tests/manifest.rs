//! Route manifest (`route.csv`, RFC 4180) parsing: the happy path and one test per bad-row kind.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::float_cmp,
    reason = "tests: a panic is a failure, and exact float equality is what is being checked"
)]

use std::path::{Path, PathBuf};

use spallcast_formats::{FormatError, ManifestRow, Units, read_manifest};

fn manifest(dir: &Path, text: &str) -> PathBuf {
    let path = dir.join("route.csv");
    std::fs::write(&path, text).unwrap();
    path
}

fn rows(text: &str) -> Vec<Result<ManifestRow, FormatError>> {
    let dir = tempfile::tempdir().unwrap();
    read_manifest(&manifest(dir.path(), text)).unwrap()
}

/// The single row of `text` must be rejected on `column` with a message containing `needle`.
fn bad_row(text: &str, column: &str, needle: &str) {
    let dir = tempfile::tempdir().unwrap();
    let path = manifest(dir.path(), text);
    let rows = read_manifest(&path).unwrap();
    let err = rows.into_iter().find_map(Result::err).expect("a row error");
    let msg = err.to_string();
    match &err {
        FormatError::ManifestRow {
            line, column: c, ..
        } => {
            assert_eq!(c, column, "{msg}");
            assert!(*line >= 2, "{msg}");
        }
        other => panic!("expected a row error, got {other}"),
    }
    assert!(msg.contains(needle), "{msg}");
    assert!(msg.contains(&format!("column `{column}`")), "{msg}");
    assert!(msg.ends_with(&path.display().to_string()), "{msg}");
}

const HEAD: &str = "file,point,taken_at,rpm\n";

#[test]
fn happy_path_with_optional_columns_in_any_order() {
    let text = "\u{feff}rpm,units,file,sensitivity,point,channel,taken_at,sample_rate_hz,note\n\
        1480,g,a/p1.wav,,IN-P1-MNDE-H,,2026-05-14T09:31:00+01:00,,first\n\
        1480.5,mV,\"b,2.csv\",100,IN-P1-MNDE-V,2,2026-05-14T09:32:10-05:30,25600,\"quoted, note\"\n\
        \n\
        990,m/s2,c.uff,,FN-2-A,,2026-05-14T10:00:00Z,,\n";
    let rows: Vec<ManifestRow> = rows(text).into_iter().map(Result::unwrap).collect();
    assert_eq!(rows.len(), 3);
    let a = &rows[0];
    assert_eq!(
        (
            a.line,
            a.file.as_str(),
            a.point.as_str(),
            a.rpm,
            a.units,
            a.channel
        ),
        (2, "a/p1.wav", "IN-P1-MNDE-H", 1480.0, Units::G, 1)
    );
    assert_eq!(a.taken_at.to_rfc3339(), "2026-05-14T09:31:00+01:00");
    assert_eq!((a.sensitivity_mv_per_g, a.sample_rate_hz), (None, None));
    let b = &rows[1];
    assert_eq!(b.file, "b,2.csv");
    assert_eq!(b.units, Units::Millivolts);
    assert_eq!(b.sensitivity_mv_per_g, Some(100.0));
    assert_eq!(b.channel, 2);
    assert_eq!(b.sample_rate_hz, Some(25_600.0));
    assert_eq!(b.taken_at.offset().local_minus_utc(), -(5 * 3600 + 30 * 60));
    let c = &rows[2];
    assert_eq!(c.line, 5, "blank line 4 still counts");
    assert_eq!(c.units, Units::MetresPerSecond2);
    assert_eq!(c.taken_at.offset().local_minus_utc(), 0);
}

#[test]
fn good_rows_survive_next_to_bad_ones() {
    let text = format!(
        "{HEAD}a.wav,P1,2026-05-14T09:31:00+01:00,1480\nb.wav,P2,yesterday,1480\nc.wav,P3,2026-05-14T09:33:00+01:00,1480\n"
    );
    let rows = rows(&text);
    assert_eq!(rows.len(), 3);
    assert!(rows[0].is_ok() && rows[2].is_ok());
    let msg = rows[1].as_ref().unwrap_err().to_string();
    assert!(msg.contains("line 3"), "{msg}");
}

#[test]
fn timestamp_without_offset_is_a_row_error() {
    bad_row(
        &format!("{HEAD}a.wav,P1,2026-05-14T09:31:00,1480\n"),
        "taken_at",
        "RFC 3339",
    );
}

#[test]
fn unparsable_timestamp_is_a_row_error() {
    bad_row(
        &format!("{HEAD}a.wav,P1,14/05/2026 09:31,1480\n"),
        "taken_at",
        "14/05/2026",
    );
}

#[test]
fn zero_and_negative_rpm_are_row_errors() {
    bad_row(
        &format!("{HEAD}a.wav,P1,2026-05-14T09:31:00Z,0\n"),
        "rpm",
        "above 0",
    );
    bad_row(
        &format!("{HEAD}a.wav,P1,2026-05-14T09:31:00Z,-1480\n"),
        "rpm",
        "above 0",
    );
    bad_row(
        &format!("{HEAD}a.wav,P1,2026-05-14T09:31:00Z,fast\n"),
        "rpm",
        "not a number",
    );
    bad_row(
        &format!("{HEAD}a.wav,P1,2026-05-14T09:31:00Z,NaN\n"),
        "rpm",
        "above 0",
    );
}

#[test]
fn absurd_rpm_is_a_row_error() {
    bad_row(
        &format!("{HEAD}a.wav,P1,2026-05-14T09:31:00Z,1480000\n"),
        "rpm",
        "plausible",
    );
}

#[test]
fn unknown_units_are_a_row_error() {
    bad_row(
        "file,point,taken_at,rpm,units\na.wav,P1,2026-05-14T09:31:00Z,1480,in/s\n",
        "units",
        "unknown units `in/s`",
    );
}

#[test]
fn millivolts_without_sensitivity_is_a_row_error() {
    bad_row(
        "file,point,taken_at,rpm,units\na.wav,P1,2026-05-14T09:31:00Z,1480,mV\n",
        "sensitivity",
        "no sensitivity",
    );
    bad_row(
        "file,point,taken_at,rpm,units,sensitivity\na.wav,P1,2026-05-14T09:31:00Z,1480,mV,-5\n",
        "sensitivity",
        "above 0",
    );
}

#[test]
fn channel_zero_is_a_row_error() {
    bad_row(
        "file,point,taken_at,rpm,channel\na.wav,P1,2026-05-14T09:31:00Z,1480,0\n",
        "channel",
        "numbered from 1",
    );
    bad_row(
        "file,point,taken_at,rpm,channel\na.wav,P1,2026-05-14T09:31:00Z,1480,-2\n",
        "channel",
        "not a channel number",
    );
}

#[test]
fn absolute_paths_are_row_errors() {
    bad_row(
        &format!("{HEAD}/etc/passwd,P1,2026-05-14T09:31:00Z,1480\n"),
        "file",
        "absolute",
    );
    bad_row(
        &format!("{HEAD}\\\\server\\x.wav,P1,2026-05-14T09:31:00Z,1480\n"),
        "file",
        "absolute",
    );
    bad_row(
        &format!("{HEAD}C:\\data\\x.wav,P1,2026-05-14T09:31:00Z,1480\n"),
        "file",
        "drive letter",
    );
}

#[test]
fn paths_escaping_the_folder_are_row_errors() {
    bad_row(
        &format!("{HEAD}../x.wav,P1,2026-05-14T09:31:00Z,1480\n"),
        "file",
        "`..`",
    );
    bad_row(
        &format!("{HEAD}a/../../x.wav,P1,2026-05-14T09:31:00Z,1480\n"),
        "file",
        "`..`",
    );
    bad_row(
        &format!("{HEAD}a\\..\\..\\x.wav,P1,2026-05-14T09:31:00Z,1480\n"),
        "file",
        "`..`",
    );
}

#[test]
fn empty_required_fields_are_row_errors() {
    bad_row(
        &format!("{HEAD},P1,2026-05-14T09:31:00Z,1480\n"),
        "file",
        "empty",
    );
    bad_row(
        &format!("{HEAD}a.wav,  ,2026-05-14T09:31:00Z,1480\n"),
        "point",
        "empty",
    );
    bad_row(&format!("{HEAD}a.wav,P1,,1480\n"), "taken_at", "empty");
    bad_row(
        &format!("{HEAD}a.wav,P1,2026-05-14T09:31:00Z,\n"),
        "rpm",
        "empty",
    );
}

#[test]
fn bad_sample_rate_is_a_row_error() {
    bad_row(
        "file,point,taken_at,rpm,sample_rate_hz\na.csv,P1,2026-05-14T09:31:00Z,1480,0\n",
        "sample_rate_hz",
        "above 0",
    );
}

#[test]
fn duplicate_file_point_channel_is_a_row_error_on_the_later_row() {
    let text = format!(
        "{HEAD}a.wav,P1,2026-05-14T09:31:00Z,1480\na.wav,P2,2026-05-14T09:31:00Z,1480\na.wav,P1,2026-05-14T09:35:00Z,1480\n"
    );
    let rows = rows(&text);
    assert!(rows[0].is_ok() && rows[1].is_ok());
    let msg = rows[2].as_ref().unwrap_err().to_string();
    assert!(msg.contains("line 4"), "{msg}");
    assert!(msg.contains("already listed on line 2"), "{msg}");
}

#[test]
fn duplicates_are_found_through_path_spelling() {
    let text = format!(
        "{HEAD}d/a.wav,P1,2026-05-14T09:31:00Z,1480\n./d\\a.wav,P1,2026-05-14T09:31:00Z,1480\n"
    );
    let rows = rows(&text);
    let msg = rows[1].as_ref().unwrap_err().to_string();
    assert!(msg.contains("already listed on line 2"), "{msg}");
}

#[test]
fn row_with_wrong_field_count_is_a_row_error() {
    let text = format!("{HEAD}a.wav,P1,2026-05-14T09:31:00Z\nb.wav,P2,2026-05-14T09:31:00Z,1480\n");
    let rows = rows(&text);
    assert!(rows[0].is_err());
    assert!(rows[1].is_ok());
}

#[test]
fn missing_required_column_is_an_outer_error() {
    let dir = tempfile::tempdir().unwrap();
    let path = manifest(dir.path(), "file,point,rpm\na.wav,P1,1480\n");
    let err = read_manifest(&path).unwrap_err();
    assert!(matches!(err, FormatError::Manifest { .. }), "{err}");
    let msg = err.to_string();
    assert!(msg.contains("taken_at"), "{msg}");
    assert!(msg.ends_with("route.csv"), "{msg}");
}

#[test]
fn missing_empty_or_repeated_header_manifests_are_outer_errors() {
    let dir = tempfile::tempdir().unwrap();
    let absent = dir.path().join("nothing.csv");
    assert!(matches!(
        read_manifest(&absent),
        Err(FormatError::Io { .. })
    ));
    let empty = manifest(dir.path(), "");
    assert!(matches!(
        read_manifest(&empty),
        Err(FormatError::Manifest { .. })
    ));
    let twice = manifest(dir.path(), "file,point,taken_at,rpm,rpm\n");
    let msg = read_manifest(&twice).unwrap_err().to_string();
    assert!(msg.contains("twice"), "{msg}");
    let binary = dir.path().join("bin.csv");
    std::fs::write(&binary, [0xff, 0xfe, 0x00, b'\n', 0xc3]).unwrap();
    assert!(read_manifest(&binary).is_err());
}

#[cfg(unix)]
#[test]
fn endless_input_is_refused_at_the_size_cap() {
    let zero = Path::new("/dev/zero");
    if !zero.exists() {
        eprintln!("SKIP: /dev/zero is absent");
        return;
    }
    let err = read_manifest(zero).unwrap_err();
    assert!(matches!(err, FormatError::TooLarge { .. }), "{err}");
    assert!(err.to_string().ends_with("/dev/zero"), "{err}");
}
