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
    /// The stage indicators a trend view offers, with their labels, in display order. A new stage
    /// indicator adds its line here.
    pub const TRENDED: [(&str, &str); 8] = [
        (HIGH_BAND_RMS_G, "high band RMS"),
        (RESONANCE_BAND_RMS_G, "resonance band RMS"),
        (ACCEL_RMS_G, "acceleration RMS"),
        (NOISE_FLOOR_G, "noise floor"),
        (KURTOSIS, "kurtosis"),
        (CREST_FACTOR, "crest factor"),
        (ONE_X_AMPLITUDE, "1x amplitude"),
        (VELOCITY_RMS_MM_S, "velocity RMS"),
    ];

    /// Acceleration peak, g (trended; not read by the stage logic).
    pub const ACCEL_PEAK_G: &str = "stage.accel_peak_g";

    /// RMS acceleration of one named analysis band, g (trended; `stage.band.<name>_rms_g`).
    pub fn band_rms_g(band: &str) -> String {
        format!("stage.band.{band}_rms_g")
    }
}

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
        put(keys::ACCEL_RMS_G, self.accel_rms_g);
        put(keys::CREST_FACTOR, self.crest_factor);
        put(keys::KURTOSIS, self.kurtosis);
        put(keys::VELOCITY_RMS_MM_S, self.velocity_rms_mm_s);
        put(keys::ISO_ZONE, self.iso_zone.map(f64::from));
        put(keys::HIGH_BAND_RMS_G, self.high_band_rms_g);
        put(keys::RESONANCE_BAND_RMS_G, self.resonance_band_rms_g);
        put(keys::NOISE_FLOOR_G, self.noise_floor_g);
        put(keys::ONE_X_AMPLITUDE, self.one_x_amplitude);
        put(
            keys::ENVELOPE_BAND_LO_HZ,
            self.envelope_band_hz.map(|b| b[0]),
        );
        put(
            keys::ENVELOPE_BAND_HI_HZ,
            self.envelope_band_hz.map(|b| b[1]),
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
        ReadingIndicators {
            accel_rms_g: get(keys::ACCEL_RMS_G),
            crest_factor: get(keys::CREST_FACTOR),
            kurtosis: get(keys::KURTOSIS),
            velocity_rms_mm_s: get(keys::VELOCITY_RMS_MM_S),
            iso_zone: get(keys::ISO_ZONE).map(|z| z.clamp(1.0, 4.0).round() as u8),
            high_band_rms_g: get(keys::HIGH_BAND_RMS_G),
            resonance_band_rms_g: get(keys::RESONANCE_BAND_RMS_G),
            noise_floor_g: get(keys::NOISE_FLOOR_G),
            one_x_amplitude: get(keys::ONE_X_AMPLITUDE),
            tones,
            envelope_band_hz: get(keys::ENVELOPE_BAND_LO_HZ)
                .zip(get(keys::ENVELOPE_BAND_HI_HZ))
                .map(|(lo, hi)| [lo, hi]),
        }
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
        Baseline {
            indicators: ReadingIndicators {
                accel_rms_g: med(&|r| r.accel_rms_g),
                crest_factor: med(&|r| r.crest_factor),
                kurtosis: med(&|r| r.kurtosis),
                velocity_rms_mm_s: med(&|r| r.velocity_rms_mm_s),
                iso_zone: med(&|r| r.iso_zone.map(f64::from)).map(|z| z.round() as u8),
                high_band_rms_g: med(&|r| r.high_band_rms_g),
                resonance_band_rms_g: med(&|r| r.resonance_band_rms_g),
                noise_floor_g: med(&|r| r.noise_floor_g),
                one_x_amplitude: med(&|r| r.one_x_amplitude),
                tones,
                envelope_band_hz: None,
            },
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
        RelativeIndicators {
            accel_rms_db: db_over(r.accel_rms_g, base.accel_rms_g),
            crest_factor_db: db_over(r.crest_factor, base.crest_factor),
            kurtosis_db: db_over(r.kurtosis, base.kurtosis).map(|d| d / 2.0),
            velocity_rms_db: db_over(r.velocity_rms_mm_s, base.velocity_rms_mm_s),
            high_band_db: db_over(r.high_band_rms_g, base.high_band_rms_g),
            resonance_band_db: db_over(r.resonance_band_rms_g, base.resonance_band_rms_g),
            noise_floor_db: db_over(r.noise_floor_g, base.noise_floor_g),
            one_x_db: db_over(r.one_x_amplitude, base.one_x_amplitude),
        }
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
        };
        let s = r.to_scalars();
        assert!(!s.contains_key(keys::HIGH_BAND_RMS_G));
        assert!((s["stage.bpfo.envelope_harmonics"] - 3.0).abs() < 1e-12);
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
