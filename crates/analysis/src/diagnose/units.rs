//! Display units of the diagnosis.

use serde::{Deserialize, Serialize};

use crate::spectrum::{Quantity, STANDARD_GRAVITY};

/// Acceleration display unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum AccelUnit {
    /// Standard gravity units.
    #[default]
    G,
    /// Metres per second squared.
    MetresPerSecond2,
}

/// Velocity display unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum VelocityUnit {
    /// Millimetres per second.
    #[default]
    MmPerS,
    /// Inches per second.
    InPerS,
}

impl AccelUnit {
    /// Symbol for reports.
    pub fn symbol(self) -> &'static str {
        match self {
            Self::G => "g",
            Self::MetresPerSecond2 => "m/s²",
        }
    }
    pub(super) fn quantity(self) -> Quantity {
        match self {
            Self::G => Quantity::AccelerationG,
            Self::MetresPerSecond2 => Quantity::AccelerationMS2,
        }
    }
    pub(super) fn convert_g(self, v: f64) -> f64 {
        match self {
            Self::G => v,
            Self::MetresPerSecond2 => v * STANDARD_GRAVITY,
        }
    }
}

impl VelocityUnit {
    /// Symbol for reports.
    pub fn symbol(self) -> &'static str {
        match self {
            Self::MmPerS => "mm/s",
            Self::InPerS => "in/s",
        }
    }
    pub(super) fn quantity(self) -> Quantity {
        match self {
            Self::MmPerS => Quantity::VelocityMmS,
            Self::InPerS => Quantity::VelocityInS,
        }
    }
    pub(super) fn convert_mm_s(self, v: f64) -> f64 {
        match self {
            Self::MmPerS => v,
            Self::InPerS => v / 25.4,
        }
    }
}

/// Units used for display values and plotted spectra (the stable JSON fields stay in g and mm/s).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
pub struct DisplayUnits {
    /// Acceleration unit.
    pub acceleration: AccelUnit,
    /// Velocity unit.
    pub velocity: VelocityUnit,
}
