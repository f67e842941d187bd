//! Stage indicators taken from a [`Diagnosis`].

use super::indicators::{ReadingIndicators, ToneEvidence};
use crate::{Diagnosis, FaultKind, Zone};

/// Whether the defect tones of a diagnosis are used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ToneUse {
    /// Use the envelope and spectrum findings per fault location (fault factors are trusted).
    Use,
    /// Ignore them: generic damage indicators only (fault factors unknown or not trusted).
    Ignore,
}

fn zone_number(z: Zone) -> u8 {
    match z {
        Zone::A => 1,
        Zone::B => 2,
        Zone::C => 3,
        Zone::D => 4,
    }
}

/// RMS over the bearing-resonance region: the diagnosis' `bearing_resonance` (0.5-2 kHz) and
/// `high_frequency` (2-20 kHz) bands together, since bearing and housing resonances lie anywhere in it.
fn resonance_region(band: &dyn Fn(&str) -> Option<f64>) -> Option<f64> {
    match (band("bearing_resonance"), band("high_frequency")) {
        (None, None) => None,
        (a, b) => Some((a.unwrap_or(0.0).powi(2) + b.unwrap_or(0.0).powi(2)).sqrt()),
    }
}

impl ReadingIndicators {
    /// The stage indicators of one diagnosed reading.
    ///
    /// The high band is the diagnosis' `ultrasonic` band when the recording reaches it (else `None`);
    /// the resonance region is its `bearing_resonance` and `high_frequency` bands together (0.5 kHz
    /// up to 20 kHz or the recording's limit); the 1x amplitude is the 1x velocity RMS, mm/s.
    pub fn from_diagnosis(d: &Diagnosis, tones: ToneUse) -> ReadingIndicators {
        let s = &d.stage_indicators;
        let band = |name: &str| {
            s.bands
                .iter()
                .find(|b| b.name == name && b.available)
                .map(|b| b.rms_g)
        };
        // Envelope tones count only for the location the diagnosis names: the band search looks at
        // many bands, and the location call's margin and band corroboration are what separate a defect
        // family from a chance line ("unclear" and "none" leave the stage to the other indicators).
        let backed = |kind: FaultKind| d.diagnosis == kind.label();
        let tones = match tones {
            ToneUse::Ignore => None,
            ToneUse::Use => Some(FaultKind::ALL.map(|kind| {
                d.findings
                    .iter()
                    .find(|f| f.kind == kind)
                    .map_or_else(ToneEvidence::default, |f| ToneEvidence {
                        envelope_score_db: if backed(kind) { f.score_db } else { 0.0 },
                        envelope_harmonics: if backed(kind) { f.harmonics } else { 0 },
                        spectrum_harmonics: f.linear_harmonics,
                        spectrum_sidebands: f.linear_sidebands,
                    })
            })),
        };
        let finite = |v: f64| v.is_finite().then_some(v);
        ReadingIndicators {
            accel_rms_g: finite(d.indicators.accel_rms_g),
            crest_factor: finite(s.crest_factor),
            kurtosis: finite(s.kurtosis),
            velocity_rms_mm_s: finite(s.velocity_rms_mm_s),
            iso_zone: Some(zone_number(s.iso20816_zone)),
            high_band_rms_g: band("ultrasonic"),
            resonance_band_rms_g: resonance_region(&band),
            noise_floor_g: finite(s.noise_floor_g),
            one_x_amplitude: finite(s.one_x_velocity_rms_mm_s),
            tones,
            envelope_band_hz: Some(d.demodulation_band_hz),
        }
    }
}
