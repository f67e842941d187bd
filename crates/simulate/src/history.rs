//! Hardened machines for monthly histories (not the demo): one measurement point whose bearing, speed,
//! resonances and interference are drawn once from a seed and kept for the whole life, while the fault
//! progresses and each reading draws its own noise and knocks.
//!
//! The interference is that of the hardened location corpus ([`crate::hard_corpus`]): a bearing
//! resonance anywhere in about 0.9–11 kHz, strong noise-excited low structural modes, a gear mesh on
//! the same shaft modulated by 1x (on 6 machines in 10), Poisson knocks ringing structural resonances
//! in 0.5–9 kHz (on 6 in 10), 8–16 rolling elements, 900–3600 r/min and a noise floor up to 4× the
//! typical one. Sampled at 102.4 kHz so that the ultrasonic band of stage 1 is inside the record.
//! The levels are illustrative choices (common practice, no source), not measured data.

use std::f64::consts::TAU;

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::corpus::{CorpusExtras, add_gear_mesh, add_knocks};
use crate::error::SimError;
use crate::model::{BearingFactors, Condition, MachineParams, Resonance, StructuralMode};
use crate::signal::simulate;

/// One hardened measurement point, fixed for a life.
#[derive(Debug, Clone, PartialEq)]
pub struct HardMachine {
    /// The simulator's machine (bearing, speed, resonances, noise).
    pub params: MachineParams,
    /// Sample rate of every reading, Hz.
    pub sample_rate_hz: f64,
    /// Samples per reading.
    pub samples: usize,
    /// Gear mesh and knocks added to every reading.
    pub extras: CorpusExtras,
    gear_depth: f64,
    gear_phases: [f64; 4],
}

/// Draws a hardened measurement point from `seed`.
pub fn hard_machine(seed: u64) -> HardMachine {
    let mut rng = ChaCha8Rng::seed_from_u64(seed ^ 0x4849_5354_4F52_5921);
    let fs = 102_400.0;
    let limit = 0.42 * fs;
    let rpm: f64 = rng.random_range(900.0..3600.0);
    let shaft_hz = rpm / 60.0;
    let elements: u32 = rng.random_range(8..=16);
    let ratio: f64 = rng.random_range(0.14..0.30);
    let angle: f64 = if rng.random::<f64>() < 0.6 {
        0.0
    } else {
        rng.random_range(5.0..20.0)
    };
    let factors = BearingFactors::from_geometry(elements, ratio * 100.0, 100.0, angle);
    let mut params = MachineParams::typical(shaft_hz, factors);
    params.bearing_resonance = Resonance {
        freq_hz: rng.random_range(900.0..11_000.0),
        damping_ratio: rng.random_range(0.02..0.06),
    };
    params.onex_g = rng.random_range(0.01..0.08);
    params.noise_floor_g = rng.random_range(0.002..0.012);
    params.structural = vec![
        StructuralMode {
            resonance: Resonance {
                freq_hz: rng.random_range(150.0..600.0),
                damping_ratio: 0.05,
            },
            rms_g: rng.random_range(0.01..0.05),
        },
        StructuralMode {
            resonance: Resonance {
                freq_hz: rng.random_range(600.0..1500.0),
                damping_ratio: 0.04,
            },
            rms_g: rng.random_range(0.01..0.04),
        },
    ];
    let gear_teeth = if rng.random::<f64>() < 0.6 {
        rng.random_range(17..=61)
    } else {
        0
    };
    let gear_g = if gear_teeth > 0 {
        rng.random_range(0.03..0.3)
    } else {
        0.0
    };
    let gear_depth = rng.random_range(0.2..0.8);
    let gear_phases = [(); 4].map(|()| rng.random::<f64>() * TAU);
    let knock_rate_hz = if rng.random::<f64>() < 0.6 {
        rng.random_range(0.5..5.0)
    } else {
        0.0
    };
    let knock_g = if knock_rate_hz > 0.0 {
        rng.random_range(0.3..3.0)
    } else {
        0.0
    };
    let modes = if knock_rate_hz > 0.0 {
        rng.random_range(1..=3)
    } else {
        0
    };
    let knock_modes_hz = (0..modes)
        .map(|_| rng.random_range(500.0..9000.0_f64).min(limit))
        .collect();
    HardMachine {
        params,
        sample_rate_hz: fs,
        samples: 65_536,
        extras: CorpusExtras {
            gear_teeth,
            gear_g,
            knock_rate_hz,
            knock_g,
            knock_modes_hz,
        },
        gear_depth,
        gear_phases,
    }
}

impl HardMachine {
    /// Shaft speed, Hz.
    pub fn shaft_hz(&self) -> f64 {
        self.params.shaft_hz
    }

    /// One reading (acceleration, g) of the bearing in `condition`; `seed` draws its noise and knocks.
    ///
    /// # Errors
    /// [`SimError::InvalidParameter`] only if a drawn parameter were invalid (never for valid seeds).
    pub fn record(&self, condition: &Condition, seed: u64) -> Result<Vec<f32>, SimError> {
        let fs = self.sample_rate_hz;
        let mut x: Vec<f64> = simulate(&self.params, condition, fs, self.samples, seed)?
            .into_iter()
            .map(f64::from)
            .collect();
        let e = &self.extras;
        if e.gear_teeth > 0 {
            add_gear_mesh(
                &mut x,
                fs,
                self.params.shaft_hz,
                e.gear_teeth,
                e.gear_g,
                self.gear_depth,
                &self.gear_phases,
                0.42 * fs,
            );
        }
        if e.knock_rate_hz > 0.0 {
            let mut rng = ChaCha8Rng::seed_from_u64(seed ^ 0x4B4E_4F43_4B53);
            add_knocks(
                &mut x,
                fs,
                e.knock_rate_hz,
                e.knock_g,
                &e.knock_modes_hz,
                &mut rng,
            );
        }
        Ok(x.into_iter().map(|v| v as f32).collect())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{FaultKind, Stage};

    #[test]
    fn a_machine_is_fixed_by_its_seed_and_its_readings_by_theirs() {
        let a = hard_machine(5);
        assert_eq!(a, hard_machine(5));
        assert_ne!(a, hard_machine(6));
        let c = Condition::new(
            FaultKind::OuterRace,
            Stage::new(2).unwrap_or(Stage::MAX),
            0.5,
        );
        let r1 = a.record(&c, 1).unwrap_or_default();
        assert_eq!(r1.len(), a.samples);
        assert_eq!(r1, a.record(&c, 1).unwrap_or_default());
        assert_ne!(r1, a.record(&c, 2).unwrap_or_default());
        assert!(r1.iter().all(|v| v.is_finite()));
    }
}
