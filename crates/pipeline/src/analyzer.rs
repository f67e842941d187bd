//! The reading analyzer: `spallcast_analysis::diagnose` behind the store's `ReadingAnalyzer` trait.

use std::collections::BTreeMap;

use spallcast_analysis::stage::{ReadingIndicators, ToneUse};
use spallcast_analysis::{
    DiagnoseOptions, FaultFactors, MachineGroup, Support, diagnose, stage_indicators_flat,
};
use spallcast_store::{AnalysisInput, AnalysisOutput, ReadingAnalyzer};

/// Version of the analysis recorded beside every stored result. Change it whenever the analysis or the
/// scalars it produces change: the store then recomputes older results (`Store::reanalyze_stale`).
pub const ANALYZER_VERSION: &str = "spallcast-analysis-2";

/// Runs the full diagnosis on each imported reading.
#[derive(Debug, Clone, Copy, Default)]
pub struct SpallcastAnalyzer;

impl ReadingAnalyzer for SpallcastAnalyzer {
    fn version(&self) -> String {
        ANALYZER_VERSION.to_owned()
    }

    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, String> {
        let Some(f) = input.factors else {
            return Err(
                "the bearing position has no bearing type with geometry or fault factors"
                    .to_owned(),
            );
        };
        let factors = FaultFactors {
            ftf: f.ftf,
            bsf: f.bsf,
            bpfo: f.bpfo,
            bpfi: f.bpfi,
        };
        let samples: Vec<f64> = input.samples_g.iter().map(|&v| f64::from(v)).collect();
        let options = DiagnoseOptions {
            iso_group: if input.iso_group == 1 {
                MachineGroup::Large
            } else {
                MachineGroup::Medium
            },
            iso_support: if input.iso_flexible {
                Support::Flexible
            } else {
                Support::Rigid
            },
            ..DiagnoseOptions::default()
        };
        let diagnosis = diagnose(
            &samples,
            input.sample_rate_hz,
            input.shaft_hz,
            &factors,
            &options,
        )
        .map_err(|e| format!("analysis failed: {e}"))?;
        let mut scalars: BTreeMap<String, f64> =
            stage_indicators_flat(&diagnosis).into_iter().collect();
        scalars.extend(ReadingIndicators::from_diagnosis(&diagnosis, ToneUse::Use).to_scalars());
        scalars.retain(|_, v| v.is_finite());
        let document = serde_json::to_value(&diagnosis)
            .map_err(|e| format!("analysis result not storable: {e}"))?;
        Ok(AnalysisOutput { scalars, document })
    }
}
