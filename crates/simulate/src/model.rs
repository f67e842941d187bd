//! Plain data types describing a machine, a bearing condition and bearing kinematics.

use serde::{Deserialize, Serialize};

/// Location of a local rolling-element bearing defect.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum FaultKind {
    /// Spall on the stationary outer race: impacts at BPFO, steady amplitude (fixed load zone).
    OuterRace,
    /// Spall on the rotating inner race: impacts at BPFI, amplitude-modulated at 1x as the spall
    /// passes through the load zone (sidebands at ±1x).
    InnerRace,
    /// Spall on one rolling element: impacts at 2×BSF (it strikes both races once per spin
    /// revolution), amplitude-modulated at FTF as the cage carries it through the load zone.
    RollingElement,
    /// Damaged cage: impacts once per cage revolution (FTF).
    Cage,
}

impl FaultKind {
    /// All four kinds, in a fixed order.
    pub const ALL: [Self; 4] = [
        Self::OuterRace,
        Self::InnerRace,
        Self::RollingElement,
        Self::Cage,
    ];

    /// Plain-language label, the same words the analysis crate's `diagnosis` field uses.
    pub fn label(self) -> &'static str {
        match self {
            Self::OuterRace => "outer race",
            Self::InnerRace => "inner race",
            Self::RollingElement => "rolling element",
            Self::Cage => "cage",
        }
    }
}

impl std::fmt::Display for FaultKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

/// Failure stage of a rolling-element bearing, 0 (no defect) to 4.
///
/// The four-stage model is trade practice (common practice, no source; see the project reference
/// sheet §6.1): 1 ultrasonic-band energy only, 2 the bearing rings its resonances and defect tones
/// appear in the envelope spectrum, 3 discrete defect harmonics with sidebands and a rising noise
/// floor in the ordinary spectrum, 4 broadband "haystack" and rising 1x.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub struct Stage(u8);

impl Stage {
    /// No defect.
    pub const HEALTHY: Self = Self(0);
    /// Highest stage (imminent failure).
    pub const MAX: Self = Self(4);

    /// A stage from its number; `None` above 4.
    pub fn new(stage: u8) -> Option<Self> {
        (stage <= 4).then_some(Self(stage))
    }

    /// The stage number, 0..=4.
    pub fn get(self) -> u8 {
        self.0
    }
}

impl std::fmt::Display for Stage {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}", self.0)
    }
}

/// The state of one bearing for one reading.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Condition {
    /// Defect location; ignored when `stage` is 0.
    pub fault: FaultKind,
    /// Failure stage.
    pub stage: Stage,
    /// Progress inside the stage, 0.0 (just entered) to 1.0 (about to leave). Clamped.
    pub severity: f64,
}

impl Condition {
    /// A bearing without a defect.
    pub fn healthy() -> Self {
        Self {
            fault: FaultKind::OuterRace,
            stage: Stage::HEALTHY,
            severity: 0.0,
        }
    }

    /// A defect of `fault` at `stage` with in-stage `severity` (clamped to 0..=1).
    pub fn new(fault: FaultKind, stage: Stage, severity: f64) -> Self {
        Self {
            fault,
            stage,
            severity: clamp01(severity),
        }
    }
}

pub(crate) fn clamp01(x: f64) -> f64 {
    if x.is_finite() {
        x.clamp(0.0, 1.0)
    } else {
        0.0
    }
}

/// Bearing fault factors in orders of shaft speed (multiples of 1x).
///
/// `bsf` uses the 1x ball-spin convention (rotation of an element about its own axis). The
/// rolling-element *defect* impact rate is 2×`bsf`; see [`BearingFactors::defect_order`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct BearingFactors {
    /// Fundamental train (cage) frequency.
    pub ftf: f64,
    /// Ball spin frequency, 1x convention.
    pub bsf: f64,
    /// Ball pass frequency, outer race.
    pub bpfo: f64,
    /// Ball pass frequency, inner race.
    pub bpfi: f64,
}

impl BearingFactors {
    /// Kinematic factors from geometry, with a stationary outer ring.
    ///
    /// Formulas: Randall & Antoni (2011), "Rolling element bearing diagnostics — A tutorial",
    /// MSSP 25(2), Section 2 (from memory; project reference sheet §1.1). With
    /// r = (d/D)·cos φ: FTF = (1 − r)/2, BPFO = n/2·(1 − r), BPFI = n/2·(1 + r),
    /// BSF = D/(2d)·(1 − r²).
    pub fn from_geometry(
        rolling_elements: u32,
        element_diameter_mm: f64,
        pitch_diameter_mm: f64,
        contact_angle_deg: f64,
    ) -> Self {
        let n = f64::from(rolling_elements);
        let r = element_diameter_mm / pitch_diameter_mm * contact_angle_deg.to_radians().cos();
        Self {
            ftf: 0.5 * (1.0 - r),
            bsf: pitch_diameter_mm / (2.0 * element_diameter_mm) * (1.0 - r * r),
            bpfo: 0.5 * n * (1.0 - r),
            bpfi: 0.5 * n * (1.0 + r),
        }
    }

    /// Impact rate of a defect, in orders: BPFO, BPFI, 2×BSF or FTF.
    pub fn defect_order(&self, fault: FaultKind) -> f64 {
        match fault {
            FaultKind::OuterRace => self.bpfo,
            FaultKind::InnerRace => self.bpfi,
            FaultKind::RollingElement => 2.0 * self.bsf,
            FaultKind::Cage => self.ftf,
        }
    }
}

/// A lightly damped mode (second-order resonance).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Resonance {
    /// Natural frequency, Hz.
    pub freq_hz: f64,
    /// Viscous damping ratio ζ (e.g. 0.02–0.05 for bearing housings).
    pub damping_ratio: f64,
}

/// A structural mode of the machine, excited by broadband process/flow forces.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct StructuralMode {
    /// The mode.
    pub resonance: Resonance,
    /// RMS acceleration of this mode's response, g.
    pub rms_g: f64,
}

/// Lubrication of a bearing.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Lubrication {
    /// Grease-packed.
    Grease,
    /// Oil-fed (bath, splash or circulating).
    Oil,
}

/// Everything about the machine and the measurement point the simulator needs.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MachineParams {
    /// Shaft speed at the bearing, Hz (1x).
    pub shaft_hz: f64,
    /// Fault factors of the bearing, in orders.
    pub factors: BearingFactors,
    /// 1x amplitude (peak) of a healthy machine, g. Residual unbalance.
    pub onex_g: f64,
    /// 2x amplitude (peak), g. Residual misalignment.
    pub twox_g: f64,
    /// Structural modes excited by broadband noise.
    pub structural: Vec<StructuralMode>,
    /// The bearing/housing resonance that impacts ring from stage 2 on (typically 2–4 kHz).
    pub bearing_resonance: Resonance,
    /// The ultrasonic-band resonance that impacts ring from stage 1 on (typically 25–35 kHz).
    pub ultrasonic_resonance: Resonance,
    /// RMS of the white sensor/instrument noise floor, g.
    pub noise_floor_g: f64,
}

impl MachineParams {
    /// A plausible medium pump/motor bearing position at `shaft_hz`, with the given factors.
    ///
    /// Levels are illustrative (common practice, no source): 1x 0.02 g, 2x 0.008 g, two
    /// structural modes, a 3.2 kHz bearing resonance (ζ 0.04), a 30 kHz ultrasonic resonance
    /// (ζ 0.02) and a 0.003 g noise floor.
    pub fn typical(shaft_hz: f64, factors: BearingFactors) -> Self {
        Self {
            shaft_hz,
            factors,
            onex_g: 0.02,
            twox_g: 0.008,
            structural: vec![
                StructuralMode {
                    resonance: Resonance {
                        freq_hz: 420.0,
                        damping_ratio: 0.05,
                    },
                    rms_g: 0.01,
                },
                StructuralMode {
                    resonance: Resonance {
                        freq_hz: 1350.0,
                        damping_ratio: 0.06,
                    },
                    rms_g: 0.008,
                },
            ],
            bearing_resonance: Resonance {
                freq_hz: 3200.0,
                damping_ratio: 0.04,
            },
            ultrasonic_resonance: Resonance {
                freq_hz: 30_000.0,
                damping_ratio: 0.02,
            },
            noise_floor_g: 0.003,
        }
    }
}
