//! One-call diagnosis of a reading: indicators, ISO zone, bands, envelope findings and stage indicators.

use serde::{Deserialize, Serialize};

use crate::AnalysisError;
use crate::bands::{BandEnergy, band_energies, default_bands};
use crate::envelope::{KurtogramLimits, PreparedSignal, fast_kurtogram, squared_envelope_spectrum};
use crate::findings::{FamilyScore, SearchParams, score_family};
use crate::indicators::{self, MachineGroup, Support, Zone, iso_velocity_band_hz, iso_zone};
use crate::kinematics::{CheckFactors, FaultFactors, FaultFrequencies, FaultKind};
use crate::spectrum::{
    Detector, PowerSpectrum, Quantity, STANDARD_GRAVITY, Spectrum, SpectrumEngine, SpectrumUnits,
    WelchParams, band_mean_square, check_finite, check_rate, conversion_from_g,
};
use crate::window::Window;

/// Fewest samples [`diagnose`] accepts.
pub const MIN_SAMPLES: usize = 1024;
/// Envelope score (dB over the local floor) a fault must reach to be named.
pub const DECISION_DB: f64 = 12.0;
/// Harmonics (of the envelope comb) a fault must show to be named.
pub const DECISION_HARMONICS: u32 = 2;

/// Acceleration display unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum AccelUnit {
    /// Standard gravity units.
    #[default]
    G,
    /// Metres per second squared.
    MetresPerSecond2,
}

/// Velocity display unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum VelocityUnit {
    /// Millimetres per second.
    #[default]
    MmPerS,
    /// Inches per second.
    InPerS,
}

impl AccelUnit {
    /// Symbol for reports.
    pub fn symbol(self) -> &'static str {
        match self {
            Self::G => "g",
            Self::MetresPerSecond2 => "m/s²",
        }
    }
    fn quantity(self) -> Quantity {
        match self {
            Self::G => Quantity::AccelerationG,
            Self::MetresPerSecond2 => Quantity::AccelerationMS2,
        }
    }
    fn convert_g(self, v: f64) -> f64 {
        match self {
            Self::G => v,
            Self::MetresPerSecond2 => v * STANDARD_GRAVITY,
        }
    }
}

impl VelocityUnit {
    /// Symbol for reports.
    pub fn symbol(self) -> &'static str {
        match self {
            Self::MmPerS => "mm/s",
            Self::InPerS => "in/s",
        }
    }
    fn quantity(self) -> Quantity {
        match self {
            Self::MmPerS => Quantity::VelocityMmS,
            Self::InPerS => Quantity::VelocityInS,
        }
    }
    fn convert_mm_s(self, v: f64) -> f64 {
        match self {
            Self::MmPerS => v,
            Self::InPerS => v / 25.4,
        }
    }
}

/// Units used for display values and plotted spectra (the stable JSON fields stay in g and mm/s).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
pub struct DisplayUnits {
    /// Acceleration unit.
    pub acceleration: AccelUnit,
    /// Velocity unit.
    pub velocity: VelocityUnit,
}

/// Options of [`diagnose`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DiagnoseOptions {
    /// ISO 20816-3 machine group.
    pub iso_group: MachineGroup,
    /// ISO 20816-3 support class.
    pub iso_support: Support,
    /// Demodulation band `[lo, hi]` in Hz; `None` chooses it with the fast kurtogram.
    pub demodulation_band_hz: Option<(f64, f64)>,
    /// Apply cepstral pre-whitening before envelope analysis.
    pub prewhiten: bool,
    /// Display units.
    pub units: DisplayUnits,
    /// Peak-search parameters (slip tolerance, harmonics, line threshold).
    pub search: SearchParams,
}

impl Default for DiagnoseOptions {
    fn default() -> Self {
        Self {
            iso_group: MachineGroup::Medium,
            iso_support: Support::Rigid,
            demodulation_band_hz: None,
            prewhiten: false,
            units: DisplayUnits::default(),
            search: SearchParams::default(),
        }
    }
}

/// Overall indicators of the reading.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Indicators {
    /// RMS acceleration (mean removed), g.
    pub accel_rms_g: f64,
    /// Largest absolute acceleration (mean removed), g.
    pub accel_peak_g: f64,
    /// Peak / RMS.
    pub crest_factor: f64,
    /// Pearson kurtosis (Gaussian = 3).
    pub kurtosis: f64,
    /// Broadband velocity RMS over `velocity_band_hz`, mm/s.
    pub velocity_rms_mm_s: f64,
    /// Frequency range of the velocity RMS, Hz.
    pub velocity_band_hz: [f64; 2],
    /// ISO 20816-3 evaluation zone of the velocity RMS.
    pub iso20816_zone: Zone,
}

/// The envelope result for one fault location.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Finding {
    /// "outer race", "inner race", "rolling element" or "cage".
    pub fault: String,
    /// The location as an enum.
    pub kind: FaultKind,
    /// Nominal defect rate (BPFO, BPFI, 2×BSF or FTF), Hz.
    pub defect_rate_hz: f64,
    /// Envelope-spectrum score: level over the local floor, dB.
    pub score_db: f64,
    /// Envelope harmonics found.
    pub harmonics: u32,
    /// Envelope sidebands found.
    pub sidebands: u32,
    /// Fundamental matched within the slip tolerance, Hz.
    pub matched_hz: f64,
    /// Level of each envelope harmonic over its floor, dB.
    pub harmonic_db: Vec<f64>,
    /// Harmonics found in the linear acceleration spectrum.
    pub linear_harmonics: u32,
    /// Sidebands found in the linear acceleration spectrum.
    pub linear_sidebands: u32,
}

/// Display-unit copies of the main levels.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DisplayValues {
    /// Acceleration RMS in `accel_unit`.
    pub accel_rms: f64,
    /// Acceleration peak in `accel_unit`.
    pub accel_peak: f64,
    /// Unit symbol of the acceleration values.
    pub accel_unit: String,
    /// Velocity RMS in `velocity_unit`.
    pub velocity_rms: f64,
    /// Unit symbol of the velocity value.
    pub velocity_unit: String,
}

/// Scalars the stage-assessment logic uses, per reading.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StageIndicators {
    /// RMS acceleration (g) in each default band, with availability (see [`crate::bands`]).
    pub bands: Vec<BandEnergy>,
    /// Best fault location by envelope score, whether or not it passed the decision threshold.
    pub envelope_best_fault: FaultKind,
    /// Envelope defect-tone score of that fault, dB over the local floor.
    pub envelope_score_db: f64,
    /// Envelope harmonics of that fault.
    pub envelope_harmonics: u32,
    /// Discrete defect harmonics of that fault in the linear acceleration spectrum.
    pub linear_defect_harmonics: u32,
    /// Sidebands around those harmonics in the linear acceleration spectrum.
    pub linear_sidebands: u32,
    /// Median line level (RMS g) of the linear acceleration spectrum in the defect-tone band: the noise
    /// floor between tones.
    pub noise_floor_g: f64,
    /// 1x amplitude, velocity RMS (mm/s), from the lines around the shaft speed (±2 %).
    pub one_x_velocity_rms_mm_s: f64,
    /// Broadband velocity RMS (ISO band), mm/s.
    pub velocity_rms_mm_s: f64,
    /// ISO 20816-3 zone.
    pub iso20816_zone: Zone,
    /// Crest factor.
    pub crest_factor: f64,
    /// Pearson kurtosis.
    pub kurtosis: f64,
}

/// Result of [`diagnose`]. Serialises to the stable JSON document.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Diagnosis {
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Samples analysed.
    pub samples: usize,
    /// Shaft speed, Hz.
    pub shaft_hz: f64,
    /// Fault factors used, orders (BSF 1x convention).
    pub fault_factors: FaultFactors,
    /// Fault frequencies, Hz (BSF 1x convention; the rolling-element defect rate is 2×bsf).
    pub fault_frequencies_hz: FaultFrequencies,
    /// Overall indicators.
    pub indicators: Indicators,
    /// The main levels in the chosen display units.
    pub display: DisplayValues,
    /// Demodulation band used for the envelope, Hz.
    pub demodulation_band_hz: [f64; 2],
    /// "kurtogram" or "user".
    pub demodulation_band_source: String,
    /// Spectral kurtosis of the demodulation band (0 when given by the user).
    pub demodulation_band_sk: f64,
    /// Whether cepstral pre-whitening was applied.
    pub prewhitened: bool,
    /// One finding per fault location, strongest envelope score first.
    pub findings: Vec<Finding>,
    /// Most likely fault location, or "none".
    pub diagnosis: String,
    /// Scalars for stage assessment.
    pub stage_indicators: StageIndicators,
}

fn validate(
    samples_g: &[f64],
    fs: f64,
    shaft_hz: f64,
    factors: &FaultFactors,
) -> Result<(), AnalysisError> {
    check_rate(fs)?;
    if !(shaft_hz.is_finite() && shaft_hz > 0.0 && shaft_hz < fs / 2.0) {
        return Err(AnalysisError::BadShaftSpeed(shaft_hz));
    }
    factors.validate()?;
    if samples_g.len() < MIN_SAMPLES {
        return Err(AnalysisError::TooShort {
            len: samples_g.len(),
            min: MIN_SAMPLES,
        });
    }
    check_finite(samples_g)
}

/// Welch segment for the linear spectrum: line spacing near min(1 Hz, 1x/20), at most the record.
fn linear_segment(len: usize, fs: f64, shaft_hz: f64) -> usize {
    let want = (fs / (1.0_f64).min(shaft_hz / 20.0)).max(256.0);
    let pow = want.log2().ceil().clamp(8.0, 24.0) as u32;
    let by_rate = 1_usize << pow;
    let by_len = 1_usize << (usize::BITS - 1 - len.leading_zeros());
    by_rate.min(by_len)
}

fn accel_psd(
    engine: &mut SpectrumEngine,
    x: &[f64],
    fs: f64,
    shaft_hz: f64,
) -> Result<PowerSpectrum, AnalysisError> {
    engine.welch(
        x,
        fs,
        &WelchParams::scipy_default(linear_segment(x.len(), fs, shaft_hz)),
    )
}

/// Linear RMS amplitude spectrum (g) from a density PSD.
fn rms_lines(psd: &PowerSpectrum, units: SpectrumUnits) -> Spectrum {
    Spectrum {
        freq_step_hz: psd.freq_step_hz,
        values: psd
            .values
            .iter()
            .map(|p| (p * psd.enbw_hz).sqrt())
            .collect(),
        units,
    }
}

/// Diagnoses one reading with a fresh [`SpectrumEngine`]. See [`diagnose_with`].
///
/// # Errors
/// As [`diagnose_with`].
pub fn diagnose(
    samples_g: &[f64],
    sample_rate_hz: f64,
    shaft_hz: f64,
    factors: &FaultFactors,
    options: &DiagnoseOptions,
) -> Result<Diagnosis, AnalysisError> {
    diagnose_with(
        &mut SpectrumEngine::new(),
        samples_g,
        sample_rate_hz,
        shaft_hz,
        factors,
        options,
    )
}

/// Diagnoses one reading: acceleration `samples_g` in g at `sample_rate_hz`, shaft speed in Hz, fault
/// factors in orders. Reuses `engine`'s FFT plans and windows.
///
/// The envelope band comes from the fast kurtogram (bands at least 3.5 × the highest defect rate wide,
/// lower edge at least 3 × that rate) unless the options give one. A fault location is named when its
/// envelope score reaches [`DECISION_DB`] with at least [`DECISION_HARMONICS`] harmonics; the strongest
/// such location wins, otherwise the diagnosis is "none".
///
/// # Errors
/// [`AnalysisError`] for a bad sample rate, shaft speed (must be below Nyquist), factors, a user band
/// outside the sample rate's range, fewer than [`MIN_SAMPLES`] samples, or non-finite samples.
#[allow(
    clippy::too_many_lines,
    reason = "one linear pipeline; each step is a call"
)]
pub fn diagnose_with(
    engine: &mut SpectrumEngine,
    samples_g: &[f64],
    sample_rate_hz: f64,
    shaft_hz: f64,
    factors: &FaultFactors,
    options: &DiagnoseOptions,
) -> Result<Diagnosis, AnalysisError> {
    let fs = sample_rate_hz;
    validate(samples_g, fs, shaft_hz, factors)?;
    let freqs = factors.at_shaft_hz(shaft_hz);
    let mean = samples_g.iter().sum::<f64>() / samples_g.len() as f64;
    let centred: Vec<f64> = samples_g.iter().map(|v| v - mean).collect();

    let psd = accel_psd(engine, &centred, fs, shaft_hz)?;
    let (v_lo, v_hi) = iso_velocity_band_hz(shaft_hz);
    let vel = conversion_from_g(Quantity::VelocityMmS)?;
    let velocity_rms_mm_s = band_mean_square(&psd, v_lo, v_hi.min(fs / 2.0), vel).sqrt();
    let indicators = Indicators {
        accel_rms_g: indicators::rms(&centred),
        accel_peak_g: indicators::peak_abs(&centred),
        crest_factor: indicators::crest_factor(&centred),
        kurtosis: indicators::kurtosis(&centred),
        velocity_rms_mm_s,
        velocity_band_hz: [v_lo, v_hi],
        iso20816_zone: iso_zone(velocity_rms_mm_s, options.iso_group, options.iso_support),
    };

    // Envelope.
    let sig = PreparedSignal::new(engine, &centred, fs, options.prewhiten)?;
    let max_rate = freqs
        .bpfo
        .max(freqs.bpfi)
        .max(2.0 * freqs.bsf)
        .max(freqs.ftf);
    let (band, source, sk) = if let Some((lo, hi)) = options.demodulation_band_hz {
        if !(lo.is_finite() && hi.is_finite() && lo >= 0.0 && hi > lo && hi <= fs / 2.0) {
            return Err(AnalysisError::BadBand {
                lo_hz: lo,
                hi_hz: hi,
                reason: format!(
                    "must satisfy 0 ≤ low < high ≤ {} Hz (half the sample rate)",
                    fs / 2.0
                ),
            });
        }
        ([lo, hi], "user", 0.0)
    } else {
        let limits = KurtogramLimits {
            max_level: 6,
            min_bandwidth_hz: 3.5 * max_rate,
            min_lower_edge_hz: 3.0 * max_rate,
        };
        let kg = fast_kurtogram(engine, &sig, &limits)?;
        ([kg.best.lo_hz, kg.best.hi_hz], "kurtogram", kg.best.sk)
    };
    let ses = squared_envelope_spectrum(engine, &sig, band[0], band[1])?;

    let g_units = SpectrumUnits {
        quantity: Quantity::AccelerationG,
        detector: Detector::Rms,
    };
    let lines = rms_lines(&psd, g_units);
    let mut findings: Vec<Finding> = FaultKind::ALL
        .iter()
        .map(|&kind| {
            let f0 = freqs.defect_rate_hz(kind);
            let sb = freqs.sideband_spacing_hz(kind);
            let env = score_family(&ses, f0, sb, shaft_hz, &options.search);
            let lin = score_family(&lines, f0, sb, shaft_hz, &options.search);
            finding(kind, f0, env.as_ref(), lin.as_ref())
        })
        .collect();
    findings.sort_by(|a, b| b.score_db.total_cmp(&a.score_db));
    let diagnosis = findings
        .iter()
        .find(|f| f.score_db >= DECISION_DB && f.harmonics >= DECISION_HARMONICS)
        .map_or_else(|| "none".to_owned(), |f| f.fault.clone());

    let bands = band_energies(&psd, &default_bands(fs, &freqs), shaft_hz, fs);
    let defect_band = bands
        .iter()
        .find(|b| b.name == "defect_tones")
        .map_or((0.0, 0.0), |b| (b.lo_hz, b.hi_hz));
    let mut in_band: Vec<f64> = lines
        .values
        .iter()
        .enumerate()
        .filter(|(k, _)| {
            (defect_band.0..=defect_band.1).contains(&(*k as f64 * lines.freq_step_hz))
        })
        .map(|(_, v)| *v)
        .collect();
    in_band.sort_by(f64::total_cmp);
    let noise_floor_g = in_band.get(in_band.len() / 2).copied().unwrap_or(0.0);
    let best = findings.first();
    let stage_indicators = StageIndicators {
        bands,
        envelope_best_fault: best.map_or(FaultKind::OuterRace, |f| f.kind),
        envelope_score_db: best.map_or(0.0, |f| f.score_db),
        envelope_harmonics: best.map_or(0, |f| f.harmonics),
        linear_defect_harmonics: best.map_or(0, |f| f.linear_harmonics),
        linear_sidebands: best.map_or(0, |f| f.linear_sidebands),
        noise_floor_g,
        one_x_velocity_rms_mm_s: one_x_velocity(&psd, shaft_hz, options.search.tolerance),
        velocity_rms_mm_s,
        iso20816_zone: indicators.iso20816_zone,
        crest_factor: indicators.crest_factor,
        kurtosis: indicators.kurtosis,
    };
    let u = options.units;
    let display = DisplayValues {
        accel_rms: u.acceleration.convert_g(indicators.accel_rms_g),
        accel_peak: u.acceleration.convert_g(indicators.accel_peak_g),
        accel_unit: u.acceleration.symbol().to_owned(),
        velocity_rms: u.velocity.convert_mm_s(velocity_rms_mm_s),
        velocity_unit: u.velocity.symbol().to_owned(),
    };
    Ok(Diagnosis {
        sample_rate_hz: fs,
        samples: samples_g.len(),
        shaft_hz,
        fault_factors: *factors,
        fault_frequencies_hz: freqs,
        indicators,
        display,
        demodulation_band_hz: band,
        demodulation_band_source: source.to_owned(),
        demodulation_band_sk: sk,
        prewhitened: options.prewhiten,
        findings,
        diagnosis,
        stage_indicators,
    })
}

fn finding(
    kind: FaultKind,
    f0: f64,
    env: Option<&FamilyScore>,
    lin: Option<&FamilyScore>,
) -> Finding {
    Finding {
        fault: kind.label().to_owned(),
        kind,
        defect_rate_hz: f0,
        score_db: env.map_or(0.0, |e| e.score_db),
        harmonics: env.map_or(0, |e| e.harmonics),
        sidebands: env.map_or(0, |e| e.sidebands),
        matched_hz: env.map_or(f0, |e| e.matched_hz),
        harmonic_db: env.map(|e| e.harmonic_db.clone()).unwrap_or_default(),
        linear_harmonics: lin.map_or(0, |l| l.harmonics),
        linear_sidebands: lin.map_or(0, |l| l.sidebands),
    }
}

/// Velocity RMS (mm/s) of the 1x component: power of the lines within ±tolerance of 1x (plus the
/// window's main lobe) from the density PSD, integrated to velocity.
fn one_x_velocity(psd: &PowerSpectrum, shaft_hz: f64, tolerance: f64) -> f64 {
    let half = shaft_hz * tolerance + 2.0 * psd.freq_step_hz;
    let Ok(vel) = conversion_from_g(Quantity::VelocityMmS) else {
        return 0.0;
    };
    band_mean_square(psd, shaft_hz - half, shaft_hz + half, vel).sqrt()
}

/// Names and values of the stage indicators as stable scalars for trending (sorted by name). Band
/// energies appear as `band_<name>_rms_g` (only available bands), the zone as 0..3 for A..D.
pub fn stage_indicators_flat(d: &Diagnosis) -> Vec<(String, f64)> {
    let s = &d.stage_indicators;
    let mut out = vec![
        ("accel_rms_g".to_owned(), d.indicators.accel_rms_g),
        ("accel_peak_g".to_owned(), d.indicators.accel_peak_g),
        ("crest_factor".to_owned(), s.crest_factor),
        ("kurtosis".to_owned(), s.kurtosis),
        ("velocity_rms_mm_s".to_owned(), s.velocity_rms_mm_s),
        (
            "iso_zone_index".to_owned(),
            f64::from(s.iso20816_zone as u8),
        ),
        ("envelope_score_db".to_owned(), s.envelope_score_db),
        (
            "envelope_harmonics".to_owned(),
            f64::from(s.envelope_harmonics),
        ),
        (
            "linear_defect_harmonics".to_owned(),
            f64::from(s.linear_defect_harmonics),
        ),
        ("linear_sidebands".to_owned(), f64::from(s.linear_sidebands)),
        ("noise_floor_g".to_owned(), s.noise_floor_g),
        (
            "one_x_velocity_rms_mm_s".to_owned(),
            s.one_x_velocity_rms_mm_s,
        ),
    ];
    for f in &d.findings {
        out.push((format!("envelope_{}_score_db", f.kind.tag()), f.score_db));
    }
    for b in s.bands.iter().filter(|b| b.available) {
        out.push((format!("band_{}_rms_g", b.name), b.rms_g));
    }
    out.sort_by(|a, b| a.0.cmp(&b.0));
    out
}

/// Averaged acceleration amplitude spectrum (peak detector, flat-top window so lines read true) for
/// plots, with the line spacing [`diagnose`] uses.
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

/// Squared envelope spectrum (g², peak) for plots, in `band` or, when `None`, in the kurtogram band
/// [`diagnose`] would choose. Returns the spectrum and the band used.
///
/// # Errors
/// As [`diagnose`].
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
        let max_rate = freqs
            .bpfo
            .max(freqs.bpfi)
            .max(2.0 * freqs.bsf)
            .max(freqs.ftf);
        let limits = KurtogramLimits {
            max_level: 6,
            min_bandwidth_hz: 3.5 * max_rate,
            min_lower_edge_hz: 3.0 * max_rate,
        };
        let kg = fast_kurtogram(engine, &sig, &limits)?;
        [kg.best.lo_hz, kg.best.hi_hz]
    };
    Ok((
        squared_envelope_spectrum(engine, &sig, band[0], band[1])?,
        band,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::kinematics::BearingGeometry;
    use crate::testutil::{Gauss, impulse_train};

    fn cwru_de() -> FaultFactors {
        // REFERENCES §1.2a (CWRU drive-end geometry).
        BearingGeometry {
            rolling_elements: 9,
            element_diameter: 0.3126,
            pitch_diameter: 1.537,
            contact_angle_deg: 0.0,
        }
        .factors()
        .unwrap()
    }

    // Synthetic outer-race impacts (REFERENCES check 17 construction) at BPFO of 1772 r/min are named
    // "outer race"; the JSON document carries the contract's keys.
    #[test]
    fn synthetic_outer_race_is_named() {
        let f = cwru_de();
        let shaft = 1772.0 / 60.0;
        let (x, fs) = impulse_train(f.bpfo * shaft, 3000.0, 12_000.0, 5.0, 2.0, 21);
        let d = diagnose(&x, fs, shaft, &f, &DiagnoseOptions::default()).unwrap();
        assert_eq!(d.diagnosis, "outer race", "{:?}", d.findings);
        assert!(d.findings[0].harmonics >= 2);
        let v = serde_json::to_value(&d).unwrap();
        for k in ["ftf", "bsf", "bpfo", "bpfi"] {
            assert!(v["fault_frequencies_hz"][k].is_number());
        }
        for k in [
            "accel_rms_g",
            "accel_peak_g",
            "crest_factor",
            "kurtosis",
            "velocity_rms_mm_s",
        ] {
            assert!(v["indicators"][k].is_number(), "{k}");
        }
        assert!(v["indicators"]["iso20816_zone"].is_string());
        assert_eq!(v["demodulation_band_hz"].as_array().unwrap().len(), 2);
        assert!(v["findings"][0]["score_db"].is_number() && v["findings"][0]["fault"].is_string());
        let flat = stage_indicators_flat(&d);
        assert!(flat.windows(2).all(|w| w[0].0 < w[1].0));
        assert!(
            flat.iter()
                .any(|(n, _)| n == "band_bearing_resonance_rms_g")
        );
        assert!(
            !flat.iter().any(|(n, _)| n == "band_ultrasonic_rms_g"),
            "12 kHz cannot show the ultrasonic band"
        );
    }

    // A user band finds an inner-race train (impacts at BPFI, amplitude modulated at 1x). Pre-whitening is
    // only checked to run: it removes strictly periodic lines, which a jitter-free synthetic train is.
    #[test]
    fn synthetic_inner_race_with_user_band_and_prewhitening() {
        let f = cwru_de();
        let shaft = 30.0;
        let (mut x, fs) = impulse_train(f.bpfi * shaft, 3500.0, 12_000.0, 5.0, 1.5, 5);
        for (i, v) in x.iter_mut().enumerate() {
            *v *= 1.0 + 0.5 * (std::f64::consts::TAU * shaft * i as f64 / fs).cos();
        }
        let opts = DiagnoseOptions {
            demodulation_band_hz: Some((2500.0, 4500.0)),
            ..DiagnoseOptions::default()
        };
        let d = diagnose(&x, fs, shaft, &f, &opts).unwrap();
        assert_eq!(d.diagnosis, "inner race", "{:?}", d.findings);
        assert_eq!(d.demodulation_band_source, "user");
        let white = diagnose(
            &x,
            fs,
            shaft,
            &f,
            &DiagnoseOptions {
                prewhiten: true,
                ..opts
            },
        )
        .unwrap();
        assert!(white.prewhitened && !d.prewhitened);
    }

    // Gaussian noise (a healthy-baseline stand-in) is "none" for several seeds: the decision threshold
    // keeps pure noise below the call.
    #[test]
    fn gaussian_noise_is_none() {
        let f = cwru_de();
        for seed in 1..=6 {
            let mut g = Gauss::new(seed);
            let x: Vec<f64> = (0..60_000).map(|_| 0.1 * g.next()).collect();
            let d = diagnose(&x, 12_000.0, 29.5, &f, &DiagnoseOptions::default()).unwrap();
            assert_eq!(d.diagnosis, "none", "seed {seed}: {:?}", d.findings);
            // Gaussian kurtosis is 3 (Pearson), crest factor of 60k Gaussian samples about 4–5.
            assert!((d.indicators.kurtosis - 3.0).abs() < 0.1);
        }
    }

    // Analytic: a 1x velocity sine of 4 mm/s RMS at 25 Hz reads 4 mm/s overall and at 1x, zone C for
    // group 2 rigid (ISO 10816-3 Table A.2: 2.8 ≤ v < 4.5).
    #[test]
    fn velocity_sine_gives_iso_zone() {
        let fs = 5000.0;
        let fr = 25.0;
        let v_peak_mm_s = 4.0 * std::f64::consts::SQRT_2;
        let a_peak_g = v_peak_mm_s * std::f64::consts::TAU * fr / (STANDARD_GRAVITY * 1000.0);
        let x: Vec<f64> = (0..50_000)
            .map(|i| a_peak_g * (std::f64::consts::TAU * fr * i as f64 / fs).cos())
            .collect();
        let d = diagnose(&x, fs, fr, &cwru_de(), &DiagnoseOptions::default()).unwrap();
        assert!(
            (d.indicators.velocity_rms_mm_s - 4.0).abs() < 0.04,
            "{}",
            d.indicators.velocity_rms_mm_s
        );
        assert!((d.stage_indicators.one_x_velocity_rms_mm_s - 4.0).abs() < 0.04);
        assert_eq!(d.indicators.iso20816_zone, Zone::C);
        let inch = DiagnoseOptions {
            units: DisplayUnits {
                velocity: VelocityUnit::InPerS,
                acceleration: AccelUnit::MetresPerSecond2,
            },
            ..DiagnoseOptions::default()
        };
        let d2 = diagnose(&x, fs, fr, &cwru_de(), &inch).unwrap();
        assert!((d2.display.velocity_rms * 25.4 - d.indicators.velocity_rms_mm_s).abs() < 1e-9);
        assert!((d2.display.accel_rms - d.indicators.accel_rms_g * STANDARD_GRAVITY).abs() < 1e-12);
    }

    #[test]
    fn bad_inputs_are_errors() {
        let f = cwru_de();
        let x = vec![0.0; 4096];
        let o = DiagnoseOptions::default();
        assert!(matches!(
            diagnose(&x[..100], 1000.0, 10.0, &f, &o),
            Err(AnalysisError::TooShort { .. })
        ));
        assert!(matches!(
            diagnose(&x, 0.0, 10.0, &f, &o),
            Err(AnalysisError::BadSampleRate(_))
        ));
        assert!(matches!(
            diagnose(&x, 1000.0, 600.0, &f, &o),
            Err(AnalysisError::BadShaftSpeed(_))
        ));
        let bad = FaultFactors { bpfo: -1.0, ..f };
        assert!(matches!(
            diagnose(&x, 1000.0, 10.0, &bad, &o),
            Err(AnalysisError::BadFactors(_))
        ));
        let mut y = x.clone();
        y[7] = f64::INFINITY;
        assert!(matches!(
            diagnose(&y, 1000.0, 10.0, &f, &o),
            Err(AnalysisError::NonFinite { index: 7 })
        ));
        let band = DiagnoseOptions {
            demodulation_band_hz: Some((400.0, 900.0)),
            ..o
        };
        assert!(matches!(
            diagnose(&x, 1000.0, 10.0, &f, &band),
            Err(AnalysisError::BadBand { .. })
        ));
    }

    // Plot spectra: a 0.5 g sine at 120 Hz reads 0.5 g peak (flat-top), and its velocity RMS line is
    // 0.5·9806.65/(2π·120)/√2 mm/s.
    #[test]
    fn plot_spectra_read_true() {
        let fs = 6000.0;
        let x: Vec<f64> = (0..60_000)
            .map(|i| 0.5 * (std::f64::consts::TAU * 120.0 * i as f64 / fs).sin())
            .collect();
        let mut e = SpectrumEngine::new();
        let a = acceleration_spectrum(&mut e, &x, fs, 25.0, AccelUnit::G).unwrap();
        let top = a.values.iter().copied().fold(0.0, f64::max);
        assert!((20.0 * (top / 0.5).log10()).abs() < 0.1);
        let v = velocity_spectrum(&mut e, &x, fs, 25.0, VelocityUnit::MmPerS).unwrap();
        let top = v.values.iter().copied().fold(0.0, f64::max);
        let want = 0.5 * STANDARD_GRAVITY * 1000.0
            / (std::f64::consts::TAU * 120.0)
            / std::f64::consts::SQRT_2;
        assert!((20.0 * (top / want).log10()).abs() < 0.1);
        let freqs = cwru_de().at_shaft_hz(25.0);
        let (env, band) = envelope_spectrum(&mut e, &x, fs, &freqs, None, false).unwrap();
        assert!(band[1] > band[0] && env.units.quantity == Quantity::SquaredEnvelopeG2);
    }
}
