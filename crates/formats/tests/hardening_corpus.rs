//! Replays the fuzz corpora and fuzz regressions (`fuzz/corpus/<target>/`, `fuzz/regressions/<target>/`)
//! through the readers, as CI unit tests: no reader panics, every error names the file, and every
//! recording or manifest row a reader accepts keeps the readers' own promises (channels of equal
//! length, a positive rate, manifest paths that stay inside the route folder).
//!
//! The fuzz targets in `fuzz/fuzz_targets/` apply the same checks; see `fuzz/README.md`.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

use std::path::{Component, Path};

use spallcast_formats::{
    FormatError, MAX_RPM, Recording, clipping_fraction, read_csv_waveform, read_manifest,
    read_recording, read_uff58, read_wav, validate,
};
use spallcast_testkit::corpus::inputs;

fn assert_names_file(err: &FormatError, path: &Path, source: &Path) {
    let message = err.to_string();
    assert!(
        message.contains(&path.display().to_string()),
        "input {}: error does not name the file {}: {message}",
        source.display(),
        path.display()
    );
}

fn check_recording(result: &Result<Recording, FormatError>, path: &Path, source: &Path) {
    match result {
        Err(e) => assert_names_file(e, path, source),
        Ok(rec) => {
            let n = rec.samples_per_channel();
            assert!(
                rec.channels.iter().all(|c| c.len() == n),
                "input {}: ragged channels",
                source.display()
            );
            assert!(
                rec.sample_rate_hz > 0.0,
                "input {}: sample rate {}",
                source.display(),
                rec.sample_rate_hz
            );
            if let Err(e) = validate(rec, path) {
                assert_names_file(&e, path, source);
            }
            for ch in &rec.channels {
                let f = clipping_fraction(ch);
                assert!(
                    (0.0..=1.0).contains(&f),
                    "input {}: clipping fraction {f}",
                    source.display()
                );
            }
        }
    }
}

/// Runs `check` on each input written to a scratch file called `name`; returns (accepted, rejected)
/// counts from `accepted`.
fn replay(target: &str, name: &str, check: impl Fn(&Path, &Path) -> bool) -> (usize, usize) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join(name);
    let (mut ok, mut err) = (0, 0);
    for (source, bytes) in inputs(target) {
        std::fs::write(&path, &bytes).unwrap();
        if check(&path, &source) {
            ok += 1;
        } else {
            err += 1;
        }
    }
    println!("{target}: {ok} inputs accepted, {err} rejected");
    (ok, err)
}

#[test]
fn wav_corpus_and_regressions() {
    let (ok, err) = replay("wav", "input", |path, source| {
        let r = read_wav(path);
        check_recording(&r, path, source);
        check_recording(&read_recording(path, None), path, source);
        r.is_ok()
    });
    // The seeds include valid files and unsupported ones: both paths must be exercised.
    assert!(ok > 0 && err > 0, "accepted {ok}, rejected {err}");
}

#[test]
fn csv_waveform_corpus_and_regressions() {
    let (ok, err) = replay("csv_waveform", "input.csv", |path, source| {
        let r = read_csv_waveform(path, None);
        check_recording(&r, path, source);
        check_recording(&read_csv_waveform(path, Some(25_600.0)), path, source);
        r.is_ok()
    });
    assert!(ok > 0 && err > 0, "accepted {ok}, rejected {err}");
}

#[test]
fn uff58_ascii_corpus_and_regressions() {
    let (ok, err) = replay("uff58_ascii", "input.uff", |path, source| {
        let r = read_uff58(path);
        check_recording(&r, path, source);
        r.is_ok()
    });
    assert!(ok > 0 && err > 0, "accepted {ok}, rejected {err}");
}

#[test]
fn uff58_binary_corpus_and_regressions() {
    let (ok, err) = replay("uff58_binary", "input", |path, source| {
        let r = read_uff58(path);
        check_recording(&r, path, source);
        check_recording(&read_recording(path, None), path, source);
        r.is_ok()
    });
    assert!(ok > 0 && err > 0, "accepted {ok}, rejected {err}");
}

#[test]
fn manifest_corpus_and_regressions() {
    let (ok, err) = replay(
        "manifest",
        "route.csv",
        |path, source| match read_manifest(path) {
            Err(e) => {
                assert_names_file(&e, path, source);
                false
            }
            Ok(rows) => {
                for row in rows {
                    match row {
                        Err(e) => assert_names_file(&e, path, source),
                        Ok(row) => {
                            let inside = Path::new(&row.file)
                                .components()
                                .all(|c| matches!(c, Component::Normal(_) | Component::CurDir));
                            assert!(
                                inside,
                                "input {}: accepted {:?}",
                                source.display(),
                                row.file
                            );
                            assert!(row.rpm > 0.0 && row.rpm <= MAX_RPM, "rpm {}", row.rpm);
                            assert!(row.channel >= 1);
                            assert!(!row.point.is_empty());
                            if let Some(rate) = row.sample_rate_hz {
                                assert!(rate.is_finite() && rate > 0.0, "rate {rate}");
                            }
                        }
                    }
                }
                true
            }
        },
    );
    assert!(ok > 0 && err > 0, "accepted {ok}, rejected {err}");
}
