//! Stage assessment of one bearing life: stage 0 (no bearing defect evidence) to 4, the fault
//! location, a confidence and the evidence as short sentences an analyst can check against the plots.
//!
//! The input is the life's readings in time order, each a set of absolute [`ReadingIndicators`]. A
//! baseline is formed per life (the readings the analyst marks, else the first few), and every
//! indicator is also expressed against it in dB ([`RelativeIndicators`]). The calls are causal: the
//! call at reading `i` uses readings `0..=i` only (plus baseline readings the analyst marked), so a
//! replay of the history gives the calls the tool would have made at the time.
//!
//! The stages follow the four-stage model of rolling-element bearing failure (common practice):
//! 1 ultrasonic-band energy only; 2 resonances ring and defect tones appear in the envelope spectrum;
//! 3 discrete defect harmonics with sidebands and a rising noise floor; 4 tones fade into broadband
//! noise and 1x rises. Every stage threshold lives in [`rules`]; the confidence numbers in
//! `evaluate.rs` (a base per kind of call, less per limit, more per supporting indicator) are a ranking
//! heuristic, not thresholds, and are not in the table. Where a recording cannot show a stage (no
//! ultrasonic bandwidth for stage 1, no fault factors for a location) the call says so in `limits`.
//!
//! Calls are advisory: a person decides, isolates and locks out the machine before any work on it.

mod evaluate;
mod from_diagnosis;
mod indicators;
mod life_location;
pub mod rules;

use serde::{Deserialize, Serialize};

pub use from_diagnosis::ToneUse;
pub use indicators::{
    Baseline, DbForm, INDICATORS, IndicatorDef, Location, ReadingIndicators, RelativeForm,
    RelativeIndicators, ToneEvidence, db_over, keys, median,
};
pub use life_location::{LifeLocation, LocationSupport, LocationTally, life_location};

/// One reading of a bearing life, as the assessment sees it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LifeReading {
    /// Time of the reading in seconds on any common axis (Unix seconds in the plant, elapsed seconds
    /// on a test rig).
    pub t_s: f64,
    /// Its absolute indicators.
    pub indicators: ReadingIndicators,
    /// The analyst marked it as part of the life's baseline.
    pub baseline_mark: bool,
}

/// The call for one reading.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StageCall {
    /// Position of the reading in the life (0-based, time order).
    pub index: usize,
    /// Time of the reading, seconds (same axis as [`LifeReading::t_s`]).
    pub t_s: f64,
    /// The stage called, 0..=4 (0: no bearing defect evidence).
    pub stage: u8,
    /// The stage this reading alone shows, before the confirmation ratchet.
    pub raw_stage: u8,
    /// Where the evidence points.
    pub location: Location,
    /// Confidence in the call, 0..1.
    pub confidence: f64,
    /// Evidence as short sentences.
    pub evidence: Vec<String>,
    /// What this recording cannot show (so the call does not guess).
    pub limits: Vec<String>,
    /// Indicators in dB over the life's baseline.
    pub relative: RelativeIndicators,
    /// Damage index, dB over baseline: the noise-floor rise between tones when the fault factors
    /// are known, else the largest rise of the overall, resonance-region and noise-floor levels. The
    /// forecast trends it.
    pub damage_index_db: f64,
    /// The reading is part of the baseline.
    pub in_baseline: bool,
}

/// Options of the assessment. Every window is a share of the time this life has been observed so
/// far (first reading to the reading being called), so the same life gives the same calls at any
/// reading density and on any time scale (a monthly route or a test rig at 10 s).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StageOptions {
    /// Share of the observed span, from the first reading, whose readings form the baseline when
    /// none is marked (the first reading always counts).
    pub baseline_fraction: f64,
    /// Trailing confirmation and hold window as a share of the observed span.
    pub confirm_fraction: f64,
    /// Share of the readings in the confirmation window that must show a stage for it to hold.
    pub confirm_share: f64,
    /// Trailing hold window (hysteresis) as a share of the observed span.
    pub hold_fraction: f64,
    /// Share of the readings in the hold window that must show a stage for it to be held.
    pub hold_share: f64,
}

impl Default for StageOptions {
    fn default() -> Self {
        StageOptions {
            baseline_fraction: rules::BASELINE_FRACTION.value,
            confirm_fraction: rules::CONFIRM_FRACTION.value,
            confirm_share: rules::CONFIRM_SHARE.value,
            hold_fraction: rules::HOLD_FRACTION.value,
            hold_share: rules::HOLD_SHARE.value,
        }
    }
}

/// Indices of the readings forming the baseline as seen at reading `at`: the marked ones, else
/// those within the first `baseline_fraction` of the span observed up to `at` (at least the first).
pub fn baseline_indices_at(
    readings: &[LifeReading],
    options: &StageOptions,
    at: usize,
) -> Vec<usize> {
    let marked: Vec<usize> = readings
        .iter()
        .enumerate()
        .filter(|(_, r)| r.baseline_mark)
        .map(|(i, _)| i)
        .collect();
    if !marked.is_empty() {
        return marked;
    }
    let Some(first) = readings.first() else {
        return Vec::new();
    };
    let at = at.min(readings.len() - 1);
    let span = readings[at].t_s - first.t_s;
    let limit = first.t_s + options.baseline_fraction.clamp(0.0, 1.0) * span.max(0.0);
    let mut out: Vec<usize> = (0..=at).filter(|&j| readings[j].t_s <= limit).collect();
    if out.is_empty() {
        out.push(0);
    }
    out
}

/// Indices of the readings forming the baseline of the whole life (as seen at its last reading).
pub fn baseline_indices(readings: &[LifeReading], options: &StageOptions) -> Vec<usize> {
    baseline_indices_at(readings, options, readings.len().saturating_sub(1))
}

/// First index of the trailing window ending at `i`: the readings within `fraction` of the span
/// observed up to `i`, and always at least the reading before `i`.
fn window_start(readings: &[LifeReading], i: usize, fraction: f64) -> usize {
    let t0 = readings.first().map_or(0.0, |r| r.t_s);
    let t = readings[i].t_s;
    let w = fraction.max(0.0) * (t - t0).max(0.0);
    let mut j = i;
    while j > 0 && readings[j - 1].t_s >= t - w {
        j -= 1;
    }
    j.min(i.saturating_sub(1))
}

/// Assesses every reading of one life (readings in time order). Returns one call per reading.
///
/// The baseline grows with the life (the first `baseline_fraction` of the span seen so far) until
/// damage is first confirmed, then stays as it was. A stage is confirmed, and becomes the floor of
/// later calls, when at least `confirm_share` of the readings in the trailing window (a
/// `confirm_fraction` of the span, at least this reading and the one before) show it. A reading is
/// held one stage up when, among the readings within the trailing `hold_fraction` of the span at its
/// stage or above (this reading included), at least `hold_share` show the next stage (hysteresis in
/// time): a share, not the window's highest reading, so that denser data does not hold more.
#[allow(
    clippy::too_many_lines,
    reason = "baseline, confirmation, hold and evidence of one call read best together"
)]
pub fn assess_life(readings: &[LifeReading], options: &StageOptions) -> Vec<StageCall> {
    let marked = readings.iter().any(|r| r.baseline_mark);
    let mut history = evaluate::History::default();
    let mut calls: Vec<StageCall> = Vec::with_capacity(readings.len());
    let mut floor: u8 = 0;
    let mut frozen: Option<Vec<usize>> = None;
    let mut base_idx: Vec<usize> = Vec::new();
    let first_marked = readings.iter().position(|r| r.baseline_mark).unwrap_or(0);
    for (i, reading) in readings.iter().enumerate() {
        base_idx = match &frozen {
            Some(b) => b.clone(),
            None => baseline_indices_at(readings, options, i),
        };
        // Causal baseline: baseline readings up to now; marked readings count even when later.
        let usable: Vec<&ReadingIndicators> = base_idx
            .iter()
            .filter(|&&j| marked || j <= i)
            .filter_map(|&j| readings.get(j).map(|r| &r.indicators))
            .collect();
        let baseline = Baseline::from_readings(&usable);
        let raw = evaluate::evaluate(&reading.indicators, &baseline, &history);
        history.update(&reading.indicators, &raw);
        // Confirmation and hold over the trailing window (in time).
        let j0 = window_start(readings, i, options.confirm_fraction);
        let window: Vec<u8> = calls[j0..i]
            .iter()
            .map(|c| c.raw_stage)
            .chain(std::iter::once(raw.stage))
            .collect();
        let share = |s: u8| window.iter().filter(|&&w| w >= s).count() as f64 / window.len() as f64;
        // Readings before the baseline (when the analyst marks later ones) do not set the floor.
        let may_confirm = i > j0 && i >= first_marked;
        let mut confirmed_now = 0;
        if may_confirm {
            confirmed_now = (1..=raw.stage)
                .rev()
                .find(|&s| share(s) >= options.confirm_share)
                .unwrap_or(0);
            floor = floor.max(confirmed_now);
        }
        if floor > 0 && frozen.is_none() && !marked {
            frozen = Some(base_idx.clone());
        }
        // Hold over the trailing window proper (no extension to the reading before, so a lone
        // spike on a sparse route is not carried to the next reading).
        let t_from =
            reading.t_s - options.hold_fraction.max(0.0) * (reading.t_s - readings[0].t_s).max(0.0);
        let in_hold: Vec<u8> = calls[..i]
            .iter()
            .filter(|c| c.t_s >= t_from)
            .map(|c| c.raw_stage)
            .chain(std::iter::once(raw.stage))
            .collect();
        // One stage up at most: among the window's readings at this reading's stage or above, the
        // share that show the next stage.
        let level = in_hold.iter().filter(|&&w| w >= raw.stage).count() as f64;
        let above = in_hold.iter().filter(|&&w| w > raw.stage).count() as f64;
        let held = if raw.stage < 4 && above > 0.0 && above >= options.hold_share * level {
            raw.stage + 1
        } else {
            raw.stage
        };
        let stage = raw.stage.max(floor).max(held);
        let mut evidence = raw.evidence;
        let mut confidence = raw.confidence;
        let location = if stage > 0 && matches!(raw.location, Location::None) {
            history.last_location.unwrap_or(Location::Unknown)
        } else {
            raw.location
        };
        if stage > raw.stage {
            if stage <= floor {
                evidence.push(format!(
                    "Held at stage {stage}: it was confirmed earlier in this life (most readings over a stretch of {:.0} % of the life seen so far), and damage does not heal.",
                    100.0 * options.confirm_fraction
                ));
            } else {
                evidence.push(format!(
                    "Held at stage {stage}: at least {:.0} % of the readings at this stage or above within the last {:.0} % of the life seen so far showed it (hysteresis in time).",
                    100.0 * options.hold_share,
                    100.0 * options.hold_fraction
                ));
            }
            confidence = confidence.min(0.7);
        } else if stage > 0 && confirmed_now >= stage {
            confidence = (confidence + 0.1).min(0.95);
        }
        calls.push(StageCall {
            index: i,
            t_s: reading.t_s,
            stage,
            raw_stage: raw.stage,
            location,
            confidence,
            evidence,
            limits: raw.limits,
            relative: raw.relative,
            damage_index_db: raw.damage_index_db,
            in_baseline: false,
        });
    }
    for &j in &base_idx {
        if let Some(c) = calls.get_mut(j) {
            c.in_baseline = true;
        }
    }
    calls
}

#[cfg(test)]
mod tests;
