//! Replacement forecast of one bearing life from its stage calls.
//!
//! The damage index of each call (dB over the life's baseline, see [`crate::stage::StageCall`]) is
//! the health indicator. Once it leaves the baseline scatter (the first prediction time, see
//! [`degradation`]) an exponential degradation model with Bayesian updating projects when it reaches
//! the stage-3 level (`replace_by`: the recommended replacement point lies between stages 2 and 3),
//! the stage-4 level (`risk_from`) and the end-of-life level (`end_of_life`), each with an 80 %
//! interval. Without growth the forecast falls back on documented stage-duration ranges (only on
//! lives observed on a plant time scale, and revised when their date passes with no progression) or
//! on a rating-life prior, and says so in `assumptions`. A life with no damage evidence (stage 0)
//! gets no `replace_by` or `risk_from`: its end-of-life guess is a prior, labelled as one.
//!
//! All times are f64 seconds on the caller's axis, so any time scale works (months in a plant,
//! minutes on a test rig). Forecasts are advisory.

mod backtest;
pub mod degradation;
pub mod governing;
mod score;
mod trend;

use serde::{Deserialize, Serialize};

pub use backtest::{Backtest, BacktestPoint, backtest_life};
pub use degradation::{
    DegradationPrior, Fpt, LifeFacts, ModelFit, detect_fpt, fit_model, fit_prior, life_facts,
    residual_life_from_finished,
};
pub use score::{
    ProjectionAt, TrackRecord, end_of_life_score, rul_percent_error, rul_score, track_record,
};
pub use trend::{LineFit, Projection, fit_line, t_quantile_90};

use crate::stage::rules;
use crate::stage::{Location, StageCall};

const DAY_S: f64 = 86_400.0;

/// How the bearing is lubricated: the shared vocabulary of `spallcast-model`.
pub use spallcast_model::Lubrication;

/// What the forecast knows about the bearing beyond its calls.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ForecastContext {
    /// Lubrication.
    pub lubrication: Lubrication,
    /// Shaft speed, Hz.
    pub shaft_hz: f64,
    /// Start of the life (installation), seconds; used with `rating_life_s`.
    pub installed_s: Option<f64>,
    /// Rating life (e.g. ISO 281 L10) in seconds, when the load is known. Used only as a prior.
    pub rating_life_s: Option<f64>,
}

/// How a forecast was made.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ForecastMethod {
    /// Trend of the damage index (older versions of the tool).
    Trend,
    /// Exponential degradation model with Bayesian updating after the first prediction time.
    Model,
    /// Stage-duration ranges from the first call of the current stage.
    StageDurations,
    /// Rating-life prior.
    RatingLife,
    /// The point is already reached (stage 3 for `replace_by`, stage 4 for both).
    Reached,
    /// Nothing to project (no damage evidence and no prior).
    None,
}

/// The forecast for one bearing life at its latest reading.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Forecast {
    /// Time of the latest reading, seconds.
    pub as_of_s: f64,
    /// Stage called at the latest reading.
    pub stage: u8,
    /// Fault location of the latest call.
    pub location: Location,
    /// Confidence of the latest call, 0..1.
    pub confidence: f64,
    /// Evidence of the latest call.
    pub evidence: Vec<String>,
    /// When to replace by (the trend reaching the stage-3 level), with its interval.
    pub replace_by: Option<Projection>,
    /// When the risk of stage 4 begins, with its interval.
    pub risk_from: Option<Projection>,
    /// How `replace_by` / `risk_from` were obtained.
    pub method: ForecastMethod,
    /// The assumptions used, as sentences.
    pub assumptions: Vec<String>,
    /// Projected end of life (the damage index reaching the end-of-life level), with its interval.
    #[serde(default)]
    pub end_of_life: Option<Projection>,
    /// How `end_of_life` was obtained.
    #[serde(default)]
    pub end_of_life_basis: EolBasis,
    /// First prediction time (damage index out of the baseline scatter), s.
    #[serde(default)]
    pub fpt_s: Option<f64>,
    /// Rating-life prior (from the rating life, when known): shown as such, never a due date.
    #[serde(default)]
    pub rating_life_prior: Option<Projection>,
    /// An earlier date passed with no progression and the forecast was moved on.
    #[serde(default)]
    pub revised: bool,
}

/// How an end-of-life projection was obtained.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum EolBasis {
    /// The degradation model fitted to this life's damage index.
    Model,
    /// No damage growth to project: a survival prior (a multiple of the span observed so far), not a date.
    SurvivalPrior,
    /// From the finished lives of the same population (without damage growth to project, or when
    /// earlier than the model): a prior, not a date.
    FinishedLives,
    /// Stage 4 without a model fit: the end is at hand.
    Reached,
    /// Nothing projected.
    #[default]
    None,
}

impl EolBasis {
    /// An end of life that is only a prior (no damage growth of this life projected), never a due date.
    pub fn is_prior(self) -> bool {
        matches!(self, Self::SurvivalPrior | Self::FinishedLives)
    }
}

fn duration_scale(ctx: &ForecastContext) -> f64 {
    let lube = match ctx.lubrication {
        Lubrication::Oil => rules::OIL_FACTOR.value,
        Lubrication::Grease => 1.0,
    };
    let speed = if ctx.shaft_hz > 0.0 && ctx.shaft_hz.is_finite() {
        rules::REFERENCE_SPEED_HZ.value / ctx.shaft_hz
    } else {
        1.0
    };
    lube * speed.clamp(0.1, 10.0)
}

fn range(from_s: f64, min_s: f64, max_s: f64) -> Projection {
    Projection {
        t_s: from_s + 0.5 * (min_s + max_s),
        lo_s: from_s + min_s,
        hi_s: Some(from_s + max_s),
    }
}

fn reached(t: f64) -> Projection {
    Projection {
        t_s: t,
        lo_s: t,
        hi_s: Some(t),
    }
}

/// Time of the first call at or above `stage` that the life still holds (the start of the current
/// run at that stage or above).
fn onset_of(calls: &[StageCall], stage: u8) -> Option<f64> {
    let last_below = calls.iter().rposition(|c| c.stage < stage);
    calls.get(last_below.map_or(0, |i| i + 1)).map(|c| c.t_s)
}

fn lube_name(l: Lubrication) -> &'static str {
    match l {
        Lubrication::Oil => "oil-fed",
        Lubrication::Grease => "grease-fed",
    }
}

fn fmt_span(s: f64) -> String {
    if s >= 2.0 * DAY_S {
        format!("{:.0} days", s / DAY_S)
    } else if s >= 2.0 * 3600.0 {
        format!("{:.1} h", s / 3600.0)
    } else {
        format!("{:.0} min", s / 60.0)
    }
}

/// Forecast at the latest of `calls` (one life, time order) with the default degradation prior.
/// `None` when there are no calls.
pub fn forecast_life(calls: &[StageCall], ctx: &ForecastContext) -> Option<Forecast> {
    forecast_life_with(calls, ctx, &DegradationPrior::default())
}

/// Forecast at the latest of `calls` with a given degradation prior (before the lubrication
/// adjustment). `None` when there are no calls.
#[allow(
    clippy::too_many_lines,
    reason = "the method cascade reads best in one place"
)]
pub fn forecast_life_with(
    calls: &[StageCall],
    ctx: &ForecastContext,
    prior: &DegradationPrior,
) -> Option<Forecast> {
    let last = calls.last()?;
    let now = last.t_s;
    let t0 = calls.first().map_or(now, |c| c.t_s);
    let span = now - t0;
    let prior = prior.clone().for_lubrication(ctx.lubrication);
    let lube = lube_name(ctx.lubrication);
    let mut assumptions = vec![format!(
        "Replacement point: damage index {:.0} dB over baseline (stage-3 onset); stage-4 risk: {:.0} dB; end of life: {:.0} dB.",
        rules::DAMAGE_STAGE3_DB.value,
        rules::DAMAGE_STAGE4_DB.value,
        prior.eol_db
    )];
    let mut out = Forecast {
        as_of_s: now,
        stage: last.stage,
        location: last.location,
        confidence: last.confidence,
        evidence: last.evidence.clone(),
        replace_by: None,
        risk_from: None,
        method: ForecastMethod::None,
        assumptions: Vec::new(),
        end_of_life: None,
        end_of_life_basis: EolBasis::None,
        fpt_s: None,
        rating_life_prior: None,
        revised: false,
    };
    if let (Some(l10), Some(installed)) = (ctx.rating_life_s, ctx.installed_s)
        && l10 > 0.0
    {
        // Single lives scatter widely around the rating life: half to twice it.
        out.rating_life_prior = Some(Projection {
            t_s: installed + l10,
            lo_s: installed + 0.5 * l10,
            hi_s: Some(installed + 2.0 * l10),
        });
    }
    let fit = fit_model(calls, &prior).filter(|f| f.rate_mean > 0.0);
    let from_lives = residual_life_from_finished(&prior.finished_lives_s).map(|r| Projection {
        t_s: now + r,
        lo_s: now + 0.5 * r,
        hi_s: None,
    });
    if let Some(f) = &fit {
        out.fpt_s = Some(f.fpt.t_s);
        assumptions.push(format!(
            "Degradation model: damage index out of the baseline scatter (above {:.1} dB, 3 sigma) since {} ago; exponential growth of the excess amplitude fitted to {} readings since then with a prior from finished lives ({lube}), time in units of the healthy span ({}); 80 % intervals.",
            f.fpt.threshold_db,
            fmt_span(now - f.fpt.t_s),
            f.n,
            fmt_span(f.unit_s)
        ));
        if let Some(p) = f.crossing(prior.eol_db).filter(|p| p.t_s > now) {
            out.end_of_life = Some(p);
            out.end_of_life_basis = EolBasis::Model;
        }
    }
    // The finished lives that lasted this long bound the model's end of life from above (a late
    // projection costs more than an early one), and stand in for it without one.
    if let Some(p) = from_lives
        && out.end_of_life.is_none_or(|m| p.t_s < m.t_s)
    {
        out.end_of_life = Some(p);
        out.end_of_life_basis = EolBasis::FinishedLives;
        assumptions.push(format!(
            "End of life from the {} finished lives of this population (the remaining life that best fits the second half of their lives; a prior, not a due date).",
            prior.finished_lives_s.len()
        ));
    }
    if out.end_of_life.is_none() && span > 0.0 {
        let r = prior.survival_ratio;
        out.end_of_life = Some(Projection {
            t_s: now + r * span,
            lo_s: now + 0.5 * r * span,
            hi_s: None,
        });
        out.end_of_life_basis = EolBasis::SurvivalPrior;
        assumptions.push(format!(
            "End of life: no damage growth to project, so only a prior ({r:.2} × the {} observed so far, {lube}); not a due date.",
            fmt_span(span)
        ));
    }
    if last.stage >= 4 {
        out.replace_by = Some(reached(onset_of(calls, 3).unwrap_or(now)));
        out.risk_from = Some(reached(onset_of(calls, 4).unwrap_or(now)));
        out.method = ForecastMethod::Reached;
        if out.end_of_life.is_none() {
            out.end_of_life = Some(reached(now));
            out.end_of_life_basis = EolBasis::Reached;
        }
        assumptions
            .push("Stage 4 reached: no prediction is meaningful; replace immediately.".to_owned());
        out.assumptions = assumptions;
        return Some(out);
    }
    if last.stage == 0 {
        assumptions.push(
            "No bearing defect evidence: no replace-by or risk date (a rating-life prior, when known, is shown only as a prior)."
                .to_owned(),
        );
        out.assumptions = assumptions;
        return Some(out);
    }
    if last.stage >= 3 {
        out.replace_by = Some(reached(onset_of(calls, 3).unwrap_or(now)));
        out.method = ForecastMethod::Reached;
        assumptions.push(
            "Stage 3 reached: the replacement point has passed; replace at the first opportunity."
                .to_owned(),
        );
    }
    if let Some(f) = &fit {
        let replace = if last.stage >= 3 {
            out.replace_by
        } else {
            f.crossing(rules::DAMAGE_STAGE3_DB.value)
        };
        let risk = f.crossing(rules::DAMAGE_STAGE4_DB.value);
        if replace.is_some() || risk.is_some() {
            out.replace_by = replace;
            out.risk_from = risk;
            if last.stage < 3 {
                out.method = ForecastMethod::Model;
            }
            out.assumptions = assumptions;
            return Some(out);
        }
    }
    // Fallbacks: the rating life as fractions per stage, else stage-duration ranges.
    if let Some(l10) = ctx.rating_life_s.filter(|l| *l > 0.0)
        && (2..=3).contains(&last.stage)
    {
        // Remaining life from the onset of the current stage as fractions of the rating life:
        // stage 2 about 5-10 %, stage 3 about 1-5 % (from memory, low confidence); the
        // replacement point (stage-3 onset) leaves about 1-5 % of it.
        let f = |r: rules::Rule| r.value * l10;
        let (s2_lo, s2_hi) = (
            f(rules::STAGE2_LIFE_FRACTION_MIN),
            f(rules::STAGE2_LIFE_FRACTION_MAX),
        );
        let (s3_lo, s3_hi) = (
            f(rules::STAGE3_LIFE_FRACTION_MIN),
            f(rules::STAGE3_LIFE_FRACTION_MAX),
        );
        if last.stage == 2 {
            let from = onset_of(calls, 2).unwrap_or(now);
            out.replace_by = Some(range(from, (s2_lo - s3_hi).max(0.0), s2_hi - s3_lo));
            out.risk_from = Some(range(from, s2_lo, s2_hi));
            out.method = ForecastMethod::RatingLife;
        } else {
            let from = onset_of(calls, 3).unwrap_or(now);
            out.risk_from = Some(range(from, s3_lo, s3_hi));
        }
        assumptions.push(format!(
            "No damage growth to fit yet: remaining life from the stage onset taken as a fraction of the rating life ({:.1} h): stage 2 about 5-10 %, stage 3 about 1-5 % (from memory).",
            l10 / 3600.0
        ));
        revise_if_passed(&mut out, &mut assumptions, now);
        out.assumptions = assumptions;
        return Some(out);
    }
    // Stage durations are plant-day figures: they apply only to a life observed on a plant time
    // scale (at least the shortest duration); a rig life of hours gets no date from them.
    if span < rules::STAGE3_DAYS_MIN.value * DAY_S {
        assumptions.push(format!(
            "No damage growth to fit yet, and this life has been observed for only {}: plant stage-duration ranges do not apply at this time scale, so no date until the damage index grows.",
            fmt_span(span)
        ));
        out.assumptions = assumptions;
        return Some(out);
    }
    let scale = duration_scale(ctx);
    let d = |r: rules::Rule| r.value * DAY_S * scale;
    let s3 = (d(rules::STAGE3_DAYS_MIN), d(rules::STAGE3_DAYS_MAX));
    let s2 = (d(rules::STAGE2_DAYS_MIN), d(rules::STAGE2_DAYS_MAX));
    let s1 = (d(rules::STAGE1_DAYS_MIN), d(rules::STAGE1_DAYS_MAX));
    let note = format!(
        "No damage growth to fit yet: stage-duration ranges used ({lube}, ×{scale:.2} for lubrication and speed {:.0} r/min against {:.0} r/min).",
        ctx.shaft_hz * 60.0,
        rules::REFERENCE_SPEED_HZ.value * 60.0
    );
    match last.stage {
        3 => {
            let from = onset_of(calls, 3).unwrap_or(now);
            out.risk_from = Some(range(from, s3.0, s3.1));
            assumptions.push(note);
        }
        2 => {
            let from = onset_of(calls, 2).unwrap_or(now);
            out.replace_by = Some(range(from, s2.0, s2.1));
            out.risk_from = Some(range(from, s2.0 + s3.0, s2.1 + s3.1));
            out.method = ForecastMethod::StageDurations;
            assumptions.push(note);
        }
        _ => {
            let from = onset_of(calls, 1).unwrap_or(now);
            out.replace_by = Some(range(from, s1.0 + s2.0, s1.1 + s2.1));
            out.risk_from = Some(range(from, s1.0 + s2.0 + s3.0, s1.1 + s2.1 + s3.1));
            out.method = ForecastMethod::StageDurations;
            assumptions.push(note);
        }
    }
    revise_if_passed(&mut out, &mut assumptions, now);
    if last.stage == 3 && out.risk_from.is_some() {
        out.method = ForecastMethod::Reached;
    }
    out.assumptions = assumptions;
    Some(out)
}

/// A fallback date whose centre has passed while the stage stayed where it was (no progression,
/// no damage growth) is moved on: the same range counted again from now, and the forecast says so.
fn revise_if_passed(out: &mut Forecast, assumptions: &mut Vec<String>, now: f64) {
    let passed = |p: &Option<Projection>| p.is_some_and(|p| p.t_s < now);
    let stale_replace = out.stage < 3 && passed(&out.replace_by);
    let stale_risk = passed(&out.risk_from);
    if !(stale_replace || stale_risk) {
        return;
    }
    let old = if stale_replace {
        out.replace_by
    } else {
        out.risk_from
    };
    let d = old.map_or(0.0, |p| (now - p.lo_s).max(0.0));
    let shift = |p: Projection| Projection {
        t_s: p.t_s + d,
        lo_s: p.lo_s + d,
        hi_s: p.hi_s.map(|h| h + d),
    };
    if stale_replace {
        out.replace_by = out.replace_by.map(shift);
    }
    out.risk_from = out.risk_from.map(shift);
    out.revised = true;
    assumptions.push(format!(
        "Revised: the earlier date ({:.0} days before this reading) passed with no progression of stage or damage index, so the range is moved on to start at this reading.",
        old.map_or(0.0, |p| (now - p.t_s) / DAY_S)
    ));
}

#[cfg(test)]
mod tests;
