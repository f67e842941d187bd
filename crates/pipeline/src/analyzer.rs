//! The reading analyzer: `spallcast_analysis::diagnose` behind the store's `ReadingAnalyzer` trait.

use std::cell::RefCell;
use std::collections::BTreeMap;

use spallcast_analysis::stage::{ReadingIndicators, ToneUse, keys};
use spallcast_analysis::{DiagnoseOptions, SpectrumEngine, diagnose_with};
use spallcast_store::{AnalysisInput, AnalysisOutput, AnalyzeError, ReadingAnalyzer};

/// Version of the analysis recorded beside every stored result: the analysis crate's
/// [`ANALYSIS_VERSION`](spallcast_analysis::ANALYSIS_VERSION), which changes whenever the diagnosis or
/// the stage indicators change; the store then recomputes older results (`Store::reanalyze_stale`).
pub const ANALYZER_VERSION: &str = spallcast_analysis::ANALYSIS_VERSION;

thread_local! {
    /// One engine per import thread: its FFT plans and windows are built once, not per reading.
    static ENGINE: RefCell<SpectrumEngine> = RefCell::new(SpectrumEngine::new());
}

/// Longest stretch of a recording that is analysed: 2^21 samples (20.5 s at 102.4 kHz, 82 s at
/// 25.6 kHz). A longer recording is analysed on its middle stretch of this length (its envelope
/// spectrum still resolves 0.05 Hz at 102.4 kHz, far finer than any fault-frequency slip), so the
/// memory of an import does not grow with a recording's length; the stored document says which
/// samples were analysed. The whole recording is still stored.
pub const MAX_ANALYSED_SAMPLES: usize = 1 << 21;

/// The stretch of `n` samples that is analysed: `(start, len)`.
pub fn analysed_segment(n: usize) -> (usize, usize) {
    if n <= MAX_ANALYSED_SAMPLES {
        (0, n)
    } else {
        ((n - MAX_ANALYSED_SAMPLES) / 2, MAX_ANALYSED_SAMPLES)
    }
}

/// Runs the full diagnosis on each imported reading.
#[derive(Debug, Clone, Copy, Default)]
pub struct SpallcastAnalyzer;

impl ReadingAnalyzer for SpallcastAnalyzer {
    fn version(&self) -> String {
        ANALYZER_VERSION.to_owned()
    }

    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, AnalyzeError> {
        let Some(factors) = input.factors else {
            return Err(AnalyzeError::NoFaultFactors);
        };
        let (start, len) = analysed_segment(input.samples_g.len());
        let samples: Vec<f64> = input.samples_g[start..start + len]
            .iter()
            .map(|&v| f64::from(v))
            .collect();
        let options = DiagnoseOptions {
            iso_group: input.iso_group,
            iso_support: input.iso_support,
            ..DiagnoseOptions::default()
        };
        let diagnosis = ENGINE
            .with(|engine| {
                diagnose_with(
                    &mut engine.borrow_mut(),
                    &samples,
                    input.sample_rate_hz,
                    input.shaft_hz,
                    &factors,
                    &options,
                )
            })
            .map_err(|e| AnalyzeError::Failed(e.to_string()))?;
        // One set of trend-scalar names (`stage.*`, see `keys`): the stage indicators, plus the peak
        // and the band energies that the stage logic does not read but the trends show.
        let mut scalars: BTreeMap<String, f64> =
            ReadingIndicators::from_diagnosis(&diagnosis, ToneUse::Use).to_scalars();
        scalars.insert(
            keys::ACCEL_PEAK_G.to_owned(),
            diagnosis.indicators.accel_peak_g,
        );
        for b in diagnosis
            .stage_indicators
            .bands
            .iter()
            .filter(|b| b.available)
        {
            scalars.insert(keys::band_rms_g(&b.name), b.rms_g);
        }
        scalars.retain(|_, v| v.is_finite());
        let mut document = serde_json::to_value(&diagnosis)
            .map_err(|e| AnalyzeError::Failed(format!("analysis result not storable: {e}")))?;
        if len < input.samples_g.len()
            && let Some(doc) = document.as_object_mut()
        {
            doc.insert(
                "analysed_samples".to_owned(),
                serde_json::json!({ "start": start, "len": len, "of": input.samples_g.len() }),
            );
        }
        Ok(AnalysisOutput {
            scalars,
            document,
            diagnosis: Some(diagnosis.diagnosis.clone()),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_recordings_are_analysed_on_their_middle_stretch() {
        assert_eq!(analysed_segment(1000), (0, 1000));
        assert_eq!(
            analysed_segment(MAX_ANALYSED_SAMPLES),
            (0, MAX_ANALYSED_SAMPLES)
        );
        let n = 61_440_000; // 10 minutes at 102.4 kHz
        let (start, len) = analysed_segment(n);
        assert_eq!(len, MAX_ANALYSED_SAMPLES);
        assert_eq!(start + len / 2, n / 2, "centred");
        assert!(start + len <= n);
    }
}
