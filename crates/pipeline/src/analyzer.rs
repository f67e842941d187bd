//! The reading analyzer: `spallcast_analysis::diagnose` behind the store's `ReadingAnalyzer` trait.

use std::cell::RefCell;
use std::collections::BTreeMap;

use spallcast_analysis::stage::{ReadingIndicators, ToneUse, keys};
use spallcast_analysis::{DiagnoseOptions, SpectrumEngine, diagnose_with};
use spallcast_store::{AnalysisInput, AnalysisOutput, ReadingAnalyzer};

/// Version of the analysis recorded beside every stored result. Change it whenever the analysis or the
/// scalars it produces change: the store then recomputes older results (`Store::reanalyze_stale`).
pub const ANALYZER_VERSION: &str = "spallcast-analysis-3";

thread_local! {
    /// One engine per import thread: its FFT plans and windows are built once, not per reading.
    static ENGINE: RefCell<SpectrumEngine> = RefCell::new(SpectrumEngine::new());
}

/// Runs the full diagnosis on each imported reading.
#[derive(Debug, Clone, Copy, Default)]
pub struct SpallcastAnalyzer;

impl ReadingAnalyzer for SpallcastAnalyzer {
    fn version(&self) -> String {
        ANALYZER_VERSION.to_owned()
    }

    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, String> {
        let Some(factors) = input.factors else {
            return Err(
                "the bearing position has no bearing type with geometry or fault factors"
                    .to_owned(),
            );
        };
        let samples: Vec<f64> = input.samples_g.iter().map(|&v| f64::from(v)).collect();
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
            .map_err(|e| format!("analysis failed: {e}"))?;
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
        let document = serde_json::to_value(&diagnosis)
            .map_err(|e| format!("analysis result not storable: {e}"))?;
        Ok(AnalysisOutput {
            scalars,
            document,
            diagnosis: Some(diagnosis.diagnosis.clone()),
        })
    }
}
