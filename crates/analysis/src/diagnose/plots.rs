//! Spectra for plots, computed the way [`super::diagnose`] computes its own.

use super::band::default_kurtogram_limits;
use super::units::{AccelUnit, VelocityUnit};
use super::{MIN_SAMPLES, linear_segment};
use crate::AnalysisError;
use crate::envelope::{PreparedSignal, fast_kurtogram, squared_envelope_spectrum};
use crate::indicators::iso_velocity_band_hz;
use crate::kinematics::FaultFrequencies;
use crate::spectrum::{Detector, Spectrum, SpectrumEngine, SpectrumUnits, check_rate};
use crate::window::Window;

/// Averaged acceleration amplitude spectrum (peak detector, flat-top window so lines read true) for
/// plots, with the line spacing [`crate::diagnose`] uses.
///
/// # Errors
/// Bad sample rate or shaft speed, non-finite samples, fewer than [`MIN_SAMPLES`] samples.
pub fn acceleration_spectrum(
    engine: &mut SpectrumEngine,
    samples_g: &[f64],
    fs: f64,
    shaft_hz: f64,
    unit: AccelUnit,
) -> Result<Spectrum, AnalysisError> {
    let seg = plot_segment(samples_g, fs, shaft_hz)?;
    engine.amplitude_spectrum(
        samples_g,
        fs,
        seg,
        Window::FlatTop,
        SpectrumUnits {
            quantity: unit.quantity(),
            detector: Detector::Peak,
        },
        0.0,
    )
}

/// Averaged velocity amplitude spectrum (RMS detector, flat-top window) for plots; lines below the ISO
/// band's lower edge (10 Hz, or 2 Hz at or below 600 r/min) are zero.
///
/// # Errors
/// As [`acceleration_spectrum`].
pub fn velocity_spectrum(
    engine: &mut SpectrumEngine,
    samples_g: &[f64],
    fs: f64,
    shaft_hz: f64,
    unit: VelocityUnit,
) -> Result<Spectrum, AnalysisError> {
    let seg = plot_segment(samples_g, fs, shaft_hz)?;
    let low = iso_velocity_band_hz(shaft_hz).0;
    engine.amplitude_spectrum(
        samples_g,
        fs,
        seg,
        Window::FlatTop,
        SpectrumUnits {
            quantity: unit.quantity(),
            detector: Detector::Rms,
        },
        low,
    )
}

fn plot_segment(samples_g: &[f64], fs: f64, shaft_hz: f64) -> Result<usize, AnalysisError> {
    check_rate(fs)?;
    if !(shaft_hz.is_finite() && shaft_hz > 0.0) {
        return Err(AnalysisError::BadShaftSpeed(shaft_hz));
    }
    if samples_g.len() < MIN_SAMPLES {
        return Err(AnalysisError::TooShort {
            len: samples_g.len(),
            min: MIN_SAMPLES,
        });
    }
    Ok(linear_segment(samples_g.len(), fs, shaft_hz))
}

/// Squared envelope spectrum (g², peak) for plots, in `band` or, when `None`, in the fast kurtogram's
/// most impulsive band. To plot what [`crate::diagnose`] used, pass its `demodulation_band_hz` and
/// `prewhitened`. Returns the spectrum and the band used.
///
/// # Errors
/// As [`crate::diagnose`].
pub fn envelope_spectrum(
    engine: &mut SpectrumEngine,
    samples_g: &[f64],
    fs: f64,
    freqs: &FaultFrequencies,
    band: Option<(f64, f64)>,
    prewhiten: bool,
) -> Result<(Spectrum, [f64; 2]), AnalysisError> {
    check_rate(fs)?;
    if samples_g.len() < MIN_SAMPLES {
        return Err(AnalysisError::TooShort {
            len: samples_g.len(),
            min: MIN_SAMPLES,
        });
    }
    let sig = PreparedSignal::new(engine, samples_g, fs, prewhiten)?;
    let band = if let Some((lo, hi)) = band {
        [lo, hi]
    } else {
        let limits = default_kurtogram_limits(freqs);
        let kg = fast_kurtogram(engine, &sig, &limits)?;
        [kg.best.lo_hz, kg.best.hi_hz]
    };
    Ok((
        squared_envelope_spectrum(engine, &sig, band[0], band[1])?,
        band,
    ))
}
