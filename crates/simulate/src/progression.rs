//! Fault progression: days since onset, lubrication and speed → (stage, severity).

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::model::{Lubrication, Stage};

/// Shaft speed at which the stage-duration ranges below apply, r/min.
pub const REFERENCE_RPM: f64 = 1500.0;

/// Ranges (min, max) of the stage durations of a grease-lubricated bearing at [`REFERENCE_RPM`],
/// in days, for stages 1, 2, 3, 4.
///
/// Common practice, no source (project reference sheet §9: "months" between the first envelope
/// tones and failure, about six to eight months often quoted for stage 2). The stage 1, 3 and 4
/// spans are from memory of trade rules of thumb, chosen so that stage 3 is weeks to a few months
/// and stage 4 days to weeks.
pub const GREASE_STAGE_DAYS: [(f64, f64); 4] =
    [(60.0, 180.0), (150.0, 240.0), (30.0, 90.0), (5.0, 21.0)];

/// Range of the factor by which an oil-fed bearing's stages last longer than a grease-fed one's.
///
/// Common practice, no source (reference sheet §9: oil flushes debris and carries heat away, so
/// damaged oil-fed bearings outlast grease-fed ones). The 1.6–2.4 span is our own choice.
pub const OIL_LIFE_FACTOR: (f64, f64) = (1.6, 2.4);

/// Durations of the four stages of one bearing's fault, in *equivalent days*: days of running at
/// [`REFERENCE_RPM`]. Running faster wears through a stage proportionally sooner (damage grows
/// per over-rolling, i.e. per revolution; from memory).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Progression {
    /// Equivalent days spent in stages 1, 2, 3 and 4.
    pub stage_days: [f64; 4],
}

impl Progression {
    /// Draw stage durations for a bearing with `lubrication`, deterministically from `seed`.
    ///
    /// Each stage is drawn uniformly from [`GREASE_STAGE_DAYS`]; for oil every stage is then
    /// multiplied by one factor drawn from [`OIL_LIFE_FACTOR`]. The uniform draws are the same
    /// for both lubrications at the same seed, so oil vs grease at one seed isolates the effect.
    pub fn draw(lubrication: Lubrication, seed: u64) -> Self {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let mut stage_days = [0.0; 4];
        for (d, (lo, hi)) in stage_days.iter_mut().zip(GREASE_STAGE_DAYS) {
            *d = rng.random_range(lo..hi);
        }
        let oil: f64 = rng.random_range(OIL_LIFE_FACTOR.0..OIL_LIFE_FACTOR.1);
        if lubrication == Lubrication::Oil {
            for d in &mut stage_days {
                *d *= oil;
            }
        }
        Self { stage_days }
    }

    /// Fixed durations (equivalent days), e.g. for a scripted scenario. Non-finite or
    /// non-positive entries become 1 day.
    pub fn from_stage_days(stage_days: [f64; 4]) -> Self {
        Self {
            stage_days: stage_days.map(|d| if d.is_finite() && d > 0.0 { d } else { 1.0 }),
        }
    }

    /// Convert calendar days run at a constant `rpm` to equivalent days.
    pub fn equivalent_days(days: f64, rpm: f64) -> f64 {
        days * (rpm / REFERENCE_RPM)
    }

    /// Stage and in-stage severity after `days_since_onset` at a mean shaft speed of `mean_rpm`.
    pub fn at(&self, days_since_onset: f64, mean_rpm: f64) -> (Stage, f64) {
        self.at_equivalent_days(Self::equivalent_days(days_since_onset, mean_rpm))
    }

    /// Stage and in-stage severity after `equivalent_days` since fault onset. Before onset (≤ 0)
    /// the bearing is healthy; past the end of stage 4 it stays at stage 4, severity 1.
    pub fn at_equivalent_days(&self, equivalent_days: f64) -> (Stage, f64) {
        if equivalent_days.is_nan() || equivalent_days <= 0.0 {
            return (Stage::HEALTHY, 0.0);
        }
        let mut start = 0.0;
        for (i, d) in self.stage_days.iter().enumerate() {
            if equivalent_days < start + d {
                let stage = Stage::new(i as u8 + 1).unwrap_or(Stage::MAX);
                return (stage, (equivalent_days - start) / d);
            }
            start += d;
        }
        (Stage::MAX, 1.0)
    }

    /// Equivalent days from onset until `stage` begins (0 for stages 0 and 1).
    pub fn days_to_stage(&self, stage: Stage) -> f64 {
        let k = usize::from(stage.get().saturating_sub(1));
        self.stage_days.iter().take(k).sum()
    }
}
