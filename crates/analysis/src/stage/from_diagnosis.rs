//! Stage indicators taken from a [`Diagnosis`].

use super::indicators::{INDICATORS, ReadingIndicators, ToneEvidence};
use crate::{Diagnosis, FaultKind, Zone};

/// Whether the defect tones of a diagnosis are used.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ToneUse {
    /// Use the envelope and spectrum findings per fault location (fault factors are trusted).
    Use,
    /// Ignore them: generic damage indicators only (fault factors unknown or not trusted).
    Ignore,
}

/// ISO 20816-3 zone A..D as 1..=4.
pub(super) fn zone_number(z: Zone) -> u8 {
    match z {
        Zone::A => 1,
        Zone::B => 2,
        Zone::C => 3,
        Zone::D => 4,
    }
}

/// A finite value, else `None`.
pub(super) fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

/// RMS of one of the diagnosis' named analysis bands, g, when the recording reaches it.
pub(super) fn band(d: &Diagnosis, name: &str) -> Option<f64> {
    d.stage_indicators
        .bands
        .iter()
        .find(|b| b.name == name && b.available)
        .map(|b| b.rms_g)
}

/// RMS over the bearing-resonance region: the diagnosis' `bearing_resonance` (0.5-2 kHz) and
/// `high_frequency` (2-20 kHz) bands together, since bearing and housing resonances lie anywhere in it.
pub(super) fn resonance_region(d: &Diagnosis) -> Option<f64> {
    match (band(d, "bearing_resonance"), band(d, "high_frequency")) {
        (None, None) => None,
        (a, b) => Some((a.unwrap_or(0.0).powi(2) + b.unwrap_or(0.0).powi(2)).sqrt()),
    }
}

impl ReadingIndicators {
    /// The stage indicators of one diagnosed reading.
    ///
    /// Each scalar indicator is read by its row of [`INDICATORS`]: the high band is the diagnosis'
    /// `ultrasonic` band when the recording reaches it (else `None`);
    /// the resonance region is its `bearing_resonance` and `high_frequency` bands together (0.5 kHz
    /// up to 20 kHz or the recording's limit); the 1x amplitude is the 1x velocity RMS, mm/s.
    pub fn from_diagnosis(d: &Diagnosis, tones: ToneUse) -> ReadingIndicators {
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
        let mut out = ReadingIndicators {
            tones,
            envelope_band_hz: Some(d.demodulation_band_hz),
            below_ultrasonic_tone_db: FaultKind::ALL
                .iter()
                .any(|&k| backed(k))
                .then_some(d.band_choice.below_ultrasonic_db)
                .flatten(),
            ..ReadingIndicators::default()
        };
        for def in INDICATORS {
            (def.set)(&mut out, (def.from_diagnosis)(d));
        }
        out
    }
}
