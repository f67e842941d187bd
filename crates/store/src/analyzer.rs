//! The analyzer injected into the store.
//!
//! The store does not depend on the analysis crate: whoever opens the store hands it a
//! [`ReadingAnalyzer`], and the store records the analyzer's [`version`](ReadingAnalyzer::version)
//! beside every result so that [`Store::reanalyze_stale`](crate::Store::reanalyze_stale) can recompute
//! results written by another version.

use std::collections::BTreeMap;

/// Bearing fault factors (orders of shaft speed, BSF in the 1x convention) and the geometry formula:
/// shared vocabulary (`spallcast-model`).
pub use spallcast_model::FaultFactors;
use spallcast_model::{MachineGroup, Support};

/// One reading handed to the analyzer.
#[derive(Debug, Clone, Copy)]
pub struct AnalysisInput<'a> {
    /// The waveform in g (standard gravity 9.80665 m/s²).
    pub samples_g: &'a [f32],
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Shaft speed at the point, Hz.
    pub shaft_hz: f64,
    /// Fault factors of the bearing type installed at the point's position, if known.
    pub factors: Option<FaultFactors>,
    /// ISO 20816-3 machine group.
    pub iso_group: MachineGroup,
    /// ISO 20816-3 support class.
    pub iso_support: Support,
}

/// What the analyzer returns for one reading.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct AnalysisOutput {
    /// Named indicators for trends, e.g. `"accel_rms_g"`. Stored in `reading_scalar`.
    pub scalars: BTreeMap<String, f64>,
    /// The full result (findings etc.), stored as JSON in `analysis.document`. The store never reads
    /// inside it.
    pub document: serde_json::Value,
    /// The reading's diagnosis label (e.g. "outer race", "none"), stored in `analysis.diagnosis` and
    /// compared with the point's previous reading to list finding changes after an import.
    pub diagnosis: Option<String>,
}

/// Why a reading could not be analysed; the import rejects the reading with this as its reason.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum AnalyzeError {
    /// The reading's bearing position has no bearing type with geometry or fault factors.
    #[error("the bearing position has no bearing type with geometry or fault factors")]
    NoFaultFactors,
    /// The analysis refused the samples (too short, a bad rate, ...): what it said.
    #[error("{0}")]
    Failed(String),
}

/// The analysis run on every imported reading. Implemented by the binary with the analysis crate;
/// tests use small analyzers of their own.
pub trait ReadingAnalyzer: Sync {
    /// Version string stored beside every result; results of other versions are recomputed by
    /// [`Store::reanalyze_stale`](crate::Store::reanalyze_stale).
    fn version(&self) -> String;
    /// Analyses one reading. An `Err` rejects the reading with its message as the reason.
    ///
    /// # Errors
    /// Why the reading cannot be analysed.
    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, AnalyzeError>;
}
