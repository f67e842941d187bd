//! Replay of a replaced bearing's life: how early each stage was flagged and how each reading's
//! forecast compared with the actual replacement.

use serde::{Deserialize, Serialize};

use super::{ForecastContext, Projection, forecast_life};
use crate::stage::{LifeReading, StageOptions, assess_life};

/// The forecast made at one reading of the replayed life.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BacktestPoint {
    /// Reading index.
    pub index: usize,
    /// Reading time, s.
    pub t_s: f64,
    /// Stage called then.
    pub stage: u8,
    /// `replace_by` forecast then.
    pub replace_by: Option<Projection>,
    /// Forecast minus actual replacement, s (negative: the forecast asked for replacement earlier).
    pub error_s: Option<f64>,
    /// The actual replacement fell inside the forecast's interval.
    pub covered: bool,
}

/// Result of replaying one life.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Backtest {
    /// Actual replacement (end of life), s.
    pub replaced_s: f64,
    /// First time each stage (index 1..=4; index 0 unused) was called, s.
    pub first_call_s: [Option<f64>; 5],
    /// How long before the replacement each stage was first called, s.
    pub lead_s: [Option<f64>; 5],
    /// One point per reading.
    pub points: Vec<BacktestPoint>,
    /// Median of |error| over the readings that had a `replace_by`, s.
    pub median_abs_error_s: Option<f64>,
    /// Fraction of those readings whose interval covered the replacement.
    pub coverage: Option<f64>,
}

/// Replays `readings` (one replaced life, time order) with the calls and forecasts the tool would
/// have made at each reading, against the actual replacement time `replaced_s`.
pub fn backtest_life(
    readings: &[LifeReading],
    options: &StageOptions,
    ctx: &ForecastContext,
    replaced_s: f64,
) -> Backtest {
    let calls = assess_life(readings, options);
    let mut first_call_s = [None; 5];
    for c in &calls {
        for slot in first_call_s
            .iter_mut()
            .take(usize::from(c.stage.min(4)) + 1)
            .skip(1)
        {
            if slot.is_none() {
                *slot = Some(c.t_s);
            }
        }
    }
    let lead_s = first_call_s.map(|t| t.map(|t| replaced_s - t));
    let points: Vec<BacktestPoint> = (0..calls.len())
        .filter_map(|i| {
            let f = forecast_life(&calls[..=i], ctx)?;
            let c = &calls[i];
            let error_s = f.replace_by.map(|p| p.t_s - replaced_s);
            let covered = f
                .replace_by
                .is_some_and(|p| p.lo_s <= replaced_s && p.hi_s.is_none_or(|h| replaced_s <= h));
            Some(BacktestPoint {
                index: i,
                t_s: c.t_s,
                stage: c.stage,
                replace_by: f.replace_by,
                error_s,
                covered,
            })
        })
        .collect();
    let mut errs: Vec<f64> = points
        .iter()
        .filter_map(|p| p.error_s.map(f64::abs))
        .collect();
    errs.sort_by(f64::total_cmp);
    let median_abs_error_s = (!errs.is_empty()).then(|| errs[errs.len() / 2]);
    let with = points.iter().filter(|p| p.replace_by.is_some()).count();
    let coverage =
        (with > 0).then(|| points.iter().filter(|p| p.covered).count() as f64 / with as f64);
    Backtest {
        replaced_s,
        first_call_s,
        lead_s,
        points,
        median_abs_error_s,
        coverage,
    }
}
