//! Rolling-element bearing kinematic frequencies (FTF, BSF, BPFO, BPFI), harmonics and sideband markers.
//!
//! Formulas (outer ring stationary, shaft on the inner ring; computed once, in
//! [`spallcast_model::FaultFactors::from_geometry`]), with `r = (d / D)·cos φ`:
//! FTF = ½(1 − r), BPFO = ½n(1 − r), BPFI = ½n(1 + r), BSF = D/(2d)·(1 − r²), all in orders of the
//! shaft speed. BSF is stored in the 1x ball-spin convention (rotation of the element about its own
//! axis); the rolling-element DEFECT impact rate is 2×BSF, so rolling-element findings search the
//! harmonics of 2×BSF (even BSF harmonics) with ±FTF sidebands.

use serde::{Deserialize, Serialize};

use crate::AnalysisError;

/// Bearing geometry. Both diameters must be in the same unit (any unit: only their ratio matters).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BearingGeometry {
    /// Number of rolling elements in one row.
    pub rolling_elements: u32,
    /// Rolling-element (ball or roller) diameter `d`.
    pub element_diameter: f64,
    /// Pitch diameter `D` (diameter of the circle through the element centres).
    pub pitch_diameter: f64,
    /// Contact angle `φ` in degrees (0 for a deep-groove ball bearing under radial load).
    pub contact_angle_deg: f64,
}

impl BearingGeometry {
    /// Checks that the geometry is physically meaningful.
    ///
    /// # Errors
    /// [`AnalysisError::BadGeometry`] when the element count is zero, a diameter is not a positive finite
    /// number, the element is not smaller than the pitch diameter, or the angle is outside 0..90°.
    pub fn validate(&self) -> Result<(), AnalysisError> {
        let bad = |why: &str| Err(AnalysisError::BadGeometry(why.to_owned()));
        if self.rolling_elements == 0 {
            return bad("the number of rolling elements must be at least 1");
        }
        if !(self.element_diameter.is_finite() && self.element_diameter > 0.0) {
            return bad("the element diameter must be a positive number");
        }
        if !(self.pitch_diameter.is_finite() && self.pitch_diameter > 0.0) {
            return bad("the pitch diameter must be a positive number");
        }
        if self.element_diameter >= self.pitch_diameter {
            return bad("the element diameter must be smaller than the pitch diameter");
        }
        if !(self.contact_angle_deg.is_finite() && (0.0..90.0).contains(&self.contact_angle_deg)) {
            return bad("the contact angle must be between 0 and 90 degrees");
        }
        Ok(())
    }

    /// Fault factors in orders of shaft speed (BSF in the 1x ball-spin convention).
    ///
    /// # Errors
    /// As [`BearingGeometry::validate`].
    pub fn factors(&self) -> Result<FaultFactors, AnalysisError> {
        self.validate()?;
        FaultFactors::from_geometry(
            self.rolling_elements,
            self.element_diameter,
            self.pitch_diameter,
            self.contact_angle_deg,
        )
        .ok_or_else(|| AnalysisError::BadGeometry("impossible bearing geometry".to_owned()))
    }
}

/// Bearing fault factors, fault frequencies and fault kinds are the shared vocabulary of
/// `spallcast-model` (where the geometry formula lives); re-exported here under their old paths.
pub use spallcast_model::{FaultFactors, FaultFrequencies, FaultKind};

/// Checks on [`FaultFactors`] that report in the analysis crate's error type.
pub trait CheckFactors {
    /// Checks that every factor is a positive finite number.
    ///
    /// # Errors
    /// [`AnalysisError::BadFactors`] naming the first bad factor.
    fn validate(&self) -> Result<(), AnalysisError>;
}

impl CheckFactors for FaultFactors {
    fn validate(&self) -> Result<(), AnalysisError> {
        match self.first_invalid() {
            Some((name, v)) => Err(AnalysisError::BadFactors(format!(
                "{name} must be a positive number, got {v}"
            ))),
            None => Ok(()),
        }
    }
}

/// Family a plot marker belongs to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum MarkerFamily {
    /// Shaft speed harmonics (1x, 2x, ...).
    Shaft,
    /// Harmonics of a fault's defect rate.
    Fault(FaultKind),
    /// A sideband of a fault harmonic.
    Sideband(FaultKind),
}

/// One fault-frequency marker for plots.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FaultMarker {
    /// Display label, e.g. "2×BPFO", "BPFI+1x", "2×BSF−FTF".
    pub label: String,
    /// Family of the marker.
    pub family: MarkerFamily,
    /// Harmonic number of the carrier (1 = fundamental).
    pub harmonic: u32,
    /// Sideband order (0 for the carrier itself, ±1, ±2 ...).
    pub sideband: i32,
    /// Marker frequency, Hz.
    pub freq_hz: f64,
}

/// Markers for shaft harmonics, every fault's harmonics and their first `sidebands` sideband pairs,
/// up to `max_hz`, sorted by frequency. Rolling-element markers are at multiples of 2×BSF.
pub fn fault_markers(
    freqs: &FaultFrequencies,
    harmonics: u32,
    sidebands: u32,
    max_hz: f64,
) -> Vec<FaultMarker> {
    let mut out = Vec::new();
    for h in 1..=harmonics {
        let f = f64::from(h) * freqs.shaft_hz;
        if f <= max_hz {
            out.push(FaultMarker {
                label: format!("{h}x"),
                family: MarkerFamily::Shaft,
                harmonic: h,
                sideband: 0,
                freq_hz: f,
            });
        }
    }
    for kind in FaultKind::ALL {
        let base = freqs.defect_rate_hz(kind);
        let name = match kind {
            FaultKind::RollingElement => "2×BSF",
            FaultKind::OuterRace => "BPFO",
            FaultKind::InnerRace => "BPFI",
            FaultKind::Cage => "FTF",
        };
        let carrier = |h: u32| {
            if h == 1 {
                name.to_owned()
            } else {
                format!("{h}×{name}")
            }
        };
        for h in 1..=harmonics {
            let f = f64::from(h) * base;
            if f <= max_hz {
                out.push(FaultMarker {
                    label: carrier(h),
                    family: MarkerFamily::Fault(kind),
                    harmonic: h,
                    sideband: 0,
                    freq_hz: f,
                });
            }
            let Some(spacing) = freqs.sideband_spacing_hz(kind) else {
                continue;
            };
            let sb_name = if kind == FaultKind::InnerRace {
                "1x"
            } else {
                "FTF"
            };
            for s in 1..=sidebands {
                for sign in [-1_i32, 1] {
                    let order = sign * s as i32;
                    let fs = f + f64::from(order) * spacing;
                    if fs > 0.0 && fs <= max_hz {
                        let mult = if s == 1 { String::new() } else { s.to_string() };
                        let op = if sign < 0 { '−' } else { '+' };
                        out.push(FaultMarker {
                            label: format!("{}{op}{mult}{sb_name}", carrier(h)),
                            family: MarkerFamily::Sideband(kind),
                            harmonic: h,
                            sideband: order,
                            freq_hz: fs,
                        });
                    }
                }
            }
        }
    }
    out.sort_by(|a, b| a.freq_hz.total_cmp(&b.freq_hz));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn geom(n: u32, d: f64, pd: f64, angle: f64) -> FaultFactors {
        BearingGeometry {
            rolling_elements: n,
            element_diameter: d,
            pitch_diameter: pd,
            contact_angle_deg: angle,
        }
        .factors()
        .unwrap()
    }

    // Best check value 1: CWRU drive-end multiples (CWRU bearing page; Smith & Randall 2015 Table 2).
    #[test]
    fn cwru_drive_end_multiples() {
        let f = geom(9, 0.3126, 1.537, 0.0);
        assert!((f.bpfo - 3.5848).abs() < 1e-4, "{}", f.bpfo);
        assert!((f.bpfi - 5.4152).abs() < 1e-4, "{}", f.bpfi);
        assert!((f.ftf - 0.39828).abs() < 5e-5, "{}", f.ftf);
        assert!((f.rolling_element_defect() - 4.7135).abs() < 1e-4);
        assert!((f.bsf - 2.3567).abs() < 1e-4);
    }

    // Best check value 2: CWRU fan-end multiples (CWRU; Smith & Randall 2015 Table 2).
    #[test]
    fn cwru_fan_end_multiples() {
        let f = geom(8, 0.2656, 1.122, 0.0);
        assert!((f.bpfo - 3.0530).abs() < 5e-4);
        assert!((f.bpfi - 4.9469).abs() < 5e-4);
        assert!((f.ftf - 0.3817).abs() < 5e-4);
        assert!((f.rolling_element_defect() - 3.9874).abs() < 5e-4);
    }

    // Best check value 3: CWRU drive end in Hz at 1772 r/min (check 1 × 1772/60; REFERENCES §1.2a table).
    #[test]
    fn cwru_drive_end_hz_at_1772_rpm() {
        let hz = geom(9, 0.3126, 1.537, 0.0).at_shaft_hz(1772.0 / 60.0);
        assert!((hz.bpfo - 105.87).abs() <= 0.02);
        assert!((hz.bpfi - 159.93).abs() <= 0.02);
        assert!((2.0 * hz.bsf - 139.20).abs() <= 0.02);
        assert!((hz.ftf - 11.76).abs() <= 0.02);
        assert!((hz.defect_rate_hz(FaultKind::RollingElement) - 139.20).abs() <= 0.02);
    }

    // Best check value 4: Curtin dataset readme (Forbes 2012), BSF in the 1x convention.
    #[test]
    fn curtin_multiples() {
        let f = geom(9, 7.9375, 38.50, 0.0);
        assert!((f.ftf - 0.3969).abs() <= 0.00005);
        assert!((f.bpfo - 3.572).abs() <= 0.0005);
        assert!((f.bpfi - 5.428).abs() <= 0.0005);
        assert!((f.bsf - 2.32).abs() <= 0.005);
    }

    // Best check value 5: MFPT geometry (V-2nd) with the formulas of REFERENCES §1.1, fr = 25 Hz.
    #[test]
    fn mfpt_frequencies() {
        let hz = geom(8, 0.235, 1.245, 0.0).at_shaft_hz(25.0);
        assert!((hz.bpfo - 81.12).abs() <= 0.01, "{}", hz.bpfo);
        assert!((hz.bpfi - 118.88).abs() <= 0.01, "{}", hz.bpfi);
        assert!((hz.ftf - 10.14).abs() <= 0.01, "{}", hz.ftf);
        assert!((hz.bsf - 63.86).abs() <= 0.01, "{}", hz.bsf);
    }

    // Best check value 6: IMS rig geometry (Qiu et al. 2006, Mem), the contact-angle case, 2000 r/min.
    #[test]
    fn ims_contact_angle_frequencies() {
        let hz = geom(16, 0.331, 2.815, 15.17).at_shaft_hz(2000.0 / 60.0);
        assert!((hz.bpfo - 236.40).abs() <= 0.05, "{}", hz.bpfo);
        assert!((hz.bpfi - 296.93).abs() <= 0.05, "{}", hz.bpfi);
        assert!((hz.bsf - 139.92).abs() <= 0.05, "{}", hz.bsf);
        assert!((hz.ftf - 14.78).abs() <= 0.05, "{}", hz.ftf);
        // Without the angle BPFO would be 235.3 Hz: the cosine matters.
        let flat = geom(16, 0.331, 2.815, 0.0).at_shaft_hz(2000.0 / 60.0);
        assert!((flat.bpfo - 235.3).abs() < 0.1);
    }

    // Best check value 7: algebraic identities (REFERENCES §1.1) for several geometries.
    #[test]
    fn algebraic_identities() {
        for (n, d, pd, a) in [
            (9, 0.3126, 1.537, 0.0),
            (16, 0.331, 2.815, 15.17),
            (13, 3.5, 25.6, 40.0),
            (7, 1.0, 9.0, 5.0),
        ] {
            let f = geom(n, d, pd, a);
            let nf = f64::from(n);
            let rel = |a: f64, b: f64| ((a - b) / b).abs();
            assert!(rel(f.bpfo + f.bpfi, nf) < 1e-12);
            assert!(rel(f.bpfo, nf * f.ftf) < 1e-12);
            assert!(rel(f.bpfi, nf * (1.0 - f.ftf)) < 1e-12);
            assert!(rel(f.rolling_element_defect(), 2.0 * f.bsf) < 1e-12);
        }
    }

    #[test]
    fn rejects_bad_geometry_and_factors() {
        let g = BearingGeometry {
            rolling_elements: 9,
            element_diameter: 2.0,
            pitch_diameter: 1.0,
            contact_angle_deg: 0.0,
        };
        assert!(g.factors().is_err());
        let g = BearingGeometry {
            rolling_elements: 0,
            element_diameter: 0.3,
            pitch_diameter: 1.0,
            contact_angle_deg: 0.0,
        };
        assert!(g.factors().is_err());
        let f = FaultFactors {
            ftf: 0.4,
            bsf: f64::NAN,
            bpfo: 3.0,
            bpfi: 5.0,
        };
        assert!(f.validate().is_err());
    }

    #[test]
    fn markers_include_harmonics_and_sidebands() {
        let hz = geom(9, 0.3126, 1.537, 0.0).at_shaft_hz(30.0);
        let m = fault_markers(&hz, 3, 1, 1000.0);
        assert!(m.windows(2).all(|w| w[0].freq_hz <= w[1].freq_hz));
        let bpfi2 = m.iter().find(|x| x.label == "2×BPFI").unwrap();
        assert!((bpfi2.freq_hz - 2.0 * hz.bpfi).abs() < 1e-9);
        let sb = m.iter().find(|x| x.label == "BPFI+1x").unwrap();
        assert!((sb.freq_hz - hz.bpfi - 30.0).abs() < 1e-9);
        let bsf = m.iter().find(|x| x.label == "2×BSF−FTF").unwrap();
        assert!((bsf.freq_hz - (2.0 * hz.bsf - hz.ftf)).abs() < 1e-9);
        assert!(m.iter().all(|x| x.freq_hz <= 1000.0));
    }
}
