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
pub mod rules;

use serde::{Deserialize, Serialize};

pub use from_diagnosis::ToneUse;
pub use indicators::{
    Baseline, Location, ReadingIndicators, RelativeIndicators, ToneEvidence, db_over, keys,
};

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

/// Options of the assessment.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StageOptions {
    /// Readings at the start of a life taken as the baseline when none is marked.
    pub baseline_readings: usize,
    /// Consecutive readings at a stage before later calls stay at least there.
    pub confirm_readings: usize,
}

impl Default for StageOptions {
    fn default() -> Self {
        StageOptions {
            baseline_readings: rules::BASELINE_READINGS.value as usize,
            confirm_readings: rules::CONFIRM_READINGS.value as usize,
        }
    }
}

/// Indices of the readings forming the baseline: the marked ones, else the first `n`.
pub fn baseline_indices(readings: &[LifeReading], options: &StageOptions) -> Vec<usize> {
    let marked: Vec<usize> = readings
        .iter()
        .enumerate()
        .filter(|(_, r)| r.baseline_mark)
        .map(|(i, _)| i)
        .collect();
    if marked.is_empty() {
        (0..readings.len().min(options.baseline_readings.max(1))).collect()
    } else {
        marked
    }
}

/// Assesses every reading of one life (readings in time order). Returns one call per reading.
pub fn assess_life(readings: &[LifeReading], options: &StageOptions) -> Vec<StageCall> {
    let base_idx = baseline_indices(readings, options);
    let marked = readings.iter().any(|r| r.baseline_mark);
    let mut history = evaluate::History::default();
    let mut calls: Vec<StageCall> = Vec::with_capacity(readings.len());
    let confirm = options.confirm_readings.max(1);
    let mut floor: u8 = 0;
    for (i, reading) in readings.iter().enumerate() {
        // Causal baseline: baseline readings up to now; marked readings count even when later.
        let usable: Vec<&ReadingIndicators> = base_idx
            .iter()
            .filter(|&&j| marked || j <= i)
            .filter_map(|&j| readings.get(j).map(|r| &r.indicators))
            .collect();
        let baseline = Baseline::from_readings(&usable);
        let raw = evaluate::evaluate(&reading.indicators, &baseline, &history);
        history.update(&reading.indicators, &raw);
        // Ratchet: a stage seen in `confirm` consecutive readings becomes the floor.
        let run_min = calls
            .iter()
            .rev()
            .take(confirm - 1)
            .map(|c| c.raw_stage)
            .chain(std::iter::once(raw.stage))
            .min()
            .unwrap_or(raw.stage);
        // Readings before the baseline (when the analyst marks later ones) do not set the floor.
        let first_base = base_idx.first().copied().unwrap_or(0);
        let confirmed = i >= first_base && i + 1 >= first_base + confirm;
        if confirmed {
            floor = floor.max(run_min);
        }
        let stage = raw.stage.max(floor);
        let mut evidence = raw.evidence;
        let mut confidence = raw.confidence;
        let location = if stage > 0 && matches!(raw.location, Location::None) {
            history.last_location.unwrap_or(Location::Unknown)
        } else {
            raw.location
        };
        if stage > raw.stage {
            evidence.push(format!(
                "Held at stage {stage}: it was seen in {confirm} consecutive readings earlier in this life, and damage does not heal."
            ));
            confidence = confidence.min(0.7);
        } else if stage > 0 && confirmed && run_min >= stage {
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
            in_baseline: base_idx.contains(&i),
        });
    }
    calls
}

#[cfg(test)]
mod tests;
