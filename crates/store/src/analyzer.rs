//! The analyzer injected into the store, and bearing fault factors.
//!
//! The store does not depend on the analysis crate: whoever opens the store hands it a
//! [`ReadingAnalyzer`], and the store records the analyzer's [`version`](ReadingAnalyzer::version)
//! beside every result so that [`Store::reanalyze_stale`](crate::Store::reanalyze_stale) can recompute
//! results written by another version.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// Bearing fault factors in ORDERS of shaft speed (multiples of 1x).
///
/// `bsf` is the ball-spin frequency in the 1x convention (rotation of a rolling element about its own
/// axis); the rolling-element defect impact rate is `2 × bsf`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FaultFactors {
    /// Fundamental train (cage) frequency, orders.
    pub ftf: f64,
    /// Ball spin frequency (1x convention), orders.
    pub bsf: f64,
    /// Ball pass frequency, outer race, orders.
    pub bpfo: f64,
    /// Ball pass frequency, inner race, orders.
    pub bpfi: f64,
}

impl FaultFactors {
    /// Factors from geometry with the usual kinematic formulas for a stationary outer ring (no slip):
    /// with r = (d/D)·cos φ, FTF = (1 − r)/2, BPFO = n(1 − r)/2, BPFI = n(1 + r)/2,
    /// BSF = D/(2d)·(1 − r²). Returns `None` for impossible geometry.
    pub fn from_geometry(
        rolling_elements: u32,
        element_diameter_mm: f64,
        pitch_diameter_mm: f64,
        contact_angle_deg: f64,
    ) -> Option<FaultFactors> {
        let valid = rolling_elements > 0
            && element_diameter_mm.is_finite()
            && pitch_diameter_mm.is_finite()
            && contact_angle_deg.is_finite()
            && element_diameter_mm > 0.0
            && pitch_diameter_mm > element_diameter_mm
            && (0.0..90.0).contains(&contact_angle_deg);
        if !valid {
            return None;
        }
        let n = f64::from(rolling_elements);
        let ratio = element_diameter_mm / pitch_diameter_mm * contact_angle_deg.to_radians().cos();
        Some(FaultFactors {
            ftf: 0.5 * (1.0 - ratio),
            bsf: pitch_diameter_mm / (2.0 * element_diameter_mm) * (1.0 - ratio * ratio),
            bpfo: 0.5 * n * (1.0 - ratio),
            bpfi: 0.5 * n * (1.0 + ratio),
        })
    }

    /// True when all four factors are finite and positive.
    pub fn is_valid(&self) -> bool {
        [self.ftf, self.bsf, self.bpfo, self.bpfi]
            .iter()
            .all(|v| v.is_finite() && *v > 0.0)
    }
}

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
    /// ISO 20816-3 machine group (1 or 2).
    pub iso_group: u8,
    /// True for a flexible support (ISO 20816-3), false for rigid.
    pub iso_flexible: bool,
}

/// What the analyzer returns for one reading.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct AnalysisOutput {
    /// Named indicators for trends, e.g. `"accel_rms_g"`. Stored in `reading_scalar`.
    pub scalars: BTreeMap<String, f64>,
    /// The full result (findings etc.), stored as JSON in `analysis.document`.
    pub document: serde_json::Value,
}

/// The analysis run on every imported reading. Implemented by the binary with the analysis crate;
/// tests use small analyzers of their own.
pub trait ReadingAnalyzer: Sync {
    /// Version string stored beside every result; results of other versions are recomputed by
    /// [`Store::reanalyze_stale`](crate::Store::reanalyze_stale).
    fn version(&self) -> String;
    /// Analyses one reading. An `Err` rejects the reading with that message as the reason.
    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, String>;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn factors_from_curtin_geometry() {
        // Curtin University open bearing dataset readme (Forbes 2012, CC BY 4.0), via
        // /work/shared/REFERENCES.md §1.2(c): n = 9, d = 7.9375 mm, D = 38.50 mm, φ = 0;
        // published FTF 0.3969, BPFO 3.572, BPFI 5.428, BSF 2.32 (1x convention).
        let f = FaultFactors::from_geometry(9, 7.9375, 38.50, 0.0).unwrap();
        assert!((f.ftf - 0.3969).abs() < 5e-4, "{f:?}");
        assert!((f.bpfo - 3.572).abs() < 5e-3, "{f:?}");
        assert!((f.bpfi - 5.428).abs() < 5e-3, "{f:?}");
        assert!((f.bsf - 2.32).abs() < 5e-3, "{f:?}");
        // Exact identities (Randall & Antoni 2011, Eqs. 1-4): BPFO + BPFI = n, BPFO = n·FTF.
        assert!((f.bpfo + f.bpfi - 9.0).abs() < 1e-12);
        assert!((f.bpfo - 9.0 * f.ftf).abs() < 1e-12);
    }

    #[test]
    fn factors_from_cwru_drive_end_geometry_with_inches() {
        // CWRU drive-end bearing, REFERENCES.md §1.2(a): BPFI 5.4152, BPFO 3.5848, FTF 0.39828,
        // rolling element 4.7135 = 2×BSF. Units cancel, so inches work as well as millimetres.
        let f = FaultFactors::from_geometry(9, 0.3126, 1.537, 0.0).unwrap();
        assert!((f.bpfi - 5.4152).abs() < 2e-3);
        assert!((f.bpfo - 3.5848).abs() < 2e-3);
        assert!((f.ftf - 0.39828).abs() < 2e-4);
        assert!((2.0 * f.bsf - 4.7135).abs() < 2e-3);
    }

    #[test]
    fn impossible_geometry_is_none() {
        assert!(FaultFactors::from_geometry(0, 7.0, 38.0, 0.0).is_none());
        assert!(FaultFactors::from_geometry(9, 40.0, 38.0, 0.0).is_none());
        assert!(FaultFactors::from_geometry(9, 7.0, 38.0, 95.0).is_none());
        assert!(FaultFactors::from_geometry(9, f64::NAN, 38.0, 0.0).is_none());
    }
}
