//! The rules applied to one reading (given the baseline and what the life has shown so far).

use super::indicators::{Baseline, Location, ReadingIndicators, RelativeIndicators, ToneEvidence};
use super::rules;

/// What the life has shown up to the previous reading.
#[derive(Debug, Clone, Default)]
pub(crate) struct History {
    /// Highest envelope score per kinematic location among readings where the tone was present.
    pub peak_tone_db: [Option<f64>; 4],
    /// Highest kurtosis so far.
    pub peak_kurtosis: Option<f64>,
    /// Highest stage any reading showed.
    pub peak_raw_stage: u8,
    /// Location of the latest tone-based evidence.
    pub last_location: Option<Location>,
}

impl History {
    pub fn update(&mut self, r: &ReadingIndicators, raw: &Raw) {
        if let Some(tones) = &r.tones {
            for (peak, t) in self.peak_tone_db.iter_mut().zip(tones) {
                if tone_present(t) {
                    *peak = Some(peak.map_or(t.envelope_score_db, |p| p.max(t.envelope_score_db)));
                }
            }
        }
        if let Some(k) = r.kurtosis {
            self.peak_kurtosis = Some(self.peak_kurtosis.map_or(k, |p| p.max(k)));
        }
        self.peak_raw_stage = self.peak_raw_stage.max(raw.stage);
        if !matches!(raw.location, Location::None | Location::Unknown) {
            self.last_location = Some(raw.location);
        }
    }
}

/// The call of one reading on its own.
#[derive(Debug, Clone)]
pub(crate) struct Raw {
    pub stage: u8,
    pub location: Location,
    pub confidence: f64,
    pub evidence: Vec<String>,
    pub limits: Vec<String>,
    pub relative: RelativeIndicators,
    pub damage_index_db: f64,
}

fn tone_present(t: &ToneEvidence) -> bool {
    t.envelope_score_db >= rules::ENVELOPE_TONE_DB.value
        && f64::from(t.envelope_harmonics) >= rules::ENVELOPE_HARMONICS.value
}

fn at_least(v: Option<f64>, threshold: f64) -> bool {
    v.is_some_and(|v| v >= threshold)
}

/// Damage index, dB over baseline (0 if nothing to compare). With defect tones to check (fault
/// factors known) it is the noise-floor rise between tones: the overall and resonance-region levels
/// also rise when the bearing merely rings its resonances (stage 2), so they would call stage 3
/// early. Without fault factors it is the largest rise of the overall, resonance-region and
/// noise-floor levels.
pub(crate) fn damage_index(rel: &RelativeIndicators, tones_known: bool) -> f64 {
    if tones_known && let Some(floor) = rel.noise_floor_db {
        return floor.max(0.0);
    }
    rel.largest_damage_rise_db()
}

/// The strongest present tone: (location index, evidence).
fn best_tone(r: &ReadingIndicators) -> Option<(usize, ToneEvidence)> {
    let tones = r.tones.as_ref()?;
    tones
        .iter()
        .copied()
        .enumerate()
        .filter(|(_, t)| tone_present(t))
        .max_by(|a, b| a.1.envelope_score_db.total_cmp(&b.1.envelope_score_db))
}

fn fmt_db(v: f64) -> String {
    format!("{v:+.1} dB")
}

#[allow(
    clippy::too_many_lines,
    reason = "one rule after the other, stage by stage, reads best in one place"
)]
pub(crate) fn evaluate(r: &ReadingIndicators, baseline: &Baseline, history: &History) -> Raw {
    let b = &baseline.indicators;
    let rel = RelativeIndicators::new(r, b);
    let damage = damage_index(&rel, r.tones.is_some());
    let rise = rules::RISE_DB.value;
    let mut limits = Vec::new();
    let tone = best_tone(r);
    // Tones demodulated from a band reaching the ultrasonic range while the resonance region is
    // quiet: when the same family does not show in any candidate band below the ultrasonic range, the
    // damage does not yet ring the bearing's structural resonances (stage 1; rule
    // `ultrasonic_only_below_db`). Records without that per-band score fall back to the band's own edge
    // and the waveform's kurtosis.
    let quiet = !at_least(rel.resonance_band_db, rules::RESONANCE_STAGE2_DB.value);
    let ultrasonic_only = tone.is_some()
        && quiet
        && match r.below_ultrasonic_tone_db {
            Some(below) => {
                r.envelope_band_hz
                    .is_some_and(|b| b[1] > rules::HIGH_BAND_MIN_HZ.value)
                    && below < rules::ULTRASONIC_ONLY_BELOW_DB.value
            }
            None => {
                r.envelope_band_hz
                    .is_some_and(|b| b[0] >= rules::HIGH_BAND_MIN_HZ.value)
                    && !at_least(r.kurtosis, rules::GENERIC_STAGE2_KURTOSIS.value)
            }
        };
    let best = if ultrasonic_only { None } else { tone };
    let best_loc = best.map(|(i, _)| Location::KINEMATIC[i]);

    if r.high_band_rms_g.is_none() {
        limits.push(format!(
            "No ultrasonic/high band in this recording (it does not reach {:.0} kHz): stage 1 cannot be shown, so a stage-0 call may hide stage 1.",
            rules::HIGH_BAND_MIN_HZ.value / 1000.0
        ));
    }
    if r.tones.is_none() {
        limits.push(
            "No fault frequencies for this bearing: defect tones and the fault location cannot be checked; generic damage indicators only."
                .to_owned(),
        );
    }

    // Stage 4: broadband haystack plus one sign of spreading damage (without defect tones to watch
    // fade, the broadband level alone).
    let mut s4: Vec<String> = Vec::new();
    let floor4 = at_least(rel.noise_floor_db, rules::NOISE_FLOOR_STAGE4_DB.value);
    let damage4 = damage >= rules::DAMAGE_STAGE4_DB.value;
    if floor4 {
        s4.push(format!(
            "Noise floor between tones {} over baseline (stage-4 level {:.0} dB).",
            fmt_db(rel.noise_floor_db.unwrap_or(0.0)),
            rules::NOISE_FLOOR_STAGE4_DB.value
        ));
    }
    if damage4 {
        s4.push(format!(
            "Broadband damage index {} over baseline (stage-4 level {:.0} dB).",
            fmt_db(damage),
            rules::DAMAGE_STAGE4_DB.value
        ));
    }
    let mut spreading: Vec<String> = Vec::new();
    if at_least(rel.one_x_db, rules::ONE_X_STAGE4_DB.value) {
        spreading.push(format!(
            "1x amplitude {} over baseline (clearance growing).",
            fmt_db(rel.one_x_db.unwrap_or(0.0))
        ));
    }
    if let Some(tones) = &r.tones {
        for (i, (peak, t)) in history.peak_tone_db.iter().zip(tones).enumerate() {
            if let Some(p) = peak
                && p - t.envelope_score_db >= rules::TONE_FADE_DB.value
                && damage >= rules::DAMAGE_STAGE3_DB.value
            {
                spreading.push(format!(
                    "{} envelope tone faded to {:.1} dB from its peak of {p:.1} dB in this life while broadband levels rose.",
                    Location::KINEMATIC[i].tone_name(),
                    t.envelope_score_db
                ));
            }
        }
    }
    if let (Some(k), Some(pk)) = (r.kurtosis, history.peak_kurtosis)
        && pk >= rules::GENERIC_STAGE2_KURTOSIS.value
        && k <= rules::KURTOSIS_FALLBACK.value * pk
        && at_least(rel.accel_rms_db, rules::DAMAGE_STAGE3_DB.value)
    {
        spreading.push(format!(
            "Kurtosis fell back to {k:.1} from a peak of {pk:.1} while overall RMS is {} over baseline (damage spreading).",
            fmt_db(rel.accel_rms_db.unwrap_or(0.0))
        ));
    }
    if r.iso_zone == Some(4) {
        spreading.push("Overall velocity in ISO 20816-3 zone D.".to_owned());
    }
    if (damage4 || floor4) && (!spreading.is_empty() || r.tones.is_none()) {
        let mut evidence = s4;
        let n = evidence.len() + spreading.len();
        evidence.extend(spreading);
        let location = best_loc
            .or(history.last_location)
            .unwrap_or(Location::Unknown);
        return Raw {
            stage: 4,
            location,
            confidence: conf(n),
            evidence,
            limits,
            relative: rel,
            damage_index_db: damage,
        };
    }

    // Stage 3: discrete defect harmonics with sidebands, or a risen noise floor with tones, or
    // broadband damage at the stage-3 level.
    let mut s3: Vec<String> = Vec::new();
    if let Some((i, t)) = best {
        if f64::from(t.spectrum_harmonics) >= rules::SPECTRUM_HARMONICS.value
            && f64::from(t.spectrum_sidebands) >= rules::SPECTRUM_SIDEBANDS.value
        {
            s3.push(format!(
                "{} shows {} discrete harmonics with {} sidebands in the ordinary spectrum.",
                Location::KINEMATIC[i].tone_name(),
                t.spectrum_harmonics,
                t.spectrum_sidebands
            ));
        }
        if at_least(rel.noise_floor_db, rules::NOISE_FLOOR_STAGE3_DB.value) {
            s3.push(format!(
                "Noise floor between tones {} over baseline.",
                fmt_db(rel.noise_floor_db.unwrap_or(0.0))
            ));
        }
    }
    if damage >= rules::DAMAGE_STAGE3_DB.value {
        s3.push(format!(
            "Broadband damage index {} over baseline (stage-3 level {:.0} dB).",
            fmt_db(damage),
            rules::DAMAGE_STAGE3_DB.value
        ));
    }
    let tone_sentence = best.map(|(i, t)| {
        let base_score = b
            .tones
            .as_ref()
            .and_then(|bt| bt.get(i))
            .map(|bt| bt.envelope_score_db);
        let over = base_score
            .filter(|s| (t.envelope_score_db - s).abs() >= 0.05)
            .map(|s| format!(", {} against the baseline", fmt_db(t.envelope_score_db - s)))
            .unwrap_or_default();
        format!(
            "Envelope spectrum: {} tone ({}) {:.1} dB over background with {} harmonics{over}.",
            Location::KINEMATIC[i].tone_name(),
            Location::KINEMATIC[i].name(),
            t.envelope_score_db,
            t.envelope_harmonics
        )
    });
    if !s3.is_empty() {
        let mut evidence = s3;
        evidence.extend(tone_sentence.clone());
        let n = evidence.len();
        let location = best_loc.unwrap_or(Location::Unknown);
        return Raw {
            stage: 3,
            location,
            confidence: conf(n),
            evidence,
            limits,
            relative: rel,
            damage_index_db: damage,
        };
    }

    // Stage 2: envelope defect tones, or (generic, only where no defect tones can be checked)
    // ringing resonances with impulsive statistics. Where the bearing's fault frequencies are known,
    // stage 2 is the resonances ringing *at a defect rate*: impacting with no defect family in the
    // envelope comes from something else (knocks, looseness, the process) and is noted at stage 0.
    let mut s2: Vec<String> = Vec::new();
    s2.extend(tone_sentence);
    let resonance_up = at_least(rel.resonance_band_db, rise) || at_least(rel.accel_rms_db, rise);
    let impacting = resonance_up && at_least(r.kurtosis, rules::GENERIC_STAGE2_KURTOSIS.value);
    if impacting && r.tones.is_none() {
        s2.push(format!(
            "Resonance region {} and kurtosis {:.1} (impacting).",
            rel.resonance_band_db.or(rel.accel_rms_db).map_or_else(
                || "-".to_owned(),
                |d| format!("{} over baseline", fmt_db(d))
            ),
            r.kurtosis.unwrap_or(0.0)
        ));
    } else if r.tones.is_none() && damage >= rise {
        s2.push(format!(
            "Broadband damage index {} over baseline (no defect tones can be checked).",
            fmt_db(damage)
        ));
    }
    if !s2.is_empty() {
        if let Some(d) = rel
            .resonance_band_db
            .filter(|d| d.abs() >= 1.0 && best.is_some())
        {
            s2.push(format!("Resonance region {} over baseline.", fmt_db(d)));
        }
        let n = s2.len();
        let location = best_loc.unwrap_or(Location::Unknown);
        return Raw {
            stage: 2,
            location,
            confidence: conf(n),
            evidence: s2,
            limits,
            relative: rel,
            damage_index_db: damage,
        };
    }

    // Stage 1: high-band energy only.
    if let (true, Some((i, t))) = (ultrasonic_only, tone) {
        let loc = Location::KINEMATIC[i];
        let band = r.envelope_band_hz.unwrap_or_default();
        let below = r.below_ultrasonic_tone_db.map_or_else(
            || "; resonance region and kurtosis unchanged".to_owned(),
            |d| {
                format!(
                    "; in no band below {:.0} kHz (at most {:.1} dB there, under {:.0} dB) and the resonance region unchanged",
                    rules::HIGH_BAND_MIN_HZ.value / 1000.0,
                    d.max(0.0),
                    rules::ULTRASONIC_ONLY_BELOW_DB.value
                )
            },
        );
        let mut evidence = vec![format!(
            "{} tone ({}) {:.1} dB with {} harmonics in the envelope of the {:.1}-{:.1} kHz band{below}: ultrasonic only.",
            loc.tone_name(),
            loc.name(),
            t.envelope_score_db,
            t.envelope_harmonics,
            band[0] / 1000.0,
            band[1] / 1000.0
        )];
        if let Some(h) = rel.high_band_db.filter(|&h| h >= rise) {
            evidence.push(format!("Ultrasonic/high band {} over baseline.", fmt_db(h)));
        }
        let confidence = conf(evidence.len());
        return Raw {
            stage: 1,
            location: loc,
            confidence,
            evidence,
            limits,
            relative: rel,
            damage_index_db: damage,
        };
    }
    if let Some(h) = rel.high_band_db.filter(|&h| h >= rise) {
        let evidence = vec![format!(
            "Ultrasonic/high band {} over baseline; nothing in the envelope or ordinary spectrum yet.",
            fmt_db(h)
        )];
        return Raw {
            stage: 1,
            location: Location::Unknown,
            confidence: 0.55,
            evidence,
            limits,
            relative: rel,
            damage_index_db: damage,
        };
    }

    // Stage 0.
    let mut evidence = vec![format!(
        "No bearing defect evidence; damage index {} over baseline.",
        fmt_db(damage)
    )];
    if let Some(zone) = r.iso_zone.filter(|&z| z >= 3) {
        evidence.push(format!(
            "Overall velocity in ISO 20816-3 zone {} without bearing evidence: look for another cause (balance, alignment, looseness).",
            zone_letter(zone)
        ));
    }
    if impacting && best.is_none() {
        evidence.push(format!(
            "Resonance region {} and kurtosis {:.1}, but no defect family in the envelope at this bearing's fault frequencies: impacts from another source (knocks, looseness, the process), not staged as bearing damage.",
            rel.resonance_band_db.or(rel.accel_rms_db).map_or_else(
                || "-".to_owned(),
                |d| format!("{} over baseline", fmt_db(d))
            ),
            r.kurtosis.unwrap_or(0.0)
        ));
    }
    let confidence = 0.9 - 0.15 * limits.len() as f64;
    Raw {
        stage: 0,
        location: Location::None,
        confidence,
        evidence,
        limits,
        relative: rel,
        damage_index_db: damage,
    }
}

/// Confidence from the number of agreeing criteria.
fn conf(supporting: usize) -> f64 {
    (0.45 + 0.12 * supporting as f64).min(0.9)
}

/// ISO zone letter for 1..=4.
pub(crate) fn zone_letter(zone: u8) -> char {
    match zone {
        1 => 'A',
        2 => 'B',
        3 => 'C',
        _ => 'D',
    }
}
