//! Remaining life from a health indicator: first-prediction-time detection and an exponential
//! degradation model with Bayesian updating.
//!
//! Health indicator: the damage index of each stage call (dB over the life's baseline). The first
//! prediction time (FPT) is the first reading whose index leaves the baseline scatter by
//! [`rules::FPT_SIGMA`] standard deviations (and by at least [`rules::FPT_MIN_DB`]) and stays out for
//! most of the readings since (a 3-sigma rule, common in the run-to-failure literature; from memory).
//!
//! After the FPT the excess amplitude over baseline follows an exponential model in the form of
//! Gebraeel, Lawley, Li & Ryan (2005, IIE Transactions; from memory): `S(t) = φ + θ·exp(β·t + ε)`
//! with φ the baseline level, so `L = ln(10^(dB/20) − 1)` is linear in time with slope β. Time is
//! counted in the life's own unit, the healthy span `t_fpt − t_first`, so one prior serves a monthly
//! route and a test rig at 10 s. The slope has a normal prior ([`DegradationPrior`]) updated with
//! the readings since the FPT (conjugate normal update, flat prior on the level, noise from the
//! fit's residuals); the projection of a level is where the posterior line reaches it, with an
//! 80 % interval from the slope's posterior.

use serde::{Deserialize, Serialize};

use super::{Lubrication, Projection};
use crate::stage::StageCall;
use crate::stage::rules;

/// Normal quantile of the 80 % two-sided interval (10 % and 90 % bounds).
const Z80: f64 = 1.281_551_565_5;

/// Prior of the degradation model, in the life's own time unit (the healthy span before the FPT).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DegradationPrior {
    /// Mean slope of `ln(excess amplitude ratio)` per unit of healthy span.
    pub rate_mean: f64,
    /// Its standard deviation.
    pub rate_sd: f64,
    /// Damage index at end of life, dB over baseline.
    pub eol_db: f64,
    /// Remaining life before any damage evidence, as a multiple of the span observed so far
    /// (a prior, never a due date).
    pub survival_ratio: f64,
    /// Durations (first reading to end of life), s, of finished lives of the same population: the
    /// plant's own replacement record for this kind of bearing, or a rig's other runs. Empty when
    /// there is none.
    #[serde(default)]
    pub finished_lives_s: Vec<f64>,
}

impl Default for DegradationPrior {
    fn default() -> Self {
        DegradationPrior {
            rate_mean: rules::PRIOR_RATE_MEAN.value,
            rate_sd: rules::PRIOR_RATE_SD.value,
            eol_db: rules::EOL_DB.value,
            survival_ratio: rules::PRIOR_SURVIVAL_RATIO.value,
            finished_lives_s: Vec::new(),
        }
    }
}

impl DegradationPrior {
    /// The prior for a lubrication: oil-fed lives degrade more slowly once damaged (common practice,
    /// no source; factor [`rules::OIL_FACTOR`] from memory): the prior mean slope is divided by it
    /// (same width, so the posterior is slower for oil at equal damage) and the survival ratio
    /// multiplied.
    #[must_use]
    pub fn for_lubrication(self, lubrication: Lubrication) -> DegradationPrior {
        match lubrication {
            Lubrication::Grease => self,
            Lubrication::Oil => DegradationPrior {
                rate_mean: self.rate_mean / rules::OIL_FACTOR.value,
                survival_ratio: self.survival_ratio * rules::OIL_FACTOR.value,
                ..self
            },
        }
    }
}

/// The first prediction time of a life.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Fpt {
    /// Index of the call.
    pub index: usize,
    /// Its time, s.
    pub t_s: f64,
    /// Threshold used, dB over baseline.
    pub threshold_db: f64,
}

fn mean_sd(v: &[f64]) -> (f64, f64) {
    let n = v.len() as f64;
    if v.is_empty() {
        return (0.0, 0.0);
    }
    let m = v.iter().sum::<f64>() / n;
    let var = if v.len() > 1 {
        v.iter().map(|x| (x - m).powi(2)).sum::<f64>() / (n - 1.0)
    } else {
        0.0
    };
    (m, var.sqrt())
}

/// FPT threshold of a life: baseline mean + `FPT_SIGMA`·sd of the damage index, at least `FPT_MIN_DB`.
pub fn fpt_threshold(calls: &[StageCall]) -> f64 {
    let base: Vec<f64> = calls
        .iter()
        .filter(|c| c.in_baseline)
        .map(|c| c.damage_index_db)
        .collect();
    let (m, sd) = mean_sd(&base);
    (m + rules::FPT_SIGMA.value * sd).max(rules::FPT_MIN_DB.value)
}

/// First prediction time: the earliest reading after the baseline above the threshold such that at
/// least [`rules::FPT_SHARE`] of the readings from it to the latest are above too (two at least).
pub fn detect_fpt(calls: &[StageCall]) -> Option<Fpt> {
    let thr = fpt_threshold(calls);
    let last_base = calls
        .iter()
        .rposition(|c| c.in_baseline)
        .map_or(0, |i| i + 1);
    let mut above = 0usize;
    let mut best = None;
    for i in (last_base..calls.len()).rev() {
        let up = calls[i].damage_index_db > thr;
        above += usize::from(up);
        let n = calls.len() - i;
        if up && n >= 2 && above as f64 >= rules::FPT_SHARE.value * n as f64 {
            best = Some(i);
        }
    }
    best.map(|i| Fpt {
        index: i,
        t_s: calls[i].t_s,
        threshold_db: thr,
    })
}

/// Log excess amplitude over baseline of a damage index in dB.
pub fn log_excess(db: f64) -> f64 {
    (10f64.powf(db / 20.0) - 1.0)
        .max(rules::EXCESS_MIN.value)
        .ln()
}

/// The model fitted to one life at its latest reading.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ModelFit {
    /// First prediction time.
    pub fpt: Fpt,
    /// The life's time unit (healthy span before the FPT), s.
    pub unit_s: f64,
    /// Latest reading, s.
    pub now_s: f64,
    /// Posterior line at `now_s`, `ln(excess)`.
    pub level_now: f64,
    /// Posterior mean of the slope per unit.
    pub rate_mean: f64,
    /// Posterior standard deviation of the slope.
    pub rate_sd: f64,
    /// Readings since the FPT.
    pub n: usize,
}

/// Fits the model at the latest of `calls`; `None` before the FPT.
pub fn fit_model(calls: &[StageCall], prior: &DegradationPrior) -> Option<ModelFit> {
    let fpt = detect_fpt(calls)?;
    let t0 = calls.first()?.t_s;
    let now = calls.last()?.t_s;
    let unit_s = (fpt.t_s - t0).max(f64::MIN_POSITIVE);
    let pts: Vec<(f64, f64)> = calls[fpt.index..]
        .iter()
        .map(|c| ((c.t_s - fpt.t_s) / unit_s, log_excess(c.damage_index_db)))
        .collect();
    let n = pts.len();
    let nf = n as f64;
    let tm = pts.iter().map(|p| p.0).sum::<f64>() / nf;
    let ym = pts.iter().map(|p| p.1).sum::<f64>() / nf;
    let sxx: f64 = pts.iter().map(|p| (p.0 - tm).powi(2)).sum();
    let sxy: f64 = pts.iter().map(|p| (p.0 - tm) * (p.1 - ym)).sum();
    let ols = if sxx > 0.0 { sxy / sxx } else { 0.0 };
    let resid = if n >= 3 {
        (pts.iter()
            .map(|p| (p.1 - ym - ols * (p.0 - tm)).powi(2))
            .sum::<f64>()
            / (nf - 2.0))
            .sqrt()
    } else {
        0.0
    };
    let sigma = resid.max(rules::MODEL_NOISE_MIN.value);
    let prior_prec = 1.0 / prior.rate_sd.max(1e-9).powi(2);
    let prec = sxx / sigma.powi(2) + prior_prec;
    let rate_mean = (sxy / sigma.powi(2) + prior.rate_mean * prior_prec) / prec;
    let rate_sd = prec.sqrt().recip();
    let tau_now = (now - fpt.t_s) / unit_s;
    Some(ModelFit {
        fpt,
        unit_s,
        now_s: now,
        level_now: ym + rate_mean * (tau_now - tm),
        rate_mean,
        rate_sd,
        n,
    })
}

impl ModelFit {
    /// When the damage index reaches `level_db`, with the 80 % interval from the slope's posterior;
    /// `None` when the posterior slope is not positive. Already reached: `now`.
    pub fn crossing(&self, level_db: f64) -> Option<Projection> {
        let target = log_excess(level_db);
        let gap = target - self.level_now;
        if gap <= 0.0 {
            return Some(Projection {
                t_s: self.now_s,
                lo_s: self.now_s,
                hi_s: Some(self.now_s),
            });
        }
        if self.rate_mean <= 0.0 {
            return None;
        }
        let at = |rate: f64| self.now_s + gap / rate * self.unit_s;
        let fast = self.rate_mean + Z80 * self.rate_sd;
        let slow = self.rate_mean - Z80 * self.rate_sd;
        Some(Projection {
            t_s: at(self.rate_mean),
            lo_s: at(fast),
            hi_s: (slow > 0.0).then(|| at(slow)),
        })
    }
}

/// What one finished life contributes to the prior.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LifeFacts {
    /// Slope of `ln(excess)` per unit of healthy span from the FPT to the end (least squares).
    pub rate: f64,
    /// Highest damage index of the life (reached at or near its end), dB.
    pub eol_db: f64,
    /// (end − FPT) / (FPT − first reading).
    pub survival_ratio: f64,
    /// First reading to end of life, s.
    pub life_s: f64,
}

/// Facts of one finished life (its calls up to the end of life); `None` without an FPT.
pub fn life_facts(calls: &[StageCall]) -> Option<LifeFacts> {
    let flat = DegradationPrior {
        rate_mean: 0.0,
        rate_sd: 1e12,
        ..DegradationPrior::default()
    };
    let fit = fit_model(calls, &flat)?;
    let end = calls.last()?;
    Some(LifeFacts {
        rate: fit.rate_mean,
        eol_db: calls
            .iter()
            .map(|c| c.damage_index_db)
            .fold(f64::NEG_INFINITY, f64::max),
        survival_ratio: (end.t_s - fit.fpt.t_s) / fit.unit_s,
        life_s: end.t_s - calls.first().map_or(end.t_s, |c| c.t_s),
    })
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n == 0 {
        return f64::NAN;
    }
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

/// The prior from finished lives: slope mean and standard deviation (at least half the mean), the
/// median of the lives' highest damage index (end-of-life level), the median survival ratio, and
/// the lives' durations. `None` without a life that has an FPT.
pub fn fit_prior(lives: &[LifeFacts]) -> Option<DegradationPrior> {
    if lives.is_empty() {
        return None;
    }
    let rates: Vec<f64> = lives.iter().map(|l| l.rate).collect();
    let (m, sd) = mean_sd(&rates);
    Some(DegradationPrior {
        rate_mean: m,
        rate_sd: sd.max(0.5 * m.abs()),
        eol_db: median(lives.iter().map(|l| l.eol_db).collect()),
        survival_ratio: median(lives.iter().map(|l| l.survival_ratio).collect()),
        finished_lives_s: lives.iter().map(|l| l.life_s).collect(),
    })
}

/// Remaining life from finished lives alone (no damage growth to project in this life): the
/// constant remaining life that would have scored best, under the PHM 2012 score (late punished
/// harder than early; reference sheet section 10, from memory), over the second half of each
/// finished life (50 ages each) — a bearing still running without damage growth is taken to be
/// somewhere in the second half of a life like theirs. `None` without finished lives.
pub fn residual_life_from_finished(lives_s: &[f64]) -> Option<f64> {
    let left: Vec<f64> = lives_s
        .iter()
        .filter(|t| t.is_finite() && **t > 0.0)
        .flat_map(|&t| (0..50).map(move |k| t * (0.5 - 0.01 * f64::from(k))))
        .filter(|r| *r > 0.0)
        .collect();
    let lo = left.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = left.iter().copied().fold(0.0, f64::max);
    if left.is_empty() || !(lo.is_finite() && hi > lo) {
        return None;
    }
    let gain = |c: f64| {
        left.iter()
            .map(|&r| super::rul_score(super::rul_percent_error(r, c)))
            .sum::<f64>()
    };
    (0..=300)
        .map(|k| lo * (hi / lo).powf(f64::from(k) / 300.0))
        .max_by(|a, b| gain(*a).total_cmp(&gain(*b)))
}
