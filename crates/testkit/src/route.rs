//! Route folders: recordings and the `route.csv` manifest that lists them.
#![allow(
    clippy::unwrap_used,
    reason = "test fixtures: a failure here is a broken test"
)]

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use crate::plants::{HARDENING_POINTS, HARDENING_WORKS};

/// One route.csv row.
pub struct Row<'a> {
    /// Recording file, relative to the route folder.
    pub file: &'a str,
    /// Measurement point id.
    pub point: &'a str,
    /// When the reading was taken (RFC 3339).
    pub taken_at: &'a str,
    /// Shaft speed, r/min.
    pub rpm: f64,
    /// Units of the recording.
    pub units: &'a str,
    /// The last three cells (sensitivity, channel, sample rate), e.g. ",2," for channel 2.
    pub extra: &'a str,
}

impl<'a> Row<'a> {
    /// A row at 1480 r/min in g, the last three cells empty.
    pub fn new(file: &'a str, point: &'a str, taken_at: &'a str) -> Self {
        Self {
            file,
            point,
            taken_at,
            rpm: 1480.0,
            units: "g",
            extra: "",
        }
    }
}

/// Writes `route.csv` with columns `file,point,taken_at,rpm,units,sensitivity,channel,sample_rate_hz`; `extra`
/// holds the last three cells (e.g. ",2," for channel 2).
pub fn write_manifest(dir: &Path, rows: &[Row<'_>]) {
    let mut text =
        String::from("file,point,taken_at,rpm,units,sensitivity,channel,sample_rate_hz\n");
    for r in rows {
        let extra = if r.extra.is_empty() { ",," } else { r.extra };
        writeln!(
            text,
            "{},{},{},{},{},{}",
            r.file, r.point, r.taken_at, r.rpm, r.units, extra
        )
        .unwrap();
    }
    std::fs::write(dir.join("route.csv"), text).unwrap();
}

/// A progress callback that ignores progress.
pub fn quiet() -> impl FnMut(usize, usize) {
    |_, _| {}
}

/// Writes `count` WAV files (hound; 16-bit PCM and 32-bit float alternately, `samples` each, the one
/// numbered `clipped` saturated) into `dir/name`, with route.csv taking readings on `day` (1..=28 of
/// May 2026) at the points of [`HARDENING_POINTS`] in turn, and [`HARDENING_WORKS`] as `plant.toml`
/// into `dir`. Returns the route folder.
pub fn write_mixed_route(
    dir: &Path,
    name: &str,
    count: usize,
    samples: u32,
    day: u32,
    clipped: Option<usize>,
) -> PathBuf {
    let route = dir.join(name);
    std::fs::create_dir_all(&route).unwrap();
    let rate = 25_600_u32;
    let mut manifest = String::from("file,point,taken_at,rpm\n");
    for i in 0..count {
        let file = format!("{name}-{i:02}.wav");
        let float = i % 2 == 1;
        let spec = hound::WavSpec {
            channels: 1,
            sample_rate: rate,
            bits_per_sample: if float { 32 } else { 16 },
            sample_format: if float {
                hound::SampleFormat::Float
            } else {
                hound::SampleFormat::Int
            },
        };
        let mut w = hound::WavWriter::create(route.join(&file), spec).unwrap();
        let amplitude = 0.2 + 0.02 * i as f64 + 0.001 * f64::from(day);
        for k in 0..samples {
            let t = f64::from(k) / f64::from(rate);
            let mut v = amplitude
                * (2.0 * std::f64::consts::PI * (120.0 + 7.0 * i as f64) * t).sin()
                + 0.05 * (2.0 * std::f64::consts::PI * 3100.0 * t).sin();
            if clipped == Some(i) {
                v = (3.0 * v).clamp(-0.5, 0.5); // a saturated sensor
            }
            if float {
                w.write_sample(v as f32).unwrap();
            } else {
                w.write_sample((v * 32_000.0).round() as i16).unwrap();
            }
        }
        w.finalize().unwrap();
        let point = HARDENING_POINTS[i % HARDENING_POINTS.len()];
        let (hour, minute) = (9 + i / 240, (i / HARDENING_POINTS.len()) % 60);
        writeln!(
            manifest,
            "{file},{point},2026-05-{day:02}T{hour:02}:{minute:02}:00+01:00,{}",
            1470 + i
        )
        .unwrap();
    }
    std::fs::write(route.join("route.csv"), manifest).unwrap();
    std::fs::write(dir.join("plant.toml"), HARDENING_WORKS).unwrap();
    route
}

/// Writes `count` float WAV recordings of `samples` samples each plus route.csv (one reading per point
/// and minute, points `PH-P1-DE-0..points` of [`crate::plants::marrow_ridge`]) into `dir`.
pub fn write_sine_route(dir: &Path, count: usize, samples: usize, points: usize) {
    std::fs::create_dir_all(dir).unwrap();
    let fs = 25_600.0;
    let mut manifest = String::from("file,point,taken_at,rpm\n");
    for i in 0..count {
        let amp = 0.1 + 0.001 * i as f64;
        let rec = spallcast_formats::Recording {
            channels: vec![
                (0..samples)
                    .map(|k| {
                        (amp * (2.0 * std::f64::consts::PI * 160.0 * k as f64 / fs).sin()) as f32
                    })
                    .collect(),
            ],
            sample_rate_hz: fs,
        };
        let name = format!("r{i:04}.wav");
        spallcast_formats::write_wav_f32(&dir.join(&name), &rec).unwrap();
        let (h, m) = (i / 60, i % 60);
        writeln!(
            manifest,
            "{name},PH-P1-DE-{},2026-04-0{}T{:02}:{m:02}:00+02:00,2970",
            i % points,
            1 + h / 24,
            h % 24
        )
        .unwrap();
    }
    std::fs::write(dir.join("route.csv"), manifest).unwrap();
}
