//! A hardened test corpus (not the demo): single readings with what real plants add on top of the
//! bearing signal, for scoring fault-location calls.
//!
//! Each reading draws, deterministically from its seed:
//! - a sample rate of 25.6 or 102.4 kHz, 8–16 rolling elements, 900–3600 r/min;
//! - a bearing resonance anywhere in about 0.9–11 kHz (capped below the anti-alias limit);
//! - a gear mesh on the same shaft (integer tooth count, mesh harmonics), amplitude-modulated by 1x;
//! - random, non-periodic knocks (Poisson arrivals) ringing structural resonances in 0.5–9 kHz, often
//!   stronger than the bearing impacts so that raw kurtosis favours their band;
//! - strong noise-excited low structural modes;
//! - weak early faults (stage 2 at low severity, in extra sensor noise);
//! - the simulator's own slip (1–2 %), load-zone modulation of inner-race impacts at 1x and of
//!   rolling-element impacts at the cage rate (FTF).
//!
//! The levels are illustrative choices (common practice, no source), not measured data.

use std::f64::consts::TAU;

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;

use crate::error::SimError;
use crate::model::{
    BearingFactors, Condition, FaultKind, MachineParams, Resonance, Stage, StructuralMode,
};
use crate::signal::{ring_kernel, simulate};

/// What was added to one corpus reading besides the bearing signal.
#[derive(Debug, Clone, PartialEq)]
pub struct CorpusExtras {
    /// Gear tooth count on the shaft (mesh at `teeth` × 1x), or 0 for no gear.
    pub gear_teeth: u32,
    /// Peak amplitude of the mesh fundamental, g.
    pub gear_g: f64,
    /// Knock arrivals per second (0 for none).
    pub knock_rate_hz: f64,
    /// Peak amplitude of a knock, g.
    pub knock_g: f64,
    /// Structural resonances the knocks ring, Hz.
    pub knock_modes_hz: Vec<f64>,
}

/// One reading of the corpus with its truth.
#[derive(Debug, Clone)]
pub struct CorpusReading {
    /// Index in the corpus.
    pub index: usize,
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Shaft speed, Hz (what a tachometer would give; the defect rates slip against it).
    pub shaft_hz: f64,
    /// Rolling elements.
    pub rolling_elements: u32,
    /// Kinematic fault factors, orders (BSF 1x convention).
    pub factors: BearingFactors,
    /// Bearing resonance the impacts ring, Hz.
    pub bearing_resonance_hz: f64,
    /// The truth (stage 0 = healthy).
    pub condition: Condition,
    /// Whether the fault was drawn as a weak early one.
    pub weak: bool,
    /// Interference added.
    pub extras: CorpusExtras,
    /// Acceleration, g.
    pub samples: Vec<f32>,
}

/// Generates `count` readings from `seed`. Readings cycle through healthy, stage 1, and stage 2–3
/// faults of every location (cage included), so any `count` of 12 or more holds every kind.
///
/// # Errors
/// [`SimError::InvalidParameter`] only if a drawn parameter were invalid (never for valid seeds).
pub fn hard_corpus(count: usize, seed: u64) -> Result<Vec<CorpusReading>, SimError> {
    (0..count).map(|i| corpus_reading(i, seed)).collect()
}

/// Slot `i` of the corpus cycle: `None` for healthy, else a fault kind and stage.
fn slot(i: usize) -> (Option<FaultKind>, u8) {
    // 12-slot cycle: 3 healthy, 1 stage 1, 8 stage 2–3 (two of each location).
    let kinds = [
        FaultKind::OuterRace,
        FaultKind::InnerRace,
        FaultKind::RollingElement,
        FaultKind::Cage,
    ];
    match i % 12 {
        0..=2 => (None, 0),
        3 => (Some(kinds[(i / 12) % 4]), 1),
        k => (Some(kinds[(k - 4) % 4]), if k < 8 { 2 } else { 3 }),
    }
}

fn corpus_reading(index: usize, seed: u64) -> Result<CorpusReading, SimError> {
    let rseed = seed
        .wrapping_mul(0x9E37_79B9_7F4A_7C15)
        .wrapping_add(index as u64);
    let mut rng = ChaCha8Rng::seed_from_u64(rseed);
    let fs = if rng.random::<f64>() < 0.5 {
        25_600.0
    } else {
        102_400.0
    };
    let n_samples = if fs < 50_000.0 { 65_536 } else { 131_072 };
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
    let limit = 0.42 * fs;
    let bearing_resonance_hz = rng.random_range(900.0..11_000.0_f64).min(limit);

    let (kind, stage) = slot(index);
    let weak = stage == 2 && rng.random::<f64>() < 0.4;
    let severity = if weak {
        rng.random_range(0.0..0.15)
    } else {
        rng.random_range(0.1..0.9)
    };
    let condition = kind.map_or_else(Condition::healthy, |k| {
        Condition::new(k, Stage::new(stage).unwrap_or(Stage::HEALTHY), severity)
    });

    let mut params = MachineParams::typical(shaft_hz, factors);
    params.bearing_resonance = Resonance {
        freq_hz: bearing_resonance_hz,
        damping_ratio: rng.random_range(0.02..0.06),
    };
    params.onex_g = rng.random_range(0.01..0.08);
    params.noise_floor_g = if weak {
        rng.random_range(0.006..0.012)
    } else {
        rng.random_range(0.002..0.006)
    };
    // Strong, noise-excited low structural modes: a "low band" with plenty of energy.
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
    let mut x: Vec<f64> = simulate(&params, &condition, fs, n_samples, rseed ^ 0x5A5A)?
        .into_iter()
        .map(f64::from)
        .collect();

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
    if gear_teeth > 0 {
        let depth: f64 = rng.random_range(0.2..0.8);
        let phases: [f64; 4] = [
            rng.random::<f64>() * TAU,
            rng.random::<f64>() * TAU,
            rng.random::<f64>() * TAU,
            rng.random::<f64>() * TAU,
        ];
        add_gear_mesh(
            &mut x, fs, shaft_hz, gear_teeth, gear_g, depth, &phases, limit,
        );
    }

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
    let mut knock_modes_hz = Vec::new();
    if knock_rate_hz > 0.0 {
        let modes = rng.random_range(1..=3);
        for _ in 0..modes {
            knock_modes_hz.push(rng.random_range(500.0..9000.0_f64).min(limit));
        }
        add_knocks(
            &mut x,
            fs,
            knock_rate_hz,
            knock_g,
            &knock_modes_hz,
            &mut rng,
        );
    }

    Ok(CorpusReading {
        index,
        sample_rate_hz: fs,
        shaft_hz,
        rolling_elements: elements,
        factors,
        bearing_resonance_hz,
        condition,
        weak,
        extras: CorpusExtras {
            gear_teeth,
            gear_g,
            knock_rate_hz,
            knock_g,
            knock_modes_hz,
        },
        samples: x.into_iter().map(|v| v as f32).collect(),
    })
}

/// Gear mesh on the bearing's shaft: harmonics 1–4 of `teeth`·1x with falling amplitude, all
/// amplitude-modulated by 1x (eccentricity of the gear; common practice, no source).
#[allow(
    clippy::too_many_arguments,
    reason = "one plain synthesis step with its parameters spelled out"
)]
pub(crate) fn add_gear_mesh(
    x: &mut [f64],
    fs: f64,
    shaft_hz: f64,
    teeth: u32,
    amp_g: f64,
    depth: f64,
    phases: &[f64; 4],
    limit: f64,
) {
    let mesh = f64::from(teeth) * shaft_hz;
    for (i, v) in x.iter_mut().enumerate() {
        let t = i as f64 / fs;
        let am = 1.0 + depth * (TAU * shaft_hz * t + phases[0]).cos();
        let mut s = 0.0;
        for h in 1..=4_u32 {
            let f = f64::from(h) * mesh;
            if f >= limit {
                break;
            }
            s += (TAU * f * t + phases[h as usize - 1]).sin() / f64::from(h);
        }
        *v += amp_g * am * s;
    }
}

/// Poisson-arriving knocks, each ringing one of `modes_hz` (chosen at random) with a random amplitude.
pub(crate) fn add_knocks(
    x: &mut [f64],
    fs: f64,
    rate_hz: f64,
    amp_g: f64,
    modes_hz: &[f64],
    rng: &mut ChaCha8Rng,
) {
    let kernels: Vec<Vec<f64>> = modes_hz
        .iter()
        .map(|&f| {
            ring_kernel(
                Resonance {
                    freq_hz: f,
                    damping_ratio: 0.02,
                },
                fs,
            )
        })
        .collect();
    if kernels.is_empty() {
        return;
    }
    let end_s = x.len() as f64 / fs;
    let mut t = 0.0;
    loop {
        let u: f64 = rng.random_range(1e-9..1.0);
        t += -u.ln() / rate_hz;
        if t >= end_s {
            break;
        }
        let k = &kernels[rng.random_range(0..kernels.len())];
        let e: f64 = rng.sample(StandardNormal);
        let a = amp_g * (0.4 * e).exp();
        let start = (t * fs) as usize;
        for (v, kv) in x[start..].iter_mut().zip(k) {
            *v += a * kv;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corpus_is_deterministic_and_covers_every_kind() {
        let a = hard_corpus(24, 3).unwrap();
        let b = hard_corpus(24, 3).unwrap();
        assert_eq!(a[5].samples, b[5].samples);
        for kind in [
            FaultKind::OuterRace,
            FaultKind::InnerRace,
            FaultKind::RollingElement,
            FaultKind::Cage,
        ] {
            assert!(
                a.iter()
                    .any(|r| r.condition.stage.get() >= 2 && r.condition.fault == kind),
                "{kind}"
            );
        }
        assert!(a.iter().any(|r| r.condition.stage == Stage::HEALTHY));
        for r in &a {
            assert!(r.samples.iter().all(|v| v.is_finite()));
            assert!((8..=16).contains(&r.rolling_elements));
            assert!((15.0..=60.0).contains(&r.shaft_hz));
            assert!(r.bearing_resonance_hz < 0.42 * r.sample_rate_hz + 1e-9);
        }
    }
}
