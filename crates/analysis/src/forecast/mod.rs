//! Replacement forecast of one bearing life from its stage calls.
//!
//! The damage index of each call (dB over the life's baseline, see [`crate::stage::StageCall`]) is
//! trended over the most recent readings with a least-squares line (log-linear growth of the
//! amplitude) and an 80 % prediction interval. `replace_by` is when the trend reaches the stage-3
//! level (the recommended replacement point lies between stages 2 and 3); `risk_from` is when it
//! reaches the stage-4 level. With too few readings, or no growth yet, the forecast falls back on
//! documented stage-duration ranges adjusted for lubrication and speed (or on a rating-life prior when
//! the caller knows one) and says so in `assumptions`.
//!
//! All times are f64 seconds on the caller's axis, so any time scale works (months in a plant,
//! minutes on a test rig). Forecasts are advisory.

mod backtest;
mod score;
mod trend;

use serde::{Deserialize, Serialize};

pub use backtest::{Backtest, BacktestPoint, backtest_life};
pub use score::{rul_percent_error, rul_score};
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
    /// Trend of the damage index.
    Trend,
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

/// Fits the damage-index trend over the recent readings outside the baseline.
fn trend_fit(calls: &[StageCall]) -> Option<LineFit> {
    let window = rules::TREND_WINDOW.value as usize;
    let recent: Vec<&StageCall> = calls.iter().filter(|c| !c.in_baseline).collect();
    let recent = &recent[recent.len().saturating_sub(window)..];
    if (recent.len() as f64) < rules::TREND_MIN_READINGS.value {
        return None;
    }
    let t: Vec<f64> = recent.iter().map(|c| c.t_s).collect();
    let y: Vec<f64> = recent.iter().map(|c| c.damage_index_db).collect();
    fit_line(&t, &y)
}

/// Forecast at the latest of `calls` (one life, time order). `None` when there are no calls.
#[allow(
    clippy::too_many_lines,
    reason = "the method cascade reads best in one place"
)]
pub fn forecast_life(calls: &[StageCall], ctx: &ForecastContext) -> Option<Forecast> {
    let last = calls.last()?;
    let now = last.t_s;
    let mut assumptions = vec![format!(
        "Replacement point: damage index {:.0} dB over baseline (stage-3 onset); stage-4 risk: {:.0} dB.",
        rules::DAMAGE_STAGE3_DB.value,
        rules::DAMAGE_STAGE4_DB.value
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
    };
    if last.stage >= 4 {
        out.replace_by = Some(reached(onset_of(calls, 3).unwrap_or(now)));
        out.risk_from = Some(reached(onset_of(calls, 4).unwrap_or(now)));
        out.method = ForecastMethod::Reached;
        assumptions
            .push("Stage 4 reached: no prediction is meaningful; replace immediately.".to_owned());
        out.assumptions = assumptions;
        return Some(out);
    }
    let span = calls.first().map_or(0.0, |c| now - c.t_s);
    let fit = trend_fit(calls).filter(|f| {
        f.slope > 0.0
            && f.slope > f.slope_se()
            && last.damage_index_db >= rules::TREND_FLOOR_DB.value
            && f.predict(now) >= rules::TREND_FLOOR_DB.value
    });
    if last.stage >= 3 {
        out.replace_by = Some(reached(onset_of(calls, 3).unwrap_or(now)));
        out.method = ForecastMethod::Reached;
        assumptions.push(
            "Stage 3 reached: the replacement point has passed; replace at the first opportunity."
                .to_owned(),
        );
    }
    if let Some(fit) = fit {
        // Search far enough ahead for slow trends: many times the life seen so far.
        let horizon = (20.0 * span).max(365.0 * DAY_S);
        let replace = if last.stage >= 3 {
            out.replace_by
        } else {
            fit.crossing(rules::DAMAGE_STAGE3_DB.value, now, horizon)
        };
        let risk = fit.crossing(rules::DAMAGE_STAGE4_DB.value, now, horizon);
        if replace.is_some() || risk.is_some() {
            assumptions.push(format!(
                "Trend: damage index grows {:.2} dB per day over the last {} readings (log-linear growth), 80 % prediction interval.",
                fit.slope * DAY_S,
                fit.n
            ));
            out.replace_by = replace;
            out.risk_from = risk;
            if last.stage < 3 {
                out.method = ForecastMethod::Trend;
            }
            out.assumptions = assumptions;
            return Some(out);
        }
    }
    // Fallbacks.
    if let (Some(l10), Some(installed)) = (ctx.rating_life_s, ctx.installed_s)
        && l10 > 0.0
        && last.stage <= 1
    {
        // Stage 3 begins with about 1-5 % of the rating life left, stage 4 with about 1 %; single
        // lives scatter widely around L10, so the interval spans half to twice the central value.
        let centre_replace = installed
            + (1.0
                - 0.5
                    * (rules::STAGE3_LIFE_FRACTION_MIN.value
                        + rules::STAGE3_LIFE_FRACTION_MAX.value))
                * l10;
        let centre_risk = installed + (1.0 - rules::STAGE3_LIFE_FRACTION_MIN.value) * l10;
        let proj = |c: f64| {
            let age = c - installed;
            Projection {
                t_s: c.max(now),
                lo_s: (installed + 0.5 * age).max(now),
                hi_s: Some((installed + 2.0 * age).max(now)),
            }
        };
        out.replace_by = Some(proj(centre_replace));
        out.risk_from = Some(proj(centre_risk));
        out.method = ForecastMethod::RatingLife;
        assumptions.push(format!(
            "Too few readings with damage growth to fit a trend: projected from the rating life ({:.1} h) as a prior; single lives scatter widely around it (interval ×0.5 to ×2).",
            l10 / 3600.0
        ));
        out.assumptions = assumptions;
        return Some(out);
    }
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
            "Too few readings with damage growth to fit a trend: remaining life from the stage onset taken as a fraction of the rating life ({:.1} h): stage 2 about 5-10 %, stage 3 about 1-5 % (from memory).",
            l10 / 3600.0
        ));
        out.assumptions = assumptions;
        return Some(out);
    }
    let scale = duration_scale(ctx);
    let lube = match ctx.lubrication {
        Lubrication::Oil => "oil-fed",
        Lubrication::Grease => "grease-fed",
    };
    let d = |r: rules::Rule| r.value * DAY_S * scale;
    let s3 = (d(rules::STAGE3_DAYS_MIN), d(rules::STAGE3_DAYS_MAX));
    let s2 = (d(rules::STAGE2_DAYS_MIN), d(rules::STAGE2_DAYS_MAX));
    let s1 = (d(rules::STAGE1_DAYS_MIN), d(rules::STAGE1_DAYS_MAX));
    let note = format!(
        "Too few readings with damage growth to fit a trend: stage-duration ranges used ({lube}, ×{scale:.2} for lubrication and speed {:.0} r/min against {:.0} r/min).",
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
        1 => {
            let from = onset_of(calls, 1).unwrap_or(now);
            out.replace_by = Some(range(from, s1.0 + s2.0, s1.1 + s2.1));
            out.risk_from = Some(range(from, s1.0 + s2.0 + s3.0, s1.1 + s2.1 + s3.1));
            out.method = ForecastMethod::StageDurations;
            assumptions.push(note);
        }
        _ => {
            assumptions
                .push("No bearing defect evidence and no growth: no date projected.".to_owned());
        }
    }
    if last.stage == 3 && out.risk_from.is_some() {
        out.method = ForecastMethod::Reached;
    }
    out.assumptions = assumptions;
    Some(out)
}

#[cfg(test)]
mod tests;
