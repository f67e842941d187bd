//! Band energies over bands given in Hz or in orders, and the default bands used for stage indicators.
//!
//! Default bands (named by what they are):
//! - `shaft_orders`: 0.3–3.5 orders of shaft speed (unbalance, misalignment, looseness region around 1x).
//! - `defect_tones`: from 0.8 × the lowest defect rate (BPFO, BPFI, 2×BSF) to 10 × BPFI, the linear-spectrum
//!   region where discrete defect harmonics appear.
//! - `bearing_resonance`: 500–2000 Hz, where small defects ring bearing and housing resonances (REFERENCES
//!   §6.1, common practice). Clipped at 0.45 × sample rate.
//! - `high_frequency`: 2 kHz up to 20 kHz or 0.45 × sample rate, whichever is lower.
//! - `ultrasonic`: 20 kHz up to 60 kHz or 0.45 × sample rate; available only when that upper edge reaches
//!   at least 24 kHz (i.e. sample rate ≥ 53.4 kHz). A recording without it cannot show stage 1.
//!
//! A band is `available` when at least half of it lies below 0.45 × sample rate (the usable range
//! below the anti-alias filter). Energies are RMS acceleration in g from a density PSD.

use serde::{Deserialize, Serialize};

use crate::kinematics::FaultFrequencies;
use crate::spectrum::{PowerSpectrum, band_mean_square, identity_conversion};

/// Units of band edges.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum BandScale {
    /// Edges in Hz.
    Hz,
    /// Edges in orders of shaft speed.
    Orders,
}

/// A named frequency band.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandSpec {
    /// Stable name (used in scalar names for trending).
    pub name: String,
    /// Lower edge.
    pub lo: f64,
    /// Upper edge.
    pub hi: f64,
    /// Units of `lo` and `hi`.
    pub scale: BandScale,
}

/// Energy of one band.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandEnergy {
    /// Band name.
    pub name: String,
    /// Lower edge actually used, Hz.
    pub lo_hz: f64,
    /// Upper edge actually used, Hz.
    pub hi_hz: f64,
    /// RMS acceleration in the band, g (0 when unavailable).
    pub rms_g: f64,
    /// Whether the sample rate allows the band.
    pub available: bool,
}

/// Upper usable frequency as a fraction of the sample rate.
pub const USABLE_FRACTION: f64 = 0.45;

/// The default stage bands for a sample rate and the bearing's fault frequencies (see module doc).
pub fn default_bands(fs_hz: f64, freqs: &FaultFrequencies) -> Vec<BandSpec> {
    let top = USABLE_FRACTION * fs_hz;
    let lowest = freqs.bpfo.min(freqs.bpfi).min(2.0 * freqs.bsf);
    let hz = |name: &str, lo: f64, hi: f64| BandSpec {
        name: name.to_owned(),
        lo,
        hi,
        scale: BandScale::Hz,
    };
    vec![
        BandSpec {
            name: "shaft_orders".to_owned(),
            lo: 0.3,
            hi: 3.5,
            scale: BandScale::Orders,
        },
        hz("defect_tones", 0.8 * lowest, 10.0 * freqs.bpfi),
        hz("bearing_resonance", 500.0, 2000.0),
        hz("high_frequency", 2000.0, 20_000.0_f64.min(top)),
        hz("ultrasonic", 20_000.0, 60_000.0_f64.min(top).max(20_000.0)),
    ]
}

/// Resolves a band to Hz and tells whether the sample rate allows it.
pub fn resolve(band: &BandSpec, shaft_hz: f64, fs_hz: f64) -> (f64, f64, bool) {
    let (lo, hi) = match band.scale {
        BandScale::Hz => (band.lo, band.hi),
        BandScale::Orders => (band.lo * shaft_hz, band.hi * shaft_hz),
    };
    let top = USABLE_FRACTION * fs_hz;
    let available = hi > lo
        && lo < top
        && (top.min(hi) - lo) >= 0.5 * (hi - lo)
        && (band.name != "ultrasonic" || top >= 24_000.0);
    (lo, hi.min(top), available)
}

/// RMS (g) in each band from an acceleration density PSD in g²/Hz.
pub fn band_energies(
    psd: &PowerSpectrum,
    bands: &[BandSpec],
    shaft_hz: f64,
    fs_hz: f64,
) -> Vec<BandEnergy> {
    let accel = identity_conversion();
    bands
        .iter()
        .map(|b| {
            let (lo_hz, hi_hz, available) = resolve(b, shaft_hz, fs_hz);
            let rms_g = if available {
                band_mean_square(psd, lo_hz, hi_hz, accel).sqrt()
            } else {
                0.0
            };
            BandEnergy {
                name: b.name.clone(),
                lo_hz,
                hi_hz,
                rms_g,
                available,
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::kinematics::FaultFactors;
    use crate::spectrum::{SpectrumEngine, WelchParams};

    fn freqs() -> FaultFrequencies {
        FaultFactors {
            ftf: 0.398,
            bsf: 2.357,
            bpfo: 3.585,
            bpfi: 5.415,
        }
        .at_shaft_hz(29.5)
    }

    // Analytic: sines of 0.5 g at 30 Hz and 0.2 g at 1 kHz land in their bands with RMS A/√2.
    #[test]
    fn band_rms_of_known_sines() {
        let fs = 12_000.0;
        let x: Vec<f64> = (0..120_000)
            .map(|i| {
                let t = i as f64 / fs;
                0.5 * (std::f64::consts::TAU * 30.0 * t).sin()
                    + 0.2 * (std::f64::consts::TAU * 1000.0 * t).sin()
            })
            .collect();
        let psd = SpectrumEngine::new()
            .welch(&x, fs, &WelchParams::scipy_default(8192))
            .unwrap();
        let e = band_energies(&psd, &default_bands(fs, &freqs()), 29.5, fs);
        let get = |n: &str| e.iter().find(|b| b.name == n).unwrap().clone();
        assert!((get("shaft_orders").rms_g - 0.5 / 2f64.sqrt()).abs() < 0.005);
        assert!((get("bearing_resonance").rms_g - 0.2 / 2f64.sqrt()).abs() < 0.002);
        assert!(get("high_frequency").rms_g < 0.01);
        assert!(!get("ultrasonic").available);
        assert!(get("high_frequency").available);
    }

    // Availability follows the sample rate: ultrasonic needs fs ≥ 53.4 kHz (module doc).
    #[test]
    fn ultrasonic_availability() {
        let f = freqs();
        let us = |fs: f64| resolve(&default_bands(fs, &f)[4], 29.5, fs).2;
        assert!(!us(48_000.0));
        assert!(us(64_000.0));
        assert!(us(102_400.0));
        let orders = BandSpec {
            name: "x".into(),
            lo: 1.0,
            hi: 2.0,
            scale: BandScale::Orders,
        };
        assert_eq!(resolve(&orders, 25.0, 1000.0), (25.0, 50.0, true));
    }
}
