//! Hostile and odd route folders against the store's import: every bad file is rejected with a
//! reason naming it, the good readings around it still import, nothing is half written, and the
//! database stays sound (`PRAGMA integrity_check`). Hostile plant files and databases are in
//! `hardening_hostile_plant.rs`.
//!
//! Reader-level checks of the same inputs live in the formats crate's own tests (see the hardening
//! report); these tests check what the import does with them.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

mod common;

use std::collections::BTreeMap;
use std::fmt::Write as _;

use common::hostile::{
    Fixture, RmsAnalyzer, TAKEN, assert_sound, fixture, float32, import, pcm16, reason, row,
    sine_recording, uff_header, wav_bytes, write_manifest,
};
use spallcast_formats::write_wav_f32;

#[test]
fn paths_that_escape_the_route_folder_are_rejected() {
    let mut f = fixture();
    write_wav_f32(
        &f.route.join("good.wav"),
        &sine_recording(4096, 25_600.0, 0.5),
    )
    .unwrap();
    std::fs::create_dir(f.route.join("sub")).unwrap();
    let outside = f.outside.display().to_string();
    write_manifest(
        &f.route,
        &[
            row("good.wav", "P1"),
            row("../outside.wav", "P2"),
            row("sub/../../outside.wav", "P2"),
            row(&outside, "P2"),
            row("..\\outside.wav", "P2"),
        ],
    );
    let s = import(&mut f);
    assert_eq!(s.new_readings, 1, "{s:#?}");
    assert_eq!(s.rejected.len(), 4, "{s:#?}");
    for r in &s.rejected {
        assert!(
            r.reason.contains("route folder"),
            "reason does not say why: {}",
            r.reason
        );
    }
    assert_eq!(f.store.reading_count().unwrap(), 1);
    assert_sound(&f.store);
}

#[test]
fn enormous_claimed_lengths_are_rejected_without_allocating() {
    let mut f = fixture();
    let samples = sine_recording(4096, 25_600.0, 0.5).channels.remove(0);
    // WAV: a data chunk that claims 4 GiB but holds 8 KiB.
    let wav = wav_bytes(1, 1, 25_600, 16, 0xFFFF_FFF0, &pcm16(&samples));
    std::fs::write(f.route.join("huge_len.wav"), wav).unwrap();
    // WAV: 4000 channels and 2 GiB claimed over 128 bytes.
    let wav = wav_bytes(1, 4000, 25_600, 16, 0x7FFF_FFF0, &pcm16(&samples[..64]));
    std::fs::write(f.route.join("many_channels.wav"), wav).unwrap();
    // UFF ASCII: 10^10 - 1 points claimed (the widest count record 7 can hold), 6 given.
    let ascii = format!(
        "    -1\n    58\n{}  1.00000e+00  2.00000e+00  3.00000e+00  4.00000e+00  5.00000e+00  6.00000e+00\n    -1\n",
        uff_header(2, 9_999_999_999, 1.0 / 25_600.0)
    );
    std::fs::write(f.route.join("huge_points.uff"), ascii).unwrap();
    // UFF binary: a byte count of 2^62 announced for 32 bytes of data.
    let mut binary = format!(
        "    -1\n    58b     1     2          11{:>12}     0     0           0           0\n{}",
        1u64 << 62,
        uff_header(4, 4, 1.0 / 25_600.0)
    )
    .into_bytes();
    binary.extend_from_slice(&[0u8; 32]);
    binary.extend_from_slice(b"    -1\n");
    std::fs::write(f.route.join("huge_bytes.uff"), binary).unwrap();
    write_wav_f32(
        &f.route.join("good.wav"),
        &sine_recording(4096, 25_600.0, 0.5),
    )
    .unwrap();
    let names = [
        "huge_len.wav",
        "many_channels.wav",
        "huge_points.uff",
        "huge_bytes.uff",
    ];
    let mut rows: Vec<String> = names.iter().map(|n| row(n, "P1")).collect();
    rows.push(row("good.wav", "P2"));
    write_manifest(&f.route, &rows);
    let s = import(&mut f);
    assert_eq!(s.new_readings, 1, "{s:#?}");
    for name in names {
        let why = reason(&s, name);
        assert!(why.contains(name), "reason does not name {name}: {why}");
    }
    assert_sound(&f.store);
}

#[test]
fn zero_and_absurd_sample_rates_are_rejected() {
    let mut f = fixture();
    let samples = sine_recording(4096, 25_600.0, 0.5).channels.remove(0);
    let data = pcm16(&samples);
    std::fs::write(
        f.route.join("zero_hz.wav"),
        wav_bytes(1, 1, 0, 16, data.len() as u32, &data),
    )
    .unwrap();
    std::fs::write(
        f.route.join("ten_hz.wav"),
        wav_bytes(1, 1, 10, 16, data.len() as u32, &data),
    )
    .unwrap();
    let body = samples.iter().fold(String::new(), |mut b, v| {
        writeln!(b, "{v}").unwrap();
        b
    });
    std::fs::write(
        f.route.join("giga.csv"),
        format!("# sample_rate_hz=1e9\n{body}"),
    )
    .unwrap();
    std::fs::write(
        f.route.join("tiny.csv"),
        format!("# sample_rate_hz=1e-300\n{body}"),
    )
    .unwrap();
    std::fs::write(
        f.route.join("zero.csv"),
        format!("# sample_rate_hz=0\n{body}"),
    )
    .unwrap();
    std::fs::write(f.route.join("bare.csv"), &body).unwrap();
    // UFF with an abscissa increment of 1e-300 s (a rate beyond any float).
    let mut uff = format!("    -1\n    58\n{}", uff_header(2, 4096, 1e-300));
    for chunk in samples.chunks(6) {
        for v in chunk {
            write!(uff, "{v:13.5e}").unwrap();
        }
        uff.push('\n');
    }
    uff.push_str("    -1\n");
    std::fs::write(f.route.join("fast.uff"), uff).unwrap();
    let names = [
        "zero_hz.wav",
        "ten_hz.wav",
        "giga.csv",
        "tiny.csv",
        "zero.csv",
        "fast.uff",
    ];
    let mut rows: Vec<String> = names.iter().map(|n| row(n, "P1")).collect();
    // A CSV without its own rate, with NaN and 0 in the manifest's sample_rate_hz column.
    rows.push(format!("bare.csv,P1,{TAKEN},1480,,,NaN"));
    rows.push(format!("bare.csv,P2,{TAKEN},1480,,,0"));
    write_manifest(&f.route, &rows);
    let s = import(&mut f);
    assert_eq!(s.new_readings, 0, "{s:#?}");
    assert_eq!(s.rejected.len(), names.len() + 2, "{s:#?}");
    for name in names {
        let why = reason(&s, name);
        assert!(why.contains(name), "reason does not name {name}: {why}");
        assert!(
            why.contains("Hz") || why.contains("rate"),
            "reason does not say what is wrong: {why}"
        );
    }
    assert_eq!(f.store.reading_count().unwrap(), 0);
    assert_sound(&f.store);
}

#[test]
fn nan_and_infinite_samples_are_rejected() {
    let mut f = fixture();
    let mut samples = sine_recording(4096, 25_600.0, 0.5).channels.remove(0);
    samples[1000] = f32::NAN;
    std::fs::write(
        f.route.join("nan.wav"),
        wav_bytes(3, 1, 25_600, 32, 4 * 4096, &float32(&samples)),
    )
    .unwrap();
    samples[1000] = f32::INFINITY;
    std::fs::write(
        f.route.join("inf.wav"),
        wav_bytes(3, 1, 25_600, 32, 4 * 4096, &float32(&samples)),
    )
    .unwrap();
    samples[1000] = 0.0;
    let body: String = samples
        .iter()
        .enumerate()
        .map(|(i, v)| {
            if i == 7 {
                "-inf\n".to_owned()
            } else {
                format!("{v}\n")
            }
        })
        .collect();
    std::fs::write(
        f.route.join("inf.csv"),
        format!("# sample_rate_hz=25600\n{body}"),
    )
    .unwrap();
    // Finite in the file, infinite once converted: 0.5 mV at 1e-300 mV/g.
    write_wav_f32(
        &f.route.join("overflow.wav"),
        &sine_recording(4096, 25_600.0, 0.5),
    )
    .unwrap();
    let mut rows: Vec<String> = ["nan.wav", "inf.wav", "inf.csv"]
        .iter()
        .map(|n| row(n, "P1"))
        .collect();
    rows.push(format!("overflow.wav,P2,{TAKEN},1480,mV,1e-300,"));
    write_manifest(&f.route, &rows);
    let s = import(&mut f);
    assert_eq!(s.new_readings, 0, "{s:#?}");
    for name in ["nan.wav", "inf.wav", "inf.csv"] {
        let why = reason(&s, name);
        assert!(why.contains("finite"), "{name}: {why}");
    }
    assert!(reason(&s, "overflow.wav").contains("finite"), "{s:#?}");
    assert_eq!(f.store.reading_count().unwrap(), 0);
    assert_sound(&f.store);
}

#[test]
fn a_clipped_recording_is_imported_and_flagged_suspect() {
    let mut f = fixture();
    // A sine of amplitude 1.2 through a converter that saturates at ±0.8: long flat tops.
    let clipped: Vec<f32> = sine_recording(4096, 25_600.0, 1.2)
        .channels
        .remove(0)
        .into_iter()
        .map(|v| v.clamp(-0.8, 0.8))
        .collect();
    std::fs::write(
        f.route.join("clipped.wav"),
        wav_bytes(1, 1, 25_600, 16, 2 * 4096, &pcm16(&clipped)),
    )
    .unwrap();
    write_wav_f32(
        &f.route.join("clean.wav"),
        &sine_recording(4096, 25_600.0, 0.5),
    )
    .unwrap();
    write_manifest(
        &f.route,
        &[row("clipped.wav", "P1"), row("clean.wav", "P2")],
    );
    let s = import(&mut f);
    assert_eq!(s.new_readings, 2, "{s:#?}");
    assert_eq!(s.clipped, vec!["clipped.wav".to_owned()]);
    let day = chrono::NaiveDate::from_ymd_opt(2026, 5, 14).unwrap();
    let readings = f.store.readings_of_day(day).unwrap();
    let by_file: BTreeMap<_, _> = readings
        .iter()
        .map(|r| (r.source_file.as_str(), r))
        .collect();
    assert_eq!(by_file["clipped.wav"].suspect.as_deref(), Some("clipped"));
    assert!(
        by_file["clipped.wav"].clipped_fraction > 0.1,
        "{}",
        by_file["clipped.wav"].clipped_fraction
    );
    assert_eq!(by_file["clean.wav"].suspect, None);
    assert_sound(&f.store);
}

#[test]
fn repeated_rows_and_copied_files_import_once() {
    let mut f = fixture();
    write_wav_f32(&f.route.join("a.wav"), &sine_recording(4096, 25_600.0, 0.5)).unwrap();
    std::fs::copy(f.route.join("a.wav"), f.route.join("a_copy.wav")).unwrap();
    std::fs::copy(f.route.join("a.wav"), f.route.join("a_june.wav")).unwrap();
    write_wav_f32(
        &f.route.join("b.wav"),
        &sine_recording(4096, 25_600.0, 0.25),
    )
    .unwrap();
    write_manifest(
        &f.route,
        &[
            row("a.wav", "P1"),
            row("a.wav", "P1"),      // the same row twice: a manifest row error
            row("./a.wav", "P1"),    // the same file spelt differently: a row error too
            row("a_copy.wav", "P1"), // identical content, point and time: a duplicate
            row("b.wav", "P1"),      // another reading at the same point and time: kept
            // The same content at the same point a month later: a new reading.
            "a_june.wav,P1,2026-06-14T09:31:00+01:00,1480,,,".to_owned(),
        ],
    );
    let s = import(&mut f);
    assert_eq!(
        (s.new_readings, s.duplicates, s.rejected.len()),
        (3, 1, 2),
        "{s:#?}"
    );
    assert!(
        s.rejected
            .iter()
            .all(|r| r.reason.contains("already listed")),
        "{s:#?}"
    );
    // A second import of the same folder adds nothing.
    let again = import(&mut f);
    assert_eq!((again.new_readings, again.duplicates), (0, 4), "{again:#?}");
    assert_eq!(f.store.reading_count().unwrap(), 3);
    assert_sound(&f.store);
}

#[test]
fn missing_empty_and_non_file_entries_are_rejected() {
    let mut f = fixture();
    std::fs::write(f.route.join("empty.wav"), b"").unwrap();
    std::fs::create_dir(f.route.join("folder.wav")).unwrap();
    std::fs::write(f.route.join("text.wav"), "not a recording\n").unwrap();
    write_wav_f32(
        &f.route.join("good.wav"),
        &sine_recording(4096, 25_600.0, 0.5),
    )
    .unwrap();
    let names = ["missing.wav", "empty.wav", "folder.wav", "text.wav"];
    let mut rows: Vec<String> = names.iter().map(|n| row(n, "P1")).collect();
    rows.push(row("good.wav", "NO-SUCH-POINT"));
    rows.push(row("good.wav", "P2"));
    write_manifest(&f.route, &rows);
    let s = import(&mut f);
    assert_eq!(s.new_readings, 1, "{s:#?}");
    assert_eq!(s.rejected.len(), names.len() + 1, "{s:#?}");
    for name in names {
        assert!(!reason(&s, name).is_empty());
    }
    assert!(reason(&s, "NO-SUCH-POINT").contains("unknown point"));
    assert_sound(&f.store);
}

/// A recording reached through a symbolic link that points out of the route folder. The manifest
/// path itself is clean, so only a check of the resolved path can refuse it.
#[test]
fn a_symlink_out_of_the_route_folder_is_rejected() {
    let mut f = fixture();
    std::os::unix::fs::symlink(&f.outside, f.route.join("link.wav")).unwrap();
    write_manifest(&f.route, &[row("link.wav", "P1")]);
    let s = import(&mut f);
    assert_eq!(
        s.new_readings, 0,
        "a file outside the route folder was imported: {s:#?}"
    );
    assert!(
        reason(&s, "link.wav").contains("outside the route folder"),
        "{s:#?}"
    );
    // A linked folder on the way out is refused the same way.
    std::os::unix::fs::symlink(f.outside.parent().unwrap(), f.route.join("up")).unwrap();
    write_manifest(&f.route, &[row("up/outside.wav", "P1")]);
    let s = import(&mut f);
    assert_eq!(s.new_readings, 0, "{s:#?}");
    assert!(
        reason(&s, "up/outside.wav").contains("outside the route folder"),
        "{s:#?}"
    );
    assert_sound(&f.store);
}

/// A named pipe (FIFO) listed as a recording: reading it would wait for a writer forever. The
/// import must reject it (it is not a regular file) rather than hang.
#[test]
fn a_named_pipe_in_the_route_folder_does_not_hang_the_import() {
    let f = fixture();
    let fifo = f.route.join("pipe.wav");
    let status = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(status.success(), "mkfifo failed");
    write_manifest(&f.route, &[row("pipe.wav", "P1")]);
    let Fixture {
        _tmp: tmp,
        route,
        mut store,
        ..
    } = f;
    let (tx, rx) = std::sync::mpsc::channel();
    let worker = std::thread::Builder::new()
        .name("test-fifo-import".into())
        .spawn(move || {
            let s = store
                .import_route(&route, &RmsAnalyzer, &mut |_, _| {})
                .unwrap();
            tx.send(s).unwrap();
        })
        .unwrap();
    let outcome = rx.recv_timeout(std::time::Duration::from_secs(10));
    if outcome.is_err() {
        // Unblock the reader (opening the write end and closing it gives it end-of-file) so that
        // the test ends, then fail.
        drop(std::fs::OpenOptions::new().write(true).open(&fifo));
        worker.join().unwrap();
        panic!("the import hung on a FIFO for 10 s");
    }
    worker.join().unwrap();
    let s = outcome.unwrap();
    assert_eq!(s.new_readings, 0, "{s:#?}");
    assert!(reason(&s, "pipe.wav").contains("regular file"), "{s:#?}");
    drop(tmp);
}

/// A recording larger than any reader accepts (1 GiB) is refused while it is hashed, a buffer at a
/// time, before anything is decoded; the good reading beside it still imports. The file is sparse, so
/// the test costs reading 1 GiB of zeros from the page cache, not disk space.
#[test]
fn a_recording_larger_than_the_cap_is_refused_while_hashing() {
    let mut f = fixture();
    let huge = std::fs::File::create(f.route.join("huge.wav")).unwrap();
    huge.set_len(spallcast_formats::MAX_FILE_BYTES + 1).unwrap();
    drop(huge);
    write_wav_f32(
        &f.route.join("good.wav"),
        &sine_recording(4096, 25_600.0, 0.5),
    )
    .unwrap();
    write_manifest(&f.route, &[row("huge.wav", "P1"), row("good.wav", "P2")]);
    let s = import(&mut f);
    assert_eq!(s.new_readings, 1, "{s:#?}");
    let why = reason(&s, "huge.wav");
    assert!(why.contains("larger than 1024 MiB"), "{why}");
    assert_sound(&f.store);
}

/// Issue 16 item 10: a reading taken before its bearing was installed has no life to belong to, so
/// it would never be assessed. The import rejects it with the reason.
#[test]
fn a_reading_from_before_the_bearing_was_installed_is_rejected_with_the_reason() {
    let mut f = fixture();
    write_wav_f32(
        &f.route.join("early.wav"),
        &sine_recording(4096, 25_600.0, 0.4),
    )
    .unwrap();
    write_wav_f32(
        &f.route.join("good.wav"),
        &sine_recording(4096, 25_600.0, 0.5),
    )
    .unwrap();
    write_manifest(
        &f.route,
        &[
            "early.wav,P1,2023-06-01T09:00:00+01:00,1480,,,".to_owned(),
            row("good.wav", "P2"),
        ],
    );
    let s = import(&mut f);
    assert_eq!(s.new_readings, 1, "{s:#?}");
    let why = reason(&s, "early.wav");
    assert!(why.contains("installed"), "{why}");
    assert!(why.contains("2024-01-01"), "{why}");
    assert_eq!(f.store.reading_count().unwrap(), 1);
    assert_sound(&f.store);
}

/// Issue 16 item 11: the manifest allows `\` as a separator (files written on Windows); on Linux
/// the file must still be found.
#[test]
fn a_backslash_path_in_the_manifest_finds_the_file() {
    let mut f = fixture();
    std::fs::create_dir_all(f.route.join("motor").join("de")).unwrap();
    write_wav_f32(
        &f.route.join("motor").join("de").join("h.wav"),
        &sine_recording(4096, 25_600.0, 0.5),
    )
    .unwrap();
    write_manifest(&f.route, &[row("motor\\de\\h.wav", "P1")]);
    let s = import(&mut f);
    assert_eq!(s.new_readings, 1, "{s:#?}");
    assert!(s.rejected.is_empty(), "{s:#?}");
    // A second import of the same folder finds the same file as a duplicate.
    let again = import(&mut f);
    assert_eq!((again.new_readings, again.duplicates), (0, 1), "{again:#?}");
    assert_sound(&f.store);
}
