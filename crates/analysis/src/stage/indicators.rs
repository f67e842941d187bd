//! Per-reading stage indicators, their names as stored scalars, and the per-life baseline.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// Where on the bearing the evidence points: the shared fault-location vocabulary (`spallcast-model`).
pub use spallcast_model::Location;

/// Defect-tone evidence for one kinematic location in one reading.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct ToneEvidence {
    /// Envelope-spectrum score of the defect tone family, dB over the envelope-spectrum background.
    pub envelope_score_db: f64,
    /// How many harmonics of the defect tone the envelope spectrum shows (0 = none).
    pub envelope_harmonics: u32,
    /// Discrete defect harmonics found in the ordinary (low-frequency) acceleration/velocity spectrum.
    pub spectrum_harmonics: u32,
    /// Sidebands found around those harmonics (±1x for inner race, ±FTF for rolling elements).
    pub spectrum_sidebands: u32,
}

/// The absolute stage indicators of one reading. `None` means the reading could not supply it
/// (no fault factors, band above the recording's Nyquist frequency, ...), never "zero".
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct ReadingIndicators {
    /// Overall acceleration RMS, g.
    pub accel_rms_g: Option<f64>,
    /// Crest factor (peak / RMS) of the acceleration waveform.
    pub crest_factor: Option<f64>,
    /// Pearson kurtosis of the acceleration waveform (3 for Gaussian noise).
    pub kurtosis: Option<f64>,
    /// Impulse factor (peak / mean absolute value) of the acceleration waveform.
    pub impulse_factor: Option<f64>,
    /// Overall velocity RMS in the ISO 20816-3 band, mm/s.
    pub velocity_rms_mm_s: Option<f64>,
    /// ISO 20816-3 evaluation zone as 1..=4 for A..D.
    pub iso_zone: Option<u8>,
    /// RMS acceleration in the ultrasonic / high band, g. `None` when the recording's bandwidth does
    /// not reach the band: stage 1 then cannot be shown.
    pub high_band_rms_g: Option<f64>,
    /// RMS acceleration in the bearing-resonance region, g.
    pub resonance_band_rms_g: Option<f64>,
    /// Spectrum noise-floor level between tones (a median line level), g.
    pub noise_floor_g: Option<f64>,
    /// Amplitude of the 1x (running-speed) line.
    pub one_x_amplitude: Option<f64>,
    /// Defect-tone evidence per kinematic location (outer, inner, rolling element, cage); `None`
    /// when the bearing's fault factors are unknown.
    pub tones: Option<[ToneEvidence; 4]>,
    /// The band demodulated for the envelope spectrum, Hz (tones found only in an ultrasonic band
    /// are stage-1 evidence).
    pub envelope_band_hz: Option<[f64; 2]>,
    /// The named defect family's strongest envelope score, dB, among the candidate demodulation bands
    /// lying wholly below the ultrasonic band: tones that show only above it are stage-1 evidence.
    /// `None` when no location is named, no candidate lies below, or the record predates it.
    #[serde(default)]
    pub below_ultrasonic_tone_db: Option<f64>,
}

/// Scalar names under which [`ReadingIndicators`] are stored per reading (see
/// [`ReadingIndicators::to_scalars`]). This is the one set of trend-scalar names the pipeline's
/// analyzer stores; every name starts with `stage.` (store migration 5 renamed the older flat names).
pub mod keys {
    /// Overall acceleration RMS, g.
    pub const ACCEL_RMS_G: &str = "stage.accel_rms_g";
    /// Crest factor.
    pub const CREST_FACTOR: &str = "stage.crest_factor";
    /// Kurtosis.
    pub const KURTOSIS: &str = "stage.kurtosis";
    /// Impulse factor.
    pub const IMPULSE_FACTOR: &str = "stage.impulse_factor";
    /// Velocity RMS, mm/s.
    pub const VELOCITY_RMS_MM_S: &str = "stage.velocity_rms_mm_s";
    /// ISO zone 1..4.
    pub const ISO_ZONE: &str = "stage.iso_zone";
    /// High / ultrasonic band RMS, g (absent when the band is beyond the recording).
    pub const HIGH_BAND_RMS_G: &str = "stage.high_band_rms_g";
    /// Resonance-region RMS, g.
    pub const RESONANCE_BAND_RMS_G: &str = "stage.resonance_band_rms_g";
    /// Noise floor, g.
    pub const NOISE_FLOOR_G: &str = "stage.noise_floor_g";
    /// 1x amplitude.
    pub const ONE_X_AMPLITUDE: &str = "stage.one_x_amplitude";
    /// Set to 1 when the tone fields are present (the fault factors were known).
    pub const TONES_PRESENT: &str = "stage.tones_present";
    /// Lower edge of the demodulated band, Hz.
    pub const ENVELOPE_BAND_LO_HZ: &str = "stage.envelope_band_lo_hz";
    /// Upper edge of the demodulated band, Hz.
    pub const ENVELOPE_BAND_HI_HZ: &str = "stage.envelope_band_hi_hz";
    /// The named family's envelope score in the bands below the ultrasonic band, dB.
    pub const BELOW_ULTRASONIC_TONE_DB: &str = "stage.below_ultrasonic_tone_db";
    /// The stage indicators a trend view offers, with their labels, in display order. A new stage
    /// indicator adds its line here.
    pub const TRENDED: [(&str, &str); 9] = [
        (HIGH_BAND_RMS_G, "high band RMS"),
        (RESONANCE_BAND_RMS_G, "resonance band RMS"),
        (ACCEL_RMS_G, "acceleration RMS"),
        (NOISE_FLOOR_G, "noise floor"),
        (KURTOSIS, "kurtosis"),
        (CREST_FACTOR, "crest factor"),
        (ONE_X_AMPLITUDE, "1x amplitude"),
        (VELOCITY_RMS_MM_S, "velocity RMS"),
        (IMPULSE_FACTOR, "impulse factor"),
    ];

    /// Acceleration peak, g (trended; not read by the stage logic).
    pub const ACCEL_PEAK_G: &str = "stage.accel_peak_g";

    /// RMS acceleration of one named analysis band, g (trended; `stage.band.<name>_rms_g`).
    pub fn band_rms_g(band: &str) -> String {
        format!("stage.band.{band}_rms_g")
    }
}

/// How an indicator is compared with its baseline.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DbForm {
    /// An amplitude: 20·log10 of the ratio.
    Amplitude,
    /// A ratio of powers (kurtosis): 10·log10 of the ratio.
    Power,
}

/// One scalar stage indicator: the single place that says how it is stored, read from a diagnosis,
/// put in the baseline and compared with it. [`ReadingIndicators::to_scalars`],
/// [`ReadingIndicators::from_scalars`], [`ReadingIndicators::from_diagnosis`],
/// [`Baseline::from_readings`] and [`RelativeIndicators::new`] all walk [`INDICATORS`], so a new
/// indicator is its struct field here plus one row (and, when the window should trend it, one line of
/// [`keys::TRENDED`]).
#[derive(Clone, Copy)]
pub struct IndicatorDef {
    /// Stored scalar name (see [`keys`]).
    pub key: &'static str,
    /// Reads it from a reading's indicators.
    pub get: fn(&ReadingIndicators) -> Option<f64>,
    /// Writes it into a reading's indicators (a baseline median, a stored scalar).
    pub set: fn(&mut ReadingIndicators, Option<f64>),
    /// Takes it from a diagnosis (see `from_diagnosis.rs` for the shared helpers).
    pub from_diagnosis: fn(&crate::Diagnosis) -> Option<f64>,
    /// Its form against the baseline, with the [`RelativeIndicators`] field it fills.
    pub relative: Option<RelativeForm>,
    /// Whether its rise counts in the damage index when the fault factors are unknown.
    pub in_damage_index: bool,
}

impl std::fmt::Debug for IndicatorDef {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("IndicatorDef")
            .field("key", &self.key)
            .finish_non_exhaustive()
    }
}

/// How one indicator appears in [`RelativeIndicators`].
#[derive(Debug, Clone, Copy)]
pub struct RelativeForm {
    /// 20·log10 or 10·log10.
    pub form: DbForm,
    /// Reads its field.
    pub get: fn(&RelativeIndicators) -> Option<f64>,
    /// Writes its field.
    pub set: fn(&mut RelativeIndicators, Option<f64>),
}

use super::from_diagnosis as fd;

/// Every scalar stage indicator (the tone evidence and the demodulated band are structured and handled
/// on their own).
pub const INDICATORS: &[IndicatorDef] = &[
    IndicatorDef {
        key: keys::ACCEL_RMS_G,
        get: |r| r.accel_rms_g,
        set: |r, v| r.accel_rms_g = v,
        from_diagnosis: |d| fd::finite(d.indicators.accel_rms_g),
        relative: Some(RelativeForm {
            form: DbForm::Amplitude,
            get: |x| x.accel_rms_db,
            set: |x, v| x.accel_rms_db = v,
        }),
        in_damage_index: true,
    },
    IndicatorDef {
        key: keys::CREST_FACTOR,
        get: |r| r.crest_factor,
        set: |r, v| r.crest_factor = v,
        from_diagnosis: |d| fd::finite(d.stage_indicators.crest_factor),
        relative: Some(RelativeForm {
            form: DbForm::Amplitude,
            get: |x| x.crest_factor_db,
            set: |x, v| x.crest_factor_db = v,
        }),
        in_damage_index: false,
    },
    IndicatorDef {
        key: keys::KURTOSIS,
        get: |r| r.kurtosis,
        set: |r, v| r.kurtosis = v,
        from_diagnosis: |d| fd::finite(d.stage_indicators.kurtosis),
        relative: Some(RelativeForm {
            form: DbForm::Power,
            get: |x| x.kurtosis_db,
            set: |x, v| x.kurtosis_db = v,
        }),
        in_damage_index: false,
    },
    IndicatorDef {
        key: keys::IMPULSE_FACTOR,
        get: |r| r.impulse_factor,
        set: |r, v| r.impulse_factor = v,
        from_diagnosis: |d| fd::finite(d.stage_indicators.impulse_factor).filter(|v| *v > 0.0),
        relative: Some(RelativeForm {
            form: DbForm::Amplitude,
            get: |x| x.impulse_factor_db,
            set: |x, v| x.impulse_factor_db = v,
        }),
        in_damage_index: false,
    },
    IndicatorDef {
        key: keys::VELOCITY_RMS_MM_S,
        get: |r| r.velocity_rms_mm_s,
        set: |r, v| r.velocity_rms_mm_s = v,
        from_diagnosis: |d| fd::finite(d.stage_indicators.velocity_rms_mm_s),
        relative: Some(RelativeForm {
            form: DbForm::Amplitude,
            get: |x| x.velocity_rms_db,
            set: |x, v| x.velocity_rms_db = v,
        }),
        in_damage_index: false,
    },
    IndicatorDef {
        key: keys::ISO_ZONE,
        get: |r| r.iso_zone.map(f64::from),
        set: |r, v| r.iso_zone = v.map(|z| z.clamp(1.0, 4.0).round() as u8),
        from_diagnosis: |d| Some(f64::from(fd::zone_number(d.stage_indicators.iso20816_zone))),
        relative: None,
        in_damage_index: false,
    },
    IndicatorDef {
        key: keys::HIGH_BAND_RMS_G,
        get: |r| r.high_band_rms_g,
        set: |r, v| r.high_band_rms_g = v,
        from_diagnosis: |d| fd::band(d, "ultrasonic"),
        relative: Some(RelativeForm {
            form: DbForm::Amplitude,
            get: |x| x.high_band_db,
            set: |x, v| x.high_band_db = v,
        }),
        in_damage_index: false,
    },
    IndicatorDef {
        key: keys::RESONANCE_BAND_RMS_G,
        get: |r| r.resonance_band_rms_g,
        set: |r, v| r.resonance_band_rms_g = v,
        from_diagnosis: fd::resonance_region,
        relative: Some(RelativeForm {
            form: DbForm::Amplitude,
            get: |x| x.resonance_band_db,
            set: |x, v| x.resonance_band_db = v,
        }),
        in_damage_index: true,
    },
    IndicatorDef {
        key: keys::NOISE_FLOOR_G,
        get: |r| r.noise_floor_g,
        set: |r, v| r.noise_floor_g = v,
        from_diagnosis: |d| fd::finite(d.stage_indicators.noise_floor_g),
        relative: Some(RelativeForm {
            form: DbForm::Amplitude,
            get: |x| x.noise_floor_db,
            set: |x, v| x.noise_floor_db = v,
        }),
        in_damage_index: true,
    },
    IndicatorDef {
        key: keys::ONE_X_AMPLITUDE,
        get: |r| r.one_x_amplitude,
        set: |r, v| r.one_x_amplitude = v,
        from_diagnosis: |d| fd::finite(d.stage_indicators.one_x_velocity_rms_mm_s),
        relative: Some(RelativeForm {
            form: DbForm::Amplitude,
            get: |x| x.one_x_db,
            set: |x, v| x.one_x_db = v,
        }),
        in_damage_index: false,
    },
];

fn tone_key(location: Location, field: &str) -> String {
    format!("stage.{}.{field}", location.key())
}

impl ReadingIndicators {
    /// Flattens to named scalars (the names in [`keys`], plus `stage.<bpfo|bpfi|bsf2|ftf>.<field>`
    /// for the tone evidence). Absent indicators are left out.
    pub fn to_scalars(&self) -> BTreeMap<String, f64> {
        let mut out = BTreeMap::new();
        let mut put = |k: &str, v: Option<f64>| {
            if let Some(v) = v.filter(|v| v.is_finite()) {
                out.insert(k.to_owned(), v);
            }
        };
        for def in INDICATORS {
            put(def.key, (def.get)(self));
        }
        put(
            keys::ENVELOPE_BAND_LO_HZ,
            self.envelope_band_hz.map(|b| b[0]),
        );
        put(
            keys::ENVELOPE_BAND_HI_HZ,
            self.envelope_band_hz.map(|b| b[1]),
        );
        put(
            keys::BELOW_ULTRASONIC_TONE_DB,
            self.below_ultrasonic_tone_db,
        );
        if let Some(tones) = &self.tones {
            out.insert(keys::TONES_PRESENT.to_owned(), 1.0);
            for (loc, t) in Location::KINEMATIC.iter().zip(tones) {
                out.insert(tone_key(*loc, "envelope_score_db"), t.envelope_score_db);
                out.insert(
                    tone_key(*loc, "envelope_harmonics"),
                    f64::from(t.envelope_harmonics),
                );
                out.insert(
                    tone_key(*loc, "spectrum_harmonics"),
                    f64::from(t.spectrum_harmonics),
                );
                out.insert(
                    tone_key(*loc, "spectrum_sidebands"),
                    f64::from(t.spectrum_sidebands),
                );
            }
        }
        out
    }

    /// Rebuilds indicators from stored scalars; unknown names are ignored, missing ones stay `None`.
    pub fn from_scalars(scalars: &BTreeMap<String, f64>) -> ReadingIndicators {
        let get = |k: &str| scalars.get(k).copied().filter(|v| v.is_finite());
        let count =
            |k: String| get(&k).map_or(0, |v| v.clamp(0.0, f64::from(u32::MAX)).round() as u32);
        let tones = (get(keys::TONES_PRESENT).unwrap_or(0.0) > 0.5).then(|| {
            Location::KINEMATIC.map(|loc| ToneEvidence {
                envelope_score_db: get(&tone_key(loc, "envelope_score_db")).unwrap_or(0.0),
                envelope_harmonics: count(tone_key(loc, "envelope_harmonics")),
                spectrum_harmonics: count(tone_key(loc, "spectrum_harmonics")),
                spectrum_sidebands: count(tone_key(loc, "spectrum_sidebands")),
            })
        });
        let mut out = ReadingIndicators {
            tones,
            envelope_band_hz: get(keys::ENVELOPE_BAND_LO_HZ)
                .zip(get(keys::ENVELOPE_BAND_HI_HZ))
                .map(|(lo, hi)| [lo, hi]),
            below_ultrasonic_tone_db: get(keys::BELOW_ULTRASONIC_TONE_DB),
            ..ReadingIndicators::default()
        };
        for def in INDICATORS {
            (def.set)(&mut out, get(def.key));
        }
        out
    }

    /// Tone evidence for one kinematic location, if known.
    pub fn tone(&self, location: Location) -> Option<ToneEvidence> {
        let i = Location::KINEMATIC.iter().position(|l| *l == location)?;
        self.tones.as_ref().and_then(|t| t.get(i).copied())
    }
}

/// The reference state of one bearing life: the median of each indicator over the baseline readings.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct Baseline {
    /// Median indicators.
    pub indicators: ReadingIndicators,
    /// How many readings it was formed from.
    pub readings: usize,
}

/// Median of the finite values (mean of the middle two for an even count); `None` when there are none.
pub fn median(mut v: Vec<f64>) -> Option<f64> {
    v.retain(|x| x.is_finite());
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len();
    Some(if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    })
}

impl Baseline {
    /// Median of each indicator over `readings` (a field is `None` when no reading has it).
    pub fn from_readings(readings: &[&ReadingIndicators]) -> Baseline {
        let med = |f: &dyn Fn(&ReadingIndicators) -> Option<f64>| {
            median(readings.iter().filter_map(|r| f(r)).collect())
        };
        let tones = {
            let with: Vec<&[ToneEvidence; 4]> =
                readings.iter().filter_map(|r| r.tones.as_ref()).collect();
            (!with.is_empty()).then(|| {
                std::array::from_fn(|i| {
                    let m = |f: &dyn Fn(&ToneEvidence) -> f64| {
                        median(with.iter().map(|t| f(&t[i])).collect()).unwrap_or(0.0)
                    };
                    ToneEvidence {
                        envelope_score_db: m(&|t| t.envelope_score_db),
                        envelope_harmonics: m(&|t| f64::from(t.envelope_harmonics)).round() as u32,
                        spectrum_harmonics: m(&|t| f64::from(t.spectrum_harmonics)).round() as u32,
                        spectrum_sidebands: m(&|t| f64::from(t.spectrum_sidebands)).round() as u32,
                    }
                })
            })
        };
        let mut indicators = ReadingIndicators {
            tones,
            envelope_band_hz: None,
            ..ReadingIndicators::default()
        };
        for def in INDICATORS {
            (def.set)(&mut indicators, med(&def.get));
        }
        Baseline {
            indicators,
            readings: readings.len(),
        }
    }
}

/// Amplitude ratio in dB (20·log10), `None` unless both are positive and finite.
pub fn db_over(value: Option<f64>, base: Option<f64>) -> Option<f64> {
    match (value, base) {
        (Some(v), Some(b)) if v > 0.0 && b > 0.0 && v.is_finite() && b.is_finite() => {
            Some(20.0 * (v / b).log10())
        }
        _ => None,
    }
}

/// Every indicator of one reading against the life's baseline, in dB (20·log10 of the amplitude
/// ratio; kurtosis, a ratio of powers, uses 10·log10).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct RelativeIndicators {
    /// Overall acceleration RMS, dB over baseline.
    pub accel_rms_db: Option<f64>,
    /// Crest factor, dB over baseline.
    pub crest_factor_db: Option<f64>,
    /// Kurtosis, dB (10·log10) over baseline.
    pub kurtosis_db: Option<f64>,
    /// Impulse factor, dB over baseline.
    #[serde(default)]
    pub impulse_factor_db: Option<f64>,
    /// Velocity RMS, dB over baseline.
    pub velocity_rms_db: Option<f64>,
    /// High / ultrasonic band, dB over baseline.
    pub high_band_db: Option<f64>,
    /// Resonance region, dB over baseline.
    pub resonance_band_db: Option<f64>,
    /// Noise floor, dB over baseline.
    pub noise_floor_db: Option<f64>,
    /// 1x amplitude, dB over baseline.
    pub one_x_db: Option<f64>,
}

impl RelativeIndicators {
    /// Compares `r` with `base`.
    pub fn new(r: &ReadingIndicators, base: &ReadingIndicators) -> RelativeIndicators {
        let mut out = RelativeIndicators::default();
        for def in INDICATORS {
            if let Some(RelativeForm { form, set, .. }) = def.relative {
                let db = db_over((def.get)(r), (def.get)(base));
                set(
                    &mut out,
                    match form {
                        DbForm::Amplitude => db,
                        DbForm::Power => db.map(|d| d / 2.0),
                    },
                );
            }
        }
        out
    }

    /// The largest rise over baseline of the indicators that count in the damage index without fault
    /// factors ([`IndicatorDef::in_damage_index`]), dB; 0 when none can be compared.
    pub fn largest_damage_rise_db(&self) -> f64 {
        INDICATORS
            .iter()
            .filter(|d| d.in_damage_index)
            .filter_map(|d| d.relative.and_then(|rf| (rf.get)(self)))
            .fold(0.0_f64, f64::max)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scalars_round_trip() {
        let r = ReadingIndicators {
            accel_rms_g: Some(0.5),
            crest_factor: Some(4.0),
            kurtosis: Some(3.2),
            impulse_factor: Some(4.1),
            velocity_rms_mm_s: Some(1.1),
            iso_zone: Some(2),
            high_band_rms_g: None,
            resonance_band_rms_g: Some(0.2),
            noise_floor_g: Some(1e-3),
            one_x_amplitude: Some(0.7),
            tones: Some([
                ToneEvidence {
                    envelope_score_db: 12.5,
                    envelope_harmonics: 3,
                    spectrum_harmonics: 2,
                    spectrum_sidebands: 4,
                },
                ToneEvidence::default(),
                ToneEvidence::default(),
                ToneEvidence::default(),
            ]),
            envelope_band_hz: Some([2000.0, 6000.0]),
            below_ultrasonic_tone_db: Some(4.5),
        };
        let s = r.to_scalars();
        assert!(!s.contains_key(keys::HIGH_BAND_RMS_G));
        assert!((s["stage.bpfo.envelope_harmonics"] - 3.0).abs() < 1e-12);
        assert!((s[keys::IMPULSE_FACTOR] - 4.1).abs() < 1e-12);
        assert_eq!(ReadingIndicators::from_scalars(&s), r);
        // Without the tones flag the tone fields are not invented.
        let mut bare = s.clone();
        bare.remove(keys::TONES_PRESENT);
        assert!(ReadingIndicators::from_scalars(&bare).tones.is_none());
    }

    #[test]
    fn baseline_is_the_median_and_db_is_twenty_log() {
        let mk = |a: f64| ReadingIndicators {
            accel_rms_g: Some(a),
            kurtosis: Some(3.0),
            ..Default::default()
        };
        let (a, b, c) = (mk(1.0), mk(5.0), mk(2.0));
        let base = Baseline::from_readings(&[&a, &b, &c]);
        assert_eq!(base.indicators.accel_rms_g, Some(2.0));
        assert_eq!(base.indicators.high_band_rms_g, None);
        // A doubling of amplitude is 6.02 dB (20·log10 2).
        let rel = RelativeIndicators::new(&mk(4.0), &base.indicators);
        assert!((rel.accel_rms_db.unwrap() - 6.0206).abs() < 1e-3);
        assert!(rel.high_band_db.is_none());
        assert_eq!(db_over(Some(1.0), Some(0.0)), None);
    }
}
