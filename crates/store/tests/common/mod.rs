//! Shared helpers for the store's integration tests: an invented plant, a small analyzer, route builders.
#![allow(dead_code, clippy::unwrap_used)]

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;

use spallcast_formats::Recording;
use spallcast_store::{AnalysisInput, AnalysisOutput, ReadingAnalyzer};

/// An invented plant (no real site, person or catalogue data).
pub const PLANT: &str = r#"
[site]
name = "Tallow Creek Water Works"
timezone_offset = "+01:00"

[[bearing_types]]
designation = "TCX-209"
kind = "deep-groove ball"
rolling_elements = 9
element_diameter_mm = 12.7
pitch_diameter_mm = 65.0
contact_angle_deg = 0.0

[[bearing_types]]
designation = "TCR-310"
kind = "cylindrical roller"
factors = { ftf = 0.4, bsf = 2.3, bpfo = 5.6, bpfi = 7.4 }

[[areas]]
name = "Intake"

  [[areas.machines]]
  id = "IN-P1"
  name = "Intake pump 1"
  kind = "pump"
  nominal_rpm = 1480.0
  iso_group = 2
  iso_support = "rigid"

    [[areas.machines.bearings]]
    position = "MNDE"
    description = "Motor non-drive end"
    bearing_type = "TCX-209"
    lubrication = "grease"
    installed = "2024-02-12"
    history = [ { installed = "2022-05-01", removed = "2024-02-12", found = "outer race spall" } ]

    [[areas.machines.bearings]]
    position = "PDE"
    description = "Pump drive end"
    bearing_type = "TCR-310"
    lubrication = "oil"
    nominal_rpm = 1475.0
    installed = "2023-06-01"

    [[areas.machines.points]]
    id = "IN-P1-MNDE-H"
    bearing = "MNDE"
    direction = "H"
    sensor = "accelerometer"
    sensitivity_mv_per_g = 100.0

    [[areas.machines.points]]
    id = "IN-P1-PDE-A"
    bearing = "PDE"
    direction = "A"
    sensor = "accelerometer"

[[areas]]
name = "Filter hall"

  [[areas.machines]]
  id = "FH-F1"
  name = "Backwash fan"
  kind = "fan"
  nominal_rpm = 990.0
  iso_group = 1
  iso_support = "flexible"

    [[areas.machines.bearings]]
    position = "FDE"
    bearing_type = "TCX-209"
    lubrication = "grease"
    installed = "2025-01-20"

    [[areas.machines.points]]
    id = "FH-F1-FDE-V"
    bearing = "FDE"
    direction = "V"
    sensor = "accelerometer"
    sensitivity_mv_per_g = 50.0

[[outages]]
name = "Spring intake shutdown"
start = "2027-03-08"
end = "2027-03-12"
areas = ["Intake"]
machines = ["FH-F1"]
"#;

/// A test analyzer: RMS and peak, and a "diagnosis" that is "none" below `threshold_g` RMS and
/// "outer race" above it (an arbitrary rule for exercising the change report only).
pub struct TestAnalyzer {
    pub version: String,
    pub threshold_g: f64,
}

impl TestAnalyzer {
    pub fn new(version: &str) -> Self {
        Self {
            version: version.to_owned(),
            threshold_g: 0.5,
        }
    }
}

impl ReadingAnalyzer for TestAnalyzer {
    fn version(&self) -> String {
        self.version.clone()
    }
    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, String> {
        let n = input.samples_g.len() as f64;
        let rms = (input
            .samples_g
            .iter()
            .map(|&x| f64::from(x) * f64::from(x))
            .sum::<f64>()
            / n)
            .sqrt();
        let peak = input
            .samples_g
            .iter()
            .fold(0.0_f64, |m, &x| m.max(f64::from(x).abs()));
        let diagnosis = if rms > self.threshold_g {
            "outer race"
        } else {
            "none"
        };
        Ok(AnalysisOutput {
            scalars: BTreeMap::from([
                ("accel_rms_g".to_owned(), rms),
                ("accel_peak_g".to_owned(), peak),
            ]),
            document: serde_json::json!({ "diagnosis": diagnosis, "rms": rms, "bpfo": input.factors.map(|f| f.bpfo),
                "shaft_hz": input.shaft_hz, "iso_group": input.iso_group.number(),
                "iso_flexible": input.iso_support == spallcast_store::IsoSupport::Flexible }),
            diagnosis: Some(diagnosis.to_owned()),
        })
    }
}

/// A sine of amplitude `amp` at `freq_hz`, `n` samples at `fs`.
pub fn sine(amp: f64, freq_hz: f64, fs: f64, n: usize) -> Vec<f32> {
    (0..n)
        .map(|i| (amp * (2.0 * std::f64::consts::PI * freq_hz * i as f64 / fs).sin()) as f32)
        .collect()
}

/// Writes a mono float WAV.
pub fn write_wav(path: &Path, samples: Vec<f32>, fs: f64) {
    spallcast_formats::write_wav_f32(
        path,
        &Recording {
            channels: vec![samples],
            sample_rate_hz: fs,
        },
    )
    .unwrap();
}

/// One route.csv row.
pub struct Row<'a> {
    pub file: &'a str,
    pub point: &'a str,
    pub taken_at: &'a str,
    pub rpm: f64,
    pub units: &'a str,
    pub extra: &'a str,
}

impl<'a> Row<'a> {
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
