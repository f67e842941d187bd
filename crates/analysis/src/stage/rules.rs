//! Every threshold of the stage call and the forecast, in one table.
//!
//! Each rule carries its value, unit, meaning and where it comes from. Nothing here is taken from a
//! published standard except where the source says so; the four-stage model itself is trade practice
//! (see the stage table in the shared reference sheet, section 6.1, marked there as common practice).
//! "tuned" means the value was chosen against the project's simulator and the open run-to-failure
//! recordings, and is a default an analyst may revise.

use serde::Serialize;

/// One documented threshold.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Rule {
    /// Stable identifier.
    pub id: &'static str,
    /// The threshold.
    pub value: f64,
    /// Its unit.
    pub unit: &'static str,
    /// What it decides.
    pub meaning: &'static str,
    /// Where it comes from.
    pub source: &'static str,
}

const PRACTICE: &str = "common practice, no source";

/// Share of the life observed so far whose readings form the baseline when none is marked.
pub const BASELINE_FRACTION: Rule = Rule {
    id: "baseline_fraction",
    value: 0.2,
    unit: "share of the observed span",
    meaning: "readings within the first fifth of the time the life has been observed (at least the first reading) form its baseline (median of each indicator); frozen once damage is first confirmed; the same at any reading density or time scale",
    source: "robust by construction (a median over a share of the life's own time); checked on the simulator histories and the six PRONOSTIA learning runs (density test in crates/pipeline/tests)",
};

/// Trailing window of the confirmation, as a share of the life observed so far.
pub const CONFIRM_FRACTION: Rule = Rule {
    id: "confirm_fraction",
    value: 0.15,
    unit: "share of the observed span",
    meaning: "a stage is confirmed (becomes the floor of later calls) over a trailing window of this share of the time observed so far, always at least this reading and the one before",
    source: "choice of this tool, in time so that reading density does not change it: long enough to hold several readings at every density seen (0.05 let one-a-minute data confirm on runs that every-5th data did not: PRONOSTIA density agreement 90 %); on a monthly route in its first year it is the former two consecutive readings; checked on the simulator histories and PRONOSTIA (density tests)",
};

/// Trailing hold window (hysteresis), as a share of the life observed so far.
pub const HOLD_FRACTION: Rule = Rule {
    id: "hold_fraction",
    value: 0.02,
    unit: "share of the observed span",
    meaning: "a stage shown by any reading within this trailing share of the time observed so far is held (hysteresis in time: no 3-4 flipping between neighbouring readings); on a monthly route it holds nothing beyond the reading itself",
    source: "choice of this tool; checked on the simulator histories and PRONOSTIA (density and flip tests)",
};

/// Share of the readings in the hold window that must show a stage for it to be held.
pub const HOLD_SHARE: Rule = Rule {
    id: "hold_share",
    value: 0.3,
    unit: "share of readings",
    meaning: "a reading is held one stage up when, among the readings in the trailing hold window at its stage or above (this reading included), at least this share show the next stage; a share, not the window's highest reading, so that denser data (more readings in the same window, more chances of one spike) does not hold more, and a reading showing nothing is not lifted by a lone spike; readings alternating between two stages (a share near one half) still hold the higher one",
    source: "choice of this tool, density-robust by construction (a share of the window's readings rather than its maximum); checked on PRONOSTIA (density agreement 96.5 %, against 93.7 % with the window's highest reading; stage calls and leave-one-out scores otherwise unchanged), the basic and hardened simulator histories (unchanged: 136/143 and 238/290 exact) and the 3-4 flip test",
};

/// Share of the readings in the confirmation window that must show a stage.
pub const CONFIRM_SHARE: Rule = Rule {
    id: "confirm_share",
    value: 0.6,
    unit: "share of readings",
    meaning: "a stage is confirmed when at least this share of the readings in the trailing window show it (with two readings: both)",
    source: "choice of this tool (a majority, robust to single dropouts in dense data); checked on the simulator histories and PRONOSTIA",
};

/// Standard deviations over the baseline scatter that mark the first prediction time.
pub const FPT_SIGMA: Rule = Rule {
    id: "fpt_sigma",
    value: 3.0,
    unit: "standard deviations of the baseline damage index",
    meaning: "first prediction time: the damage index above baseline mean + this many standard deviations",
    source: "3-sigma rule common in the PRONOSTIA and XJTU-SY remaining-life literature (from memory)",
};

/// Smallest FPT threshold.
pub const FPT_MIN_DB: Rule = Rule {
    id: "fpt_min_db",
    value: 2.0,
    unit: "dB over baseline",
    meaning: "the FPT threshold is at least this, so a very quiet baseline does not start the model on scatter",
    source: "tuned (the former trend floor); checked on the simulator and PRONOSTIA",
};

/// Share of the readings since a candidate FPT that must stay above the threshold.
pub const FPT_SHARE: Rule = Rule {
    id: "fpt_share",
    value: 0.6,
    unit: "share of readings",
    meaning: "the FPT is the earliest reading above the threshold such that this share of the readings since (two at least) are above too",
    source: "choice of this tool (a majority; robust to density)",
};

/// Smallest excess amplitude ratio taken into the logarithm of the degradation model.
pub const EXCESS_MIN: Rule = Rule {
    id: "excess_floor",
    value: 0.05,
    unit: "amplitude ratio - 1",
    meaning: "readings after the FPT that fall back to the baseline enter the model as this small excess, not as minus infinity",
    source: "choice of this tool",
};

/// Smallest residual noise of the degradation model.
pub const MODEL_NOISE_MIN: Rule = Rule {
    id: "model_noise_floor",
    value: 0.3,
    unit: "ln(excess amplitude ratio)",
    meaning: "noise of the model is the fit's residual standard deviation, at least this (a few readings must not make it certain)",
    source: "choice of this tool",
};

/// Prior mean of the degradation rate.
pub const PRIOR_RATE_MEAN: Rule = Rule {
    id: "prior_rate_mean",
    value: 34.24,
    unit: "ln(excess amplitude ratio) per healthy span",
    meaning: "prior mean slope of the log excess amplitude after the FPT, time in units of the life's healthy span (FPT - first reading); grease-fed, divided by oil_factor for oil-fed",
    source: "fitted on the six PRONOSTIA learning runs (crates/pipeline/tests/stage_femto.rs checks it against them); the leave-one-out test refits it without the held-out run",
};

/// Prior standard deviation of the degradation rate.
pub const PRIOR_RATE_SD: Rule = Rule {
    id: "prior_rate_sd",
    value: 48.71,
    unit: "ln(excess amplitude ratio) per healthy span",
    meaning: "prior standard deviation of that slope (at least half the mean)",
    source: "fitted on the six PRONOSTIA learning runs",
};

/// Damage index at end of life.
pub const EOL_DB: Rule = Rule {
    id: "eol_db",
    value: 20.23,
    unit: "dB over baseline",
    meaning: "end-of-life level of the damage index for the end-of-life projection (median of the highest index each finished life reached)",
    source: "fitted on the six PRONOSTIA learning runs (their end of life is the 20 g stop of the rig)",
};

/// Remaining life before any damage growth, as a multiple of the span observed so far.
pub const PRIOR_SURVIVAL_RATIO: Rule = Rule {
    id: "prior_survival_ratio",
    value: 0.0499,
    unit: "× span observed so far",
    meaning: "without damage growth the end-of-life guess is this multiple of the time observed so far: a labelled prior, never a due date (median of (end - FPT)/(FPT - start) over the finished lives); with finished lives of the same population the remaining life that best fits the second half of their lives is used instead",
    source: "fitted on the six PRONOSTIA learning runs",
};

/// A change of this many dB over baseline counts as a real rise (a doubling of amplitude).
pub const RISE_DB: Rule = Rule {
    id: "rise_db",
    value: 6.0,
    unit: "dB over baseline",
    meaning: "a band or level this far over its baseline counts as risen (about twice the amplitude)",
    source: PRACTICE,
};

/// Lowest top frequency of a band that may be called "ultrasonic / high band" for stage 1.
pub const HIGH_BAND_MIN_HZ: Rule = Rule {
    id: "high_band_min_hz",
    value: 20_000.0,
    unit: "Hz",
    meaning: "stage 1 needs energy at about 20 kHz and above; a recording that cannot reach it cannot show stage 1",
    source: "common practice, no source (reference sheet 6.1 gives about 20-60 kHz for stage 1)",
};

/// Envelope score (dB over the envelope-spectrum background) that counts as a defect tone.
pub const ENVELOPE_TONE_DB: Rule = Rule {
    id: "envelope_tone_db",
    value: 12.0,
    unit: "dB over envelope background",
    meaning: "a defect tone family this far above the envelope-spectrum background is present",
    source: "tuned on the simulator: healthy readings scored up to 9.5 dB, first stage-2 tones 15 dB and more",
};

/// Envelope harmonics (including the fundamental) needed for a stage-2 call.
pub const ENVELOPE_HARMONICS: Rule = Rule {
    id: "envelope_harmonics",
    value: 2.0,
    unit: "harmonics",
    meaning: "the envelope must show the defect tone and at least one harmonic",
    source: PRACTICE,
};

/// Discrete defect harmonics in the ordinary spectrum needed for a stage-3 call.
pub const SPECTRUM_HARMONICS: Rule = Rule {
    id: "spectrum_harmonics",
    value: 2.0,
    unit: "harmonics",
    meaning: "stage 3: defect harmonics visible in the ordinary (low-frequency) spectrum",
    source: "common practice, no source (reference sheet 6.1, stage 3)",
};

/// Sidebands that, with the spectrum harmonics, confirm stage 3.
pub const SPECTRUM_SIDEBANDS: Rule = Rule {
    id: "spectrum_sidebands",
    value: 2.0,
    unit: "sidebands",
    meaning: "stage 3: sidebands (±1x inner race, ±FTF rolling element) around the defect harmonics",
    source: "common practice, no source (reference sheet 6.1, stage 3)",
};

/// Broadband damage-index rise that places a life in stage 3 without discrete tones.
pub const DAMAGE_STAGE3_DB: Rule = Rule {
    id: "damage_stage3_db",
    value: 8.0,
    unit: "dB over baseline",
    meaning: "damage index (noise-floor rise between tones; without fault factors the largest rise of overall, resonance-region and noise-floor levels) at the stage-3 onset; the replacement point of the forecast",
    source: "tuned; common practice, no source",
};

/// Broadband damage-index rise that places a life in stage 4.
pub const DAMAGE_STAGE4_DB: Rule = Rule {
    id: "damage_stage4_db",
    value: 14.0,
    unit: "dB over baseline",
    meaning: "damage index at the start of stage-4 risk (broadband haystack); the risk point of the forecast",
    source: "tuned; common practice, no source",
};

/// Resonance-region rise with impulsive statistics that makes a generic stage-2 call.
pub const GENERIC_STAGE2_KURTOSIS: Rule = Rule {
    id: "generic_stage2_kurtosis",
    value: 4.0,
    unit: "kurtosis",
    meaning: "where no defect tones can be checked (no fault frequencies for the bearing): resonance region risen and kurtosis above this = early impacting damage (stage 2); where they can, stage 2 needs a defect family in the envelope (the stage's definition: the resonances ring at a defect rate), and impacting without one is only noted",
    source: "common practice, no source (Gaussian noise has kurtosis 3); restricted to bearings without fault frequencies on the stage definition, checked on the hardened simulator histories (within one stage 97.9 % -> 98.3 %, exact 238 -> 239 of 290, 2-month lead still 12 of 12) and the basic histories (unchanged); PRONOSTIA is staged without tones, so it keeps the generic rule",
};

/// Family score below which a defect family counts as absent from every band under the ultrasonic range.
pub const ULTRASONIC_ONLY_BELOW_DB: Rule = Rule {
    id: "ultrasonic_only_below_db",
    value: 12.0,
    unit: "dB over envelope background",
    meaning: "stage 1: envelope tones from a demodulation band reaching above high_band_min_hz are ultrasonic only when the same family scores under this in every candidate band lying wholly below high_band_min_hz and the resonance region has not risen by resonance_stage2_db; once the family shows below the ultrasonic range the damage rings the bearing's structural resonances (stage 2). The value is the tone threshold itself (envelope_tone_db): absent below means not a tone there",
    source: "physics of the stage model (stage 1: damage seen only above the structural resonances; common practice, no source); checked on the hardened simulator histories (exact 68 -> 82 %, stage-2+ lead of two months 10 -> 12 of 12), the basic simulator histories (135 -> 136 of 143 exact), CWRU 12 kHz and the six PRONOSTIA learning runs (unchanged there: no band of theirs reaches 20 kHz, so the rule cannot fire)",
};

/// Resonance-region rise that, with envelope tones, marks stage 2 rather than stage 1.
pub const RESONANCE_STAGE2_DB: Rule = Rule {
    id: "resonance_stage2_db",
    value: 3.0,
    unit: "dB over baseline",
    meaning: "envelope tones found only in an ultrasonic demodulation band are stage 1 unless the resonance region has risen this much (records without per-band family scores: or kurtosis shows impacting)",
    source: "tuned; common practice, no source (stage 2: the bearing rings its resonances)",
};

/// Noise-floor rise (dB over baseline) for stage 3 when defect tones are present.
pub const NOISE_FLOOR_STAGE3_DB: Rule = Rule {
    id: "noise_floor_stage3_db",
    value: 6.0,
    unit: "dB over baseline",
    meaning: "stage 3: the floor between tones rises",
    source: "common practice, no source (reference sheet 6.1, stage 3)",
};

/// Noise-floor rise for stage 4.
pub const NOISE_FLOOR_STAGE4_DB: Rule = Rule {
    id: "noise_floor_stage4_db",
    value: 12.0,
    unit: "dB over baseline",
    meaning: "stage 4: the floor rises at all frequencies into a haystack",
    source: "common practice, no source (reference sheet 6.1, stage 4)",
};

/// 1x rise that supports stage 4 (clearance grows).
pub const ONE_X_STAGE4_DB: Rule = Rule {
    id: "one_x_stage4_db",
    value: 6.0,
    unit: "dB over baseline",
    meaning: "stage 4: 1x amplitude rises as clearance grows",
    source: "common practice, no source (reference sheet 6.1, stage 4)",
};

/// Fall of the defect-tone score from this life's peak that shows tones fading into noise.
pub const TONE_FADE_DB: Rule = Rule {
    id: "tone_fade_db",
    value: 6.0,
    unit: "dB below the life's peak",
    meaning: "stage 4: discrete tones fade into broadband noise",
    source: "common practice, no source (reference sheet 6.1, stage 4)",
};

/// Fraction of its peak that kurtosis must fall back to (while RMS keeps rising) for stage 4.
pub const KURTOSIS_FALLBACK: Rule = Rule {
    id: "kurtosis_fallback",
    value: 0.6,
    unit: "fraction of the life's peak kurtosis",
    meaning: "kurtosis and crest factor rise in early damage and fall again as damage spreads while RMS keeps rising",
    source: PRACTICE,
};

/// Two-sided coverage of the prediction interval.
pub const INTERVAL_COVERAGE: Rule = Rule {
    id: "interval_coverage",
    value: 0.8,
    unit: "probability",
    meaning: "prediction interval of the projected dates (10 % and 90 % bounds)",
    source: "choice of this tool",
};

/// Stage-2-to-stage-3 duration range, grease-fed, at the reference speed (low end).
pub const STAGE2_DAYS_MIN: Rule = Rule {
    id: "stage2_days_min",
    value: 60.0,
    unit: "days",
    meaning: "time from the first stage-2 call to stage 3, shortest (grease, reference speed)",
    source: "common practice, no source (months between first envelope tones and failure; six to eight months often quoted)",
};

/// Stage-2-to-stage-3 duration range (high end).
pub const STAGE2_DAYS_MAX: Rule = Rule {
    id: "stage2_days_max",
    value: 240.0,
    unit: "days",
    meaning: "time from the first stage-2 call to stage 3, longest (grease, reference speed)",
    source: "common practice, no source",
};

/// Stage-3-to-stage-4 duration range (low end).
pub const STAGE3_DAYS_MIN: Rule = Rule {
    id: "stage3_days_min",
    value: 14.0,
    unit: "days",
    meaning: "time from stage 3 to stage-4 risk, shortest (grease, reference speed)",
    source: "common practice, no source; from memory",
};

/// Stage-3-to-stage-4 duration range (high end).
pub const STAGE3_DAYS_MAX: Rule = Rule {
    id: "stage3_days_max",
    value: 90.0,
    unit: "days",
    meaning: "time from stage 3 to stage-4 risk, longest (grease, reference speed)",
    source: "common practice, no source; from memory",
};

/// Stage-1-to-stage-2 duration range (low end).
pub const STAGE1_DAYS_MIN: Rule = Rule {
    id: "stage1_days_min",
    value: 90.0,
    unit: "days",
    meaning: "time from stage 1 to stage 2, shortest (grease, reference speed)",
    source: "common practice, no source; from memory",
};

/// Stage-1-to-stage-2 duration range (high end).
pub const STAGE1_DAYS_MAX: Rule = Rule {
    id: "stage1_days_max",
    value: 365.0,
    unit: "days",
    meaning: "time from stage 1 to stage 2, longest (grease, reference speed)",
    source: "common practice, no source; from memory",
};

/// Duration multiplier for oil-fed (circulating) lubrication.
pub const OIL_FACTOR: Rule = Rule {
    id: "oil_factor",
    value: 1.5,
    unit: "× grease-fed duration",
    meaning: "oil-fed bearings outlast grease-fed ones once damaged (oil flushes debris and carries heat away)",
    source: "common practice, no source (the factor is from memory)",
};

/// Reference shaft speed of the stage durations; durations scale with reference/actual speed.
pub const REFERENCE_SPEED_HZ: Rule = Rule {
    id: "reference_speed_hz",
    value: 25.0,
    unit: "Hz (1500 r/min)",
    meaning: "stage durations are for this speed and scale inversely with speed (damage per revolution)",
    source: "common practice, no source; from memory",
};

/// Remaining life in stage 2 as a fraction of the rating life (low end), for the rating-life prior.
pub const STAGE2_LIFE_FRACTION_MIN: Rule = Rule {
    id: "stage2_life_fraction_min",
    value: 0.05,
    unit: "fraction of L10",
    meaning: "stage 2: about 5-10 % of the rating life left",
    source: "common practice, no source; from memory, low confidence (reference sheet 6.1)",
};

/// Remaining life in stage 2 (high end).
pub const STAGE2_LIFE_FRACTION_MAX: Rule = Rule {
    id: "stage2_life_fraction_max",
    value: 0.10,
    unit: "fraction of L10",
    meaning: "stage 2: about 5-10 % of the rating life left",
    source: "common practice, no source; from memory, low confidence (reference sheet 6.1)",
};

/// Remaining life in stage 3 (low end).
pub const STAGE3_LIFE_FRACTION_MIN: Rule = Rule {
    id: "stage3_life_fraction_min",
    value: 0.01,
    unit: "fraction of L10",
    meaning: "stage 3: about 1-5 % of the rating life left",
    source: "common practice, no source; from memory, low confidence (reference sheet 6.1)",
};

/// Remaining life in stage 3 (high end).
pub const STAGE3_LIFE_FRACTION_MAX: Rule = Rule {
    id: "stage3_life_fraction_max",
    value: 0.05,
    unit: "fraction of L10",
    meaning: "stage 3: about 1-5 % of the rating life left",
    source: "common practice, no source; from memory, low confidence (reference sheet 6.1)",
};

/// Evidence a life's location needs before it is named.
pub const LIFE_LOCATION_EVIDENCE: Rule = Rule {
    id: "life_location_evidence",
    value: 1.5,
    unit: "reading-equivalents (sum of call confidences)",
    meaning: "a bearing life's location (all its points and readings accumulated) is named once the leading location's summed call confidences reach this, i.e. about two confident readings; before that it is unclear",
    source: "robust by construction (one reading never settles a life); checked on the demo plant (every faulty life's location) and the simulator histories of stage_sim",
};

/// How far the leading location must outweigh the runner-up.
pub const LIFE_LOCATION_RATIO: Rule = Rule {
    id: "life_location_ratio",
    value: 2.0,
    unit: "ratio of summed confidences",
    meaning: "the leading location must carry at least this many times the runner-up's summed call confidences (two thirds of the located evidence between them) to be named; a named location gives way only to one that outweighs it by the same ratio, so a life's location does not flip with single readings",
    source: "robust by construction (hysteresis on accumulated evidence); checked on the demo plant and the simulator histories of stage_sim",
};

/// The whole table, for display and documentation.
pub const RULES: &[Rule] = &[
    LIFE_LOCATION_EVIDENCE,
    LIFE_LOCATION_RATIO,
    BASELINE_FRACTION,
    CONFIRM_FRACTION,
    CONFIRM_SHARE,
    HOLD_FRACTION,
    HOLD_SHARE,
    FPT_SIGMA,
    FPT_MIN_DB,
    FPT_SHARE,
    EXCESS_MIN,
    MODEL_NOISE_MIN,
    PRIOR_RATE_MEAN,
    PRIOR_RATE_SD,
    EOL_DB,
    PRIOR_SURVIVAL_RATIO,
    RISE_DB,
    HIGH_BAND_MIN_HZ,
    ENVELOPE_TONE_DB,
    ENVELOPE_HARMONICS,
    SPECTRUM_HARMONICS,
    SPECTRUM_SIDEBANDS,
    DAMAGE_STAGE3_DB,
    DAMAGE_STAGE4_DB,
    GENERIC_STAGE2_KURTOSIS,
    RESONANCE_STAGE2_DB,
    ULTRASONIC_ONLY_BELOW_DB,
    NOISE_FLOOR_STAGE3_DB,
    NOISE_FLOOR_STAGE4_DB,
    ONE_X_STAGE4_DB,
    TONE_FADE_DB,
    KURTOSIS_FALLBACK,
    INTERVAL_COVERAGE,
    STAGE1_DAYS_MIN,
    STAGE1_DAYS_MAX,
    STAGE2_DAYS_MIN,
    STAGE2_DAYS_MAX,
    STAGE3_DAYS_MIN,
    STAGE3_DAYS_MAX,
    OIL_FACTOR,
    REFERENCE_SPEED_HZ,
    STAGE2_LIFE_FRACTION_MIN,
    STAGE2_LIFE_FRACTION_MAX,
    STAGE3_LIFE_FRACTION_MIN,
    STAGE3_LIFE_FRACTION_MAX,
];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_is_complete_and_unique() {
        let mut ids: Vec<&str> = RULES.iter().map(|r| r.id).collect();
        ids.sort_unstable();
        let n = ids.len();
        ids.dedup();
        assert_eq!(ids.len(), n, "duplicate rule id");
        for r in RULES {
            assert!(r.value.is_finite() && r.value > 0.0, "{}", r.id);
            assert!(!r.source.is_empty() && !r.meaning.is_empty(), "{}", r.id);
        }
        // Every `*_min` rule has a larger `*_max` partner, and stage-4 levels sit above stage-3 ones.
        let value = |id: &str| RULES.iter().find(|r| r.id == id).map(|r| r.value);
        for r in RULES.iter().filter(|r| r.id.ends_with("_min")) {
            let partner = format!("{}_max", r.id.trim_end_matches("_min"));
            assert!(
                value(&partner).is_some_and(|m| m > r.value),
                "{} vs {partner}",
                r.id
            );
        }
        assert!(value("damage_stage4_db") > value("damage_stage3_db"));
        assert!(value("noise_floor_stage4_db") > value("noise_floor_stage3_db"));
    }
}
