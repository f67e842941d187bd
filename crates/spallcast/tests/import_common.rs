//! Helpers shared by the import command's tests (included with `#[path]`).
#![allow(
    clippy::expect_used,
    reason = "test code: a failure is the test failing"
)]
#![allow(dead_code, clippy::unwrap_used)]

use std::fmt::Write as _;
use std::path::Path;

/// An invented plant with `points` points on one machine's positions.
pub fn plant_text(points: usize) -> String {
    let mut t = String::from(
        r#"[site]
name = "Marrow Ridge Pumping Station"
timezone_offset = "+02:00"

[[bearing_types]]
designation = "MRB-06"
kind = "deep-groove ball"
rolling_elements = 8
element_diameter_mm = 9.5
pitch_diameter_mm = 46.0
contact_angle_deg = 0.0

[[areas]]
name = "Pump hall"
  [[areas.machines]]
  id = "PH-P1"
  name = "Booster pump"
  kind = "pump"
  nominal_rpm = 2970.0
  iso_group = 2
  iso_support = "rigid"
    [[areas.machines.bearings]]
    position = "DE"
    bearing_type = "MRB-06"
    lubrication = "grease"
    installed = "2025-03-01"
"#,
    );
    for i in 0..points {
        write!(
            t,
            "    [[areas.machines.points]]\n    id = \"PH-P1-DE-{i}\"\n    bearing = \"DE\"\n    direction = \"H\"\n    sensor = \"accelerometer\"\n"
        )
        .unwrap();
    }
    t
}

/// Writes `count` WAV recordings of `samples` samples each plus route.csv (one reading per point
/// and minute) into `dir`.
pub fn write_route(dir: &Path, count: usize, samples: usize, points: usize) {
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
