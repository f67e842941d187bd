//! Small deterministic analyzers for import tests: RMS and peak of the waveform, no signal processing.

use std::collections::BTreeMap;

use spallcast_store::{AnalysisInput, AnalysisOutput, AnalyzeError, ReadingAnalyzer};

/// RMS and peak of `samples`, the sum of squares divided by `n`.
fn rms_and_peak(samples: &[f32], n: f64) -> (f64, f64) {
    let rms = (samples
        .iter()
        .map(|&x| f64::from(x) * f64::from(x))
        .sum::<f64>()
        / n)
        .sqrt();
    let peak = samples
        .iter()
        .fold(0.0_f64, |m, &x| m.max(f64::from(x).abs()));
    (rms, peak)
}

/// A test analyzer: RMS and peak, and a "diagnosis" that is "none" below `threshold_g` RMS and
/// "outer race" above it (an arbitrary rule for exercising the change report only).
pub struct TestAnalyzer {
    /// The analyzer version it reports.
    pub version: String,
    /// RMS (g) above which the diagnosis is "outer race".
    pub threshold_g: f64,
}

impl TestAnalyzer {
    /// Version `version`, threshold 0.5 g.
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
    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, AnalyzeError> {
        let n = input.samples_g.len() as f64;
        let (rms, peak) = rms_and_peak(input.samples_g, n);
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

/// A small deterministic analyzer for the hostile-input tests: RMS and peak of the waveform (an empty
/// one counts as one sample), diagnosis always "none".
pub struct RmsAnalyzer;

impl ReadingAnalyzer for RmsAnalyzer {
    fn version(&self) -> String {
        "hardening-rms-1".to_owned()
    }

    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, AnalyzeError> {
        let n = input.samples_g.len().max(1) as f64;
        let (rms, peak) = rms_and_peak(input.samples_g, n);
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
