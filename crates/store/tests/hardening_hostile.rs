//! Hostile and odd route folders and plant files against the store's import: every bad file is
//! rejected with a reason naming it, the good readings around it still import, nothing is half
//! written, and the database stays sound (`PRAGMA integrity_check`).
//!
//! Reader-level checks of the same inputs live in the formats crate's own tests (see the hardening
//! report); these tests check what the import does with them.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use spallcast_formats::{Recording, write_wav_f32};
use spallcast_store::{
    AnalysisInput, AnalysisOutput, ImportSummary, PlantFile, ReadingAnalyzer, Store, StoreError,
};

/// A small deterministic analyzer: RMS and peak of the waveform.
struct RmsAnalyzer;

impl ReadingAnalyzer for RmsAnalyzer {
    fn version(&self) -> String {
        "hardening-rms-1".to_owned()
    }

    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, String> {
        let n = input.samples_g.len().max(1) as f64;
        let rms = (input
            .samples_g
            .iter()
            .map(|&s| f64::from(s) * f64::from(s))
            .sum::<f64>()
            / n)
            .sqrt();
        let peak = input
            .samples_g
            .iter()
            .fold(0.0_f64, |m, &s| m.max(f64::from(s).abs()));
        let mut scalars = BTreeMap::new();
        scalars.insert("accel_rms_g".to_owned(), rms);
        scalars.insert("accel_peak_g".to_owned(), peak);
        Ok(AnalysisOutput {
            scalars,
            document: serde_json::json!({ "diagnosis": "none" }),
            diagnosis: Some("none".to_owned()),
        })
    }
}

const PLANT: &str = r#"
[site]
name = "Hardening Test Works"
timezone_offset = "+01:00"

[[bearing_types]]
designation = "HT-1"
kind = "deep-groove ball"
factors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }

[[areas]]
name = "Test area"
  [[areas.machines]]
  id = "HT-M1"
  name = "Test pump"
  kind = "pump"
  nominal_rpm = 1480.0
  iso_group = 2
  iso_support = "rigid"
    [[areas.machines.bearings]]
    position = "DE"
    bearing_type = "HT-1"
    lubrication = "grease"
    installed = "2024-01-01"
    [[areas.machines.points]]
    id = "P1"
    bearing = "DE"
    direction = "H"
    [[areas.machines.points]]
    id = "P2"
    bearing = "DE"
    direction = "V"
"#;

const TAKEN: &str = "2026-05-14T09:31:00+01:00";

struct Fixture {
    _tmp: tempfile::TempDir,
    route: PathBuf,
    outside: PathBuf,
    store: Store,
}

fn fixture() -> Fixture {
    let tmp = tempfile::tempdir().unwrap();
    let route = tmp.path().join("route");
    std::fs::create_dir(&route).unwrap();
    let outside = tmp.path().join("outside.wav");
    write_wav_f32(&outside, &sine(4096, 25_600.0, 0.5)).unwrap();
    let mut store = Store::open(&tmp.path().join("plant.db")).unwrap();
    let plant = PlantFile::parse(PLANT, Path::new("plant.toml")).unwrap();
    store.apply_plant(&plant).unwrap();
    Fixture {
        _tmp: tmp,
        route,
        outside,
        store,
    }
}

fn sine(n: usize, rate: f64, amplitude: f32) -> Recording {
    Recording {
        channels: vec![
            (0..n)
                .map(|i| amplitude * (i as f32 * 0.137).sin())
                .collect(),
        ],
        sample_rate_hz: rate,
    }
}

/// A RIFF/WAVE file written byte by byte, so that the header can lie.
fn wav_bytes(
    format_tag: u16,
    channels: u16,
    rate: u32,
    bits: u16,
    claimed_data_len: u32,
    data: &[u8],
) -> Vec<u8> {
    let align = channels * bits.div_ceil(8);
    let mut fmt = Vec::new();
    fmt.extend_from_slice(&format_tag.to_le_bytes());
    fmt.extend_from_slice(&channels.to_le_bytes());
    fmt.extend_from_slice(&rate.to_le_bytes());
    fmt.extend_from_slice(&(rate * u32::from(align)).to_le_bytes());
    fmt.extend_from_slice(&align.to_le_bytes());
    fmt.extend_from_slice(&bits.to_le_bytes());
    let mut body = b"WAVEfmt ".to_vec();
    body.extend_from_slice(&16u32.to_le_bytes());
    body.extend_from_slice(&fmt);
    body.extend_from_slice(b"data");
    body.extend_from_slice(&claimed_data_len.to_le_bytes());
    body.extend_from_slice(data);
    let mut out = b"RIFF".to_vec();
    out.extend_from_slice(&(body.len() as u32).to_le_bytes());
    out.extend_from_slice(&body);
    out
}

fn pcm16(values: &[f32]) -> Vec<u8> {
    values
        .iter()
        .flat_map(|&v| ((v * 32767.0).round() as i16).to_le_bytes())
        .collect()
}

fn float32(values: &[f32]) -> Vec<u8> {
    values.iter().flat_map(|v| v.to_le_bytes()).collect()
}

/// A dataset-58 header (records 1-11) for an ASCII or binary time record.
fn uff_header(ord_type: u32, points: u64, dt: f64) -> String {
    let mut s = String::new();
    for l in [
        "hostile record",
        "hardening test",
        "01-Dec-26 00:00:00",
        "NONE",
        "NONE",
    ] {
        writeln!(s, "{l:<80}").unwrap();
    }
    s.push_str(
        "    1         0    0         0         PT         1   1       NONE         0   0\n",
    );
    writeln!(
        s,
        "{ord_type:10}{points:10}{:10}{:13.5e}{dt:13.5e}{:13.5e}",
        1, 0.0, 0.0
    )
    .unwrap();
    s.push_str("        17    0    0    0 NONE                 s                   \n");
    s.push_str("        12    1    0    0 NONE                 g                   \n");
    s.push_str("         0    0    0    0 NONE                 NONE                \n");
    s.push_str("         0    0    0    0 NONE                 NONE                \n");
    s
}

fn write_manifest(route: &Path, rows: &[String]) {
    let mut text = String::from("file,point,taken_at,rpm,units,sensitivity,sample_rate_hz\n");
    for r in rows {
        text.push_str(r);
        text.push('\n');
    }
    std::fs::write(route.join("route.csv"), text).unwrap();
}

fn row(file: &str, point: &str) -> String {
    format!("{file},{point},{TAKEN},1480,,,")
}

fn import(f: &mut Fixture) -> ImportSummary {
    f.store
        .import_route(&f.route, &RmsAnalyzer, &mut |_, _| {})
        .unwrap()
}

fn assert_sound(store: &Store) {
    assert_eq!(store.integrity_check().unwrap(), vec!["ok".to_owned()]);
}

/// The reason given for `file`, failing when it was not rejected.
fn reason<'a>(summary: &'a ImportSummary, file: &str) -> &'a str {
    summary
        .rejected
        .iter()
        .find(|r| r.file == file || r.reason.contains(file))
        .map_or_else(
            || panic!("{file} was not rejected: {:#?}", summary.rejected),
            |r| r.reason.as_str(),
        )
}

#[test]
fn paths_that_escape_the_route_folder_are_rejected() {
    let mut f = fixture();
    write_wav_f32(&f.route.join("good.wav"), &sine(4096, 25_600.0, 0.5)).unwrap();
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
    let samples = sine(4096, 25_600.0, 0.5).channels.remove(0);
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
    write_wav_f32(&f.route.join("good.wav"), &sine(4096, 25_600.0, 0.5)).unwrap();
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
    let samples = sine(4096, 25_600.0, 0.5).channels.remove(0);
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
    let mut samples = sine(4096, 25_600.0, 0.5).channels.remove(0);
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
    write_wav_f32(&f.route.join("overflow.wav"), &sine(4096, 25_600.0, 0.5)).unwrap();
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
    let clipped: Vec<f32> = sine(4096, 25_600.0, 1.2)
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
    write_wav_f32(&f.route.join("clean.wav"), &sine(4096, 25_600.0, 0.5)).unwrap();
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
    write_wav_f32(&f.route.join("a.wav"), &sine(4096, 25_600.0, 0.5)).unwrap();
    std::fs::copy(f.route.join("a.wav"), f.route.join("a_copy.wav")).unwrap();
    std::fs::copy(f.route.join("a.wav"), f.route.join("a_june.wav")).unwrap();
    write_wav_f32(&f.route.join("b.wav"), &sine(4096, 25_600.0, 0.25)).unwrap();
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
    write_wav_f32(&f.route.join("good.wav"), &sine(4096, 25_600.0, 0.5)).unwrap();
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

#[test]
fn plant_files_with_duplicate_ids_are_refused_naming_file_and_id() {
    // Point id P1 used twice (the second point block renamed back to P1).
    let dup_point = PLANT.replace(r#"id = "P2""#, r#"id = "P1""#);
    // A second machine with the same id (and its own position and point ids).
    let machine_block = PLANT
        .split("  [[areas.machines]]")
        .nth(1)
        .unwrap()
        .replace("\"P1\"", "\"Q1\"")
        .replace("\"P2\"", "\"Q2\"");
    let dup_machine = format!("{PLANT}\n  [[areas.machines]]{machine_block}");
    let dup_type = PLANT.replace(
        "[[areas]]",
        "[[bearing_types]]\ndesignation = \"HT-1\"\nfactors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }\n\n[[areas]]",
    );
    let dup_area = format!("{PLANT}\n[[areas]]\nname = \"Test area\"\n");
    let dup_position = PLANT.replace(
        "    [[areas.machines.points]]\n    id = \"P1\"",
        "    [[areas.machines.bearings]]\n    position = \"DE\"\n    bearing_type = \"HT-1\"\n    lubrication = \"oil\"\n    installed = \"2024-01-01\"\n    [[areas.machines.points]]\n    id = \"P1\"",
    );
    let texts = [
        (dup_point, "\"P1\""),
        (dup_machine, "\"HT-M1\""),
        (dup_type, "\"HT-1\""),
        (dup_area, "\"Test area\""),
        (dup_position, "\"DE\""),
    ];
    let path = Path::new("/plants/site-a.toml");
    for (text, id) in &texts {
        let err = PlantFile::parse(text, path).expect_err(id);
        let message = err.to_string();
        assert!(message.contains("/plants/site-a.toml"), "{message}");
        assert!(
            message.contains(id),
            "message does not name {id}: {message}"
        );
        assert!(message.contains("twice"), "{message}");
    }
    // Applying a bad plant file to a store changes nothing in it.
    let mut f = fixture();
    let before = f.store.export_plant().unwrap();
    let bad = Path::new(&f.route).join("bad.toml");
    std::fs::write(&bad, &texts[0].0).unwrap();
    let err = f.store.apply_plant_file(&bad).unwrap_err();
    assert!(err.to_string().contains("bad.toml"), "{err}");
    assert_eq!(f.store.export_plant().unwrap(), before);
}

#[test]
fn a_file_that_is_not_sqlite_is_refused_and_left_untouched() {
    let tmp = tempfile::tempdir().unwrap();
    let mut garbage = b"SQLite format 3\0".to_vec(); // the right magic, then noise
    let mut x: u32 = 0x2545_F491;
    for _ in 0..8192 {
        x ^= x << 13;
        x ^= x >> 17;
        x ^= x << 5;
        garbage.push((x & 0xFF) as u8);
    }
    let cases: [(&str, Vec<u8>); 3] = [
        (
            "notes.db",
            "analyst notes, not a database\n".repeat(300).into_bytes(),
        ),
        (
            "image.db",
            b"\x89PNG\r\n\x1a\n"
                .iter()
                .copied()
                .cycle()
                .take(4096)
                .collect(),
        ),
        ("noise.db", garbage),
    ];
    for (name, bytes) in cases {
        let path = tmp.path().join(name);
        std::fs::write(&path, &bytes).unwrap();
        let err = Store::open(&path).unwrap_err();
        assert!(err.to_string().contains(name), "{err}");
        assert!(
            matches!(err, StoreError::NotADatabase { .. }),
            "{name}: {err:?}"
        );
        assert_eq!(std::fs::read(&path).unwrap(), bytes, "{name} was modified");
    }
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
    write_wav_f32(&f.route.join("good.wav"), &sine(4096, 25_600.0, 0.5)).unwrap();
    write_manifest(&f.route, &[row("huge.wav", "P1"), row("good.wav", "P2")]);
    let s = import(&mut f);
    assert_eq!(s.new_readings, 1, "{s:#?}");
    let why = reason(&s, "huge.wav");
    assert!(why.contains("larger than 1024 MiB"), "{why}");
    assert_sound(&f.store);
}

/// Issue 16 item 5: two outages with one name. The second used to replace the first silently.
#[test]
fn two_outages_with_one_name_are_refused_naming_file_line_and_name() {
    let text = format!(
        "{PLANT}\n[[outages]]\nname = \"Spring stop\"\nstart = \"2026-04-01\"\nend = \"2026-04-03\"\n\n\
         [[outages]]\nname = \"Spring stop\"\nstart = \"2026-05-01\"\nend = \"2026-05-02\"\n"
    );
    let line = text
        .lines()
        .enumerate()
        .filter(|(_, l)| l.contains("\"Spring stop\""))
        .nth(1)
        .map(|(i, _)| i + 1)
        .unwrap();
    let err = PlantFile::parse(&text, Path::new("/plants/outages.toml")).unwrap_err();
    let message = err.to_string();
    assert!(message.contains("/plants/outages.toml"), "{message}");
    assert!(message.contains("\"Spring stop\""), "{message}");
    assert!(message.contains("twice"), "{message}");
    assert!(
        message.contains(&format!("line {line}")),
        "no line {line}: {message}"
    );
}

/// Issue 16 item 6: values a plant file must not get through, each refused with the file, the key
/// and the reason.
#[test]
fn impossible_plant_values_are_refused_naming_file_key_and_reason() {
    let geometry_and_factors = "designation = \"HT-1\"\nkind = \"deep-groove ball\"\n\
         rolling_elements = 9\nelement_diameter_mm = 8.0\npitch_diameter_mm = 39.0\ncontact_angle_deg = 0.0\n\
         factors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }";
    let with_type = |geometry: &str| {
        PLANT.replace(
            "designation = \"HT-1\"\nkind = \"deep-groove ball\"\nfactors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }",
            geometry,
        )
    };
    let cases: Vec<(String, &str, &str)> = vec![
        (
            PLANT.replace(
                "    installed = \"2024-01-01\"",
                "    installed = \"2024-01-01\"\n    nominal_rpm = -1480.0",
            ),
            "nominal_rpm",
            "positive",
        ),
        (
            PLANT.replace(
                "    installed = \"2024-01-01\"",
                "    installed = \"2024-01-01\"\n    nominal_rpm = nan",
            ),
            "nominal_rpm",
            "positive",
        ),
        (
            PLANT.replace("nominal_rpm = 1480.0", "nominal_rpm = nan"),
            "nominal_rpm",
            "positive",
        ),
        (PLANT.replace("id = \"HT-M1\"", "id = \"\""), "id", "empty"),
        (PLANT.replace("id = \"P1\"", "id = \"  \""), "id", "empty"),
        (
            PLANT.replace("id = \"P1\"", "id = \"P\\u00001\""),
            "id",
            "control character",
        ),
        (
            PLANT.replace("id = \"P2\"", "id = \"P\\n2\""),
            "id",
            "control character",
        ),
        (
            PLANT.replace("position = \"DE\"", "position = \"\""),
            "position",
            "empty",
        ),
        (
            with_type(
                &geometry_and_factors
                    .replace("contact_angle_deg = 0.0", "contact_angle_deg = 95.0"),
            ),
            "contact_angle_deg",
            "0",
        ),
        (
            with_type(
                &geometry_and_factors
                    .replace("pitch_diameter_mm = 39.0", "pitch_diameter_mm = 6.0"),
            ),
            "pitch_diameter_mm",
            "element_diameter_mm",
        ),
    ];
    // The geometry-and-factors type itself is accepted when its geometry is possible.
    PlantFile::parse(&with_type(geometry_and_factors), Path::new("ok.toml")).unwrap();
    for (text, key, why) in &cases {
        let err = PlantFile::parse(text, Path::new("/plants/values.toml"))
            .expect_err(&format!("accepted a bad {key} ({why})"));
        let message = err.to_string();
        assert!(message.contains("/plants/values.toml"), "{message}");
        assert!(message.contains(key), "does not name {key}: {message}");
        assert!(message.contains(why), "does not say {why:?}: {message}");
    }
}

/// Issue 16 item 10: a reading taken before its bearing was installed has no life to belong to, so
/// it would never be assessed. The import rejects it with the reason.
#[test]
fn a_reading_from_before_the_bearing_was_installed_is_rejected_with_the_reason() {
    let mut f = fixture();
    write_wav_f32(&f.route.join("early.wav"), &sine(4096, 25_600.0, 0.4)).unwrap();
    write_wav_f32(&f.route.join("good.wav"), &sine(4096, 25_600.0, 0.5)).unwrap();
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
        &sine(4096, 25_600.0, 0.5),
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
