//! Bearing fault factors, fault frequencies and fault locations.
//!
//! Kinematic formulas (outer ring stationary, shaft on the inner ring, no slip), with
//! `r = (d / D)·cos φ`: FTF = ½(1 − r), BPFO = ½n(1 − r), BPFI = ½n(1 + r), BSF = D/(2d)·(1 − r²), all
//! in orders of the shaft speed. BSF is in the 1x ball-spin convention (rotation of the element about
//! its own axis); the rolling-element DEFECT impact rate is 2×BSF.

use serde::{Deserialize, Serialize};

/// Bearing fault factors in ORDERS of shaft speed (multiples of 1x). `bsf` is the 1x ball-spin factor.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FaultFactors {
    /// Fundamental train (cage) frequency factor.
    pub ftf: f64,
    /// Ball spin frequency factor, 1x convention (element rotation about its own axis).
    pub bsf: f64,
    /// Ball pass frequency, outer race.
    pub bpfo: f64,
    /// Ball pass frequency, inner race.
    pub bpfi: f64,
}

impl FaultFactors {
    /// Factors from geometry with the kinematic formulas in the module doc. Both diameters in the same
    /// unit (only their ratio matters). Returns `None` for impossible geometry: no elements, a
    /// non-positive or non-finite diameter, an element not smaller than the pitch diameter, or an angle
    /// outside 0..90°.
    pub fn from_geometry(
        rolling_elements: u32,
        element_diameter: f64,
        pitch_diameter: f64,
        contact_angle_deg: f64,
    ) -> Option<FaultFactors> {
        let valid = rolling_elements > 0
            && element_diameter.is_finite()
            && pitch_diameter.is_finite()
            && contact_angle_deg.is_finite()
            && element_diameter > 0.0
            && pitch_diameter > element_diameter
            && (0.0..90.0).contains(&contact_angle_deg);
        if !valid {
            return None;
        }
        let n = f64::from(rolling_elements);
        let r = element_diameter / pitch_diameter * contact_angle_deg.to_radians().cos();
        Some(FaultFactors {
            ftf: 0.5 * (1.0 - r),
            bsf: pitch_diameter / (2.0 * element_diameter) * (1.0 - r * r),
            bpfo: 0.5 * n * (1.0 - r),
            bpfi: 0.5 * n * (1.0 + r),
        })
    }

    /// The first factor (name, value) that is not a positive finite number, if any.
    pub fn first_invalid(&self) -> Option<(&'static str, f64)> {
        [
            ("ftf", self.ftf),
            ("bsf", self.bsf),
            ("bpfo", self.bpfo),
            ("bpfi", self.bpfi),
        ]
        .into_iter()
        .find(|(_, v)| !(v.is_finite() && *v > 0.0))
    }

    /// True when all four factors are finite and positive.
    pub fn is_valid(&self) -> bool {
        self.first_invalid().is_none()
    }

    /// Rolling-element defect impact rate in orders: 2×BSF.
    pub fn rolling_element_defect(&self) -> f64 {
        2.0 * self.bsf
    }

    /// Fault frequencies in Hz at a shaft speed in Hz.
    pub fn at_shaft_hz(&self, shaft_hz: f64) -> FaultFrequencies {
        FaultFrequencies {
            shaft_hz,
            ftf: self.ftf * shaft_hz,
            bsf: self.bsf * shaft_hz,
            bpfo: self.bpfo * shaft_hz,
            bpfi: self.bpfi * shaft_hz,
        }
    }
}

/// Fault frequencies in Hz at one shaft speed. `bsf` is the 1x ball-spin frequency.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct FaultFrequencies {
    /// Shaft rotation frequency (1x), Hz.
    pub shaft_hz: f64,
    /// Cage frequency, Hz.
    pub ftf: f64,
    /// Ball spin frequency (1x convention), Hz.
    pub bsf: f64,
    /// Outer-race ball pass frequency, Hz.
    pub bpfo: f64,
    /// Inner-race ball pass frequency, Hz.
    pub bpfi: f64,
}

impl FaultFrequencies {
    /// Repetition frequency (Hz) of impacts for a fault location: BPFO, BPFI, 2×BSF or FTF.
    pub fn defect_rate_hz(&self, kind: FaultKind) -> f64 {
        match kind {
            FaultKind::OuterRace => self.bpfo,
            FaultKind::InnerRace => self.bpfi,
            FaultKind::RollingElement => 2.0 * self.bsf,
            FaultKind::Cage => self.ftf,
        }
    }

    /// Spacing (Hz) of the modulation sidebands expected around a fault's harmonics:
    /// 1x for the inner race (the defect turns with the shaft), FTF for the outer race and rolling
    /// elements (load zone / cage carry), none (`None`) for the cage.
    pub fn sideband_spacing_hz(&self, kind: FaultKind) -> Option<f64> {
        match kind {
            FaultKind::InnerRace => Some(self.shaft_hz),
            FaultKind::OuterRace | FaultKind::RollingElement => Some(self.ftf),
            FaultKind::Cage => None,
        }
    }
}

/// One of the four kinematic fault locations of a rolling-element bearing (each has its own defect
/// frequency). [`Location`] adds "unknown" and "none" for calls.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FaultKind {
    /// Outer-race defect (BPFO family).
    OuterRace,
    /// Inner-race defect (BPFI family, ±1x sidebands).
    InnerRace,
    /// Rolling-element defect (2×BSF family, ±FTF sidebands).
    RollingElement,
    /// Cage defect (FTF family).
    Cage,
}

impl FaultKind {
    /// All fault kinds, in a fixed order.
    pub const ALL: [Self; 4] = [
        Self::OuterRace,
        Self::InnerRace,
        Self::RollingElement,
        Self::Cage,
    ];

    /// Human label: "outer race", "inner race", "rolling element", "cage".
    pub fn label(self) -> &'static str {
        match self {
            Self::OuterRace => "outer race",
            Self::InnerRace => "inner race",
            Self::RollingElement => "rolling element",
            Self::Cage => "cage",
        }
    }

    /// Short family tag used in markers and scalar names: "bpfo", "bpfi", "bsf2", "ftf".
    pub fn tag(self) -> &'static str {
        match self {
            Self::OuterRace => "bpfo",
            Self::InnerRace => "bpfi",
            Self::RollingElement => "bsf2",
            Self::Cage => "ftf",
        }
    }

    /// The defect tone the location is searched at: "BPFO", "BPFI", "2×BSF", "FTF".
    pub fn tone_name(self) -> &'static str {
        match self {
            Self::OuterRace => "BPFO",
            Self::InnerRace => "BPFI",
            Self::RollingElement => "2×BSF",
            Self::Cage => "FTF",
        }
    }

    /// Parses [`FaultKind::label`] or [`FaultKind::tag`].
    pub fn parse(text: &str) -> Option<Self> {
        Self::ALL
            .into_iter()
            .find(|k| k.label() == text || k.tag() == text)
    }
}

/// Where on the bearing the evidence of a call points: one of the kinematic [`FaultKind`]s, or
/// "unknown" (damage evidence naming no defect frequency) or "none". Serialised as its
/// [`name`](Location::name) ("outer race", ..., "unknown", "none").
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum Location {
    /// Outer race (BPFO family).
    #[serde(rename = "outer race")]
    OuterRace,
    /// Inner race (BPFI family, ±1x sidebands).
    #[serde(rename = "inner race")]
    InnerRace,
    /// Rolling element (2×BSF family, ±FTF sidebands).
    #[serde(rename = "rolling element")]
    RollingElement,
    /// Cage (FTF family).
    #[serde(rename = "cage")]
    Cage,
    /// Damage evidence that names no defect frequency (broadband, band energies, statistics).
    #[serde(rename = "unknown")]
    Unknown,
    /// No bearing defect evidence.
    #[serde(rename = "none")]
    None,
}

impl From<FaultKind> for Location {
    fn from(kind: FaultKind) -> Self {
        match kind {
            FaultKind::OuterRace => Location::OuterRace,
            FaultKind::InnerRace => Location::InnerRace,
            FaultKind::RollingElement => Location::RollingElement,
            FaultKind::Cage => Location::Cage,
        }
    }
}

impl Location {
    /// The four kinematic locations, in the order of their scalar-name prefixes.
    pub const KINEMATIC: [Location; 4] = [
        Location::OuterRace,
        Location::InnerRace,
        Location::RollingElement,
        Location::Cage,
    ];

    /// The kinematic fault kind, `None` for [`Location::Unknown`] and [`Location::None`].
    pub fn fault_kind(self) -> Option<FaultKind> {
        match self {
            Location::OuterRace => Some(FaultKind::OuterRace),
            Location::InnerRace => Some(FaultKind::InnerRace),
            Location::RollingElement => Some(FaultKind::RollingElement),
            Location::Cage => Some(FaultKind::Cage),
            Location::Unknown | Location::None => None,
        }
    }

    /// Human name ("outer race", ..., "unknown", "none").
    pub fn name(self) -> &'static str {
        match self {
            Location::Unknown => "unknown",
            Location::None => "none",
            _ => self.fault_kind().map_or("none", FaultKind::label),
        }
    }

    /// The defect tone the location is searched at ("-" for unknown and none).
    pub fn tone_name(self) -> &'static str {
        self.fault_kind().map_or("-", FaultKind::tone_name)
    }

    /// Short prefix used in scalar names (`bpfo`, `bpfi`, `bsf2`, `ftf`, `unknown`, `none`).
    pub fn key(self) -> &'static str {
        match self {
            Location::Unknown => "unknown",
            Location::None => "none",
            _ => self.fault_kind().map_or("none", FaultKind::tag),
        }
    }

    /// Parses [`Location::name`] back (also accepts the `key` form).
    pub fn parse(text: &str) -> Option<Location> {
        [
            Location::OuterRace,
            Location::InnerRace,
            Location::RollingElement,
            Location::Cage,
            Location::Unknown,
            Location::None,
        ]
        .into_iter()
        .find(|l| l.name() == text || l.key() == text)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn factors_from_curtin_geometry() {
        // Curtin University open bearing dataset readme (Forbes 2012, CC BY 4.0), via REFERENCES.md
        // §1.2(c): n = 9, d = 7.9375 mm, D = 38.50 mm, φ = 0; published FTF 0.3969, BPFO 3.572,
        // BPFI 5.428, BSF 2.32 (1x convention).
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
        assert!((f.rolling_element_defect() - 4.7135).abs() < 2e-3);
    }

    #[test]
    fn impossible_geometry_is_none() {
        assert!(FaultFactors::from_geometry(0, 7.0, 38.0, 0.0).is_none());
        assert!(FaultFactors::from_geometry(9, 40.0, 38.0, 0.0).is_none());
        assert!(FaultFactors::from_geometry(9, 7.0, 38.0, 95.0).is_none());
        assert!(FaultFactors::from_geometry(9, f64::NAN, 38.0, 0.0).is_none());
        let mut f = FaultFactors::from_geometry(9, 7.0, 38.0, 0.0).unwrap();
        assert!(f.is_valid());
        f.bpfi = -1.0;
        assert_eq!(f.first_invalid(), Some(("bpfi", -1.0)));
    }

    #[test]
    fn locations_and_kinds_share_one_spelling() {
        for kind in FaultKind::ALL {
            let loc = Location::from(kind);
            assert_eq!(loc.fault_kind(), Some(kind));
            assert_eq!(loc.name(), kind.label());
            assert_eq!(loc.key(), kind.tag());
            assert_eq!(Location::parse(kind.label()), Some(loc));
            assert_eq!(FaultKind::parse(kind.tag()), Some(kind));
            // The serialised name is the human label, as stored in stage records.
            assert_eq!(
                serde_json::to_string(&loc).unwrap(),
                format!("\"{}\"", kind.label())
            );
        }
        assert_eq!(Location::Unknown.fault_kind(), None);
        assert_eq!(Location::parse("none"), Some(Location::None));
        assert_eq!(Location::Cage.tone_name(), "FTF");
    }
}
