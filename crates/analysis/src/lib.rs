//! Signal processing and rolling-element bearing diagnostics for Spallcast.
//!
//! Pure computation: no file I/O, no database, no GUI types. The main entry point is [`diagnose`], which
//! turns one acceleration waveform (in g) plus shaft speed and bearing fault factors into a
//! [`Diagnosis`]: overall indicators, ISO 20816-3 zone, band energies, envelope findings per fault
//! location and a most-likely fault location (or "none"), plus [`StageIndicators`] for stage logic.
//!
//! # Units and conventions
//! - Frequencies in Hz, time in seconds, acceleration in g (standard gravity 9.80665 m/s²), velocity in
//!   mm/s. RPM appears only at the edges (callers convert).
//! - Bearing fault factors ([`FaultFactors`]) are in orders of shaft speed. BSF is the 1x ball-spin factor
//!   (rotation of the element about its own axis); the rolling-element defect impact rate is 2×BSF, and
//!   rolling-element findings search harmonics of 2×BSF with ±FTF sidebands.
//!
//! # Scaling conventions
//! - FFTs are unnormalised (as `numpy.fft.rfft`); [`SpectrumEngine::rfft`] returns `N/2 + 1` bins.
//! - Welch estimates match `scipy.signal.welch`: `Density` is a one-sided PSD `|X|²/(fs·Σw²)` (unit²/Hz,
//!   bins other than DC and Nyquist doubled); `Spectrum` is `|X|²/(Σw)²` (unit², a sine's line reads its
//!   mean square A²/2).
//! - Amplitude spectra ([`Spectrum`]) are single-sided and coherent-gain corrected: the RMS detector reads
//!   `sqrt(power spectrum)`, the peak detector √2 times that, so a sine of amplitude A at a line reads A
//!   (peak). With the flat-top window it reads within 0.1 dB anywhere between lines; with Hann the
//!   scallop loss is up to 1.42 dB.
//! - Band RMS values integrate the density PSD over the band (`Σ PSD·Δf`), so they are independent of the
//!   window's ENBW.
//! - Velocity is obtained by frequency-domain integration (divide each line by 2πf), with lines below a
//!   low cut-off set to zero. The ISO broadband velocity is RMS over 10–1000 Hz (2–1000 Hz for machines
//!   at or below 600 r/min).
//! - The squared envelope spectrum is the single-sided peak amplitude spectrum (g²) of `|z|² − mean`,
//!   where `z` is the analytic band signal.
//! - Kurtosis is Pearson's (Gaussian = 3). Crest factor is peak/RMS of the mean-removed signal.
//!
//! Results are advisory. Isolate and lock out a machine before working on it, and follow local codes
//! and licensed practice.
#![forbid(unsafe_code)]
#![deny(missing_docs)]

pub mod bands;
mod diagnose;
pub mod envelope;
pub mod findings;
pub mod indicators;
pub mod kinematics;
pub mod spectrum;
#[cfg(test)]
mod testutil;
pub mod window;

pub use bands::{BandEnergy, BandScale, BandSpec, band_energies, default_bands};
pub use diagnose::rules as location_rules;
pub use diagnose::{
    ANALYSIS_VERSION, AccelUnit, BandChoice, DiagnoseOptions, Diagnosis, DisplayUnits,
    DisplayValues, Finding, Indicators, LocationCall, MIN_SAMPLES, StageIndicators, VelocityUnit,
    acceleration_spectrum, diagnose, diagnose_with, envelope_spectrum, stage_indicators_flat,
    velocity_spectrum,
};
pub use indicators::{MachineGroup, Support, Zone};
pub use kinematics::{
    BearingGeometry, CheckFactors, FaultFactors, FaultFrequencies, FaultKind, FaultMarker,
    MarkerFamily, fault_markers,
};
pub use spectrum::{Detector, Quantity, Spectrum, SpectrumEngine, SpectrumUnits};
pub use window::Window;

/// Errors of the analysis functions. Each names what is wrong with the input.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum AnalysisError {
    /// Too few samples for the requested analysis.
    #[error("the signal is too short: {len} samples, at least {min} needed")]
    TooShort {
        /// Samples given.
        len: usize,
        /// Samples needed.
        min: usize,
    },
    /// A sample is NaN or infinite.
    #[error("the signal has a non-finite value at sample {index}")]
    NonFinite {
        /// Index of the first bad sample.
        index: usize,
    },
    /// The sample rate is not a positive finite number.
    #[error("invalid sample rate {0} Hz")]
    BadSampleRate(f64),
    /// The shaft speed is not positive, finite and below the Nyquist frequency.
    #[error("invalid shaft speed {0} Hz")]
    BadShaftSpeed(f64),
    /// Invalid bearing geometry.
    #[error("invalid bearing geometry: {0}")]
    BadGeometry(String),
    /// Invalid fault factors.
    #[error("invalid fault factors: {0}")]
    BadFactors(String),
    /// A frequency band that cannot be used.
    #[error("unusable band {lo_hz}–{hi_hz} Hz: {reason}")]
    BadBand {
        /// Lower edge, Hz.
        lo_hz: f64,
        /// Upper edge, Hz.
        hi_hz: f64,
        /// Why.
        reason: String,
    },
    /// Another invalid parameter.
    #[error("invalid parameter: {0}")]
    BadParameter(String),
}
pub mod forecast;
pub mod record;
pub mod stage;
