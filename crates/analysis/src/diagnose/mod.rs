//! One-call diagnosis of a reading: indicators, ISO zone, bands, envelope findings and stage indicators.

use serde::{Deserialize, Serialize};

mod band;
mod locate;
mod plots;
pub mod rules;
mod units;

pub use band::BandChoice;
pub use locate::LocationCall;
pub use plots::{acceleration_spectrum, envelope_spectrum, velocity_spectrum};
pub use units::{AccelUnit, DisplayUnits, VelocityUnit};

use crate::AnalysisError;
use crate::bands::{BandEnergy, band_energies, default_bands};
use crate::envelope::{PreparedSignal, squared_envelope_spectrum};
use crate::findings::{FamilyScore, SearchParams, score_family};
use crate::indicators::{self, MachineGroup, Support, Zone, iso_velocity_band_hz, iso_zone};
use crate::kinematics::{CheckFactors, FaultFactors, FaultFrequencies, FaultKind};
use crate::spectrum::{
    Detector, PowerSpectrum, Quantity, Spectrum, SpectrumEngine, SpectrumUnits, WelchParams,
    band_mean_square, check_finite, check_rate, conversion_from_g,
};

/// Fewest samples [`diagnose`] accepts.
pub const MIN_SAMPLES: usize = 1024;

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
    /// Impulse factor (peak / mean absolute value); 0 in documents written before it existed.
    #[serde(default)]
    pub impulse_factor: f64,
}

/// Version of the diagnosis document and of the stage indicators taken from it. Change it whenever
/// either changes (a new indicator, a new field, a changed computation): stored readings of an older
/// version are then analysed again when a database is opened.
pub const ANALYSIS_VERSION: &str = "spallcast-analysis-6";

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
    /// Most likely fault location, "unclear" (see `location`) or "none".
    pub diagnosis: String,
    /// 0–1 support for `diagnosis` (see [`LocationCall::confidence`]).
    #[serde(default)]
    pub confidence: f64,
    /// The location decision with its candidates and reason.
    #[serde(default)]
    pub location: LocationCall,
    /// How the demodulation band was chosen.
    #[serde(default)]
    pub band_choice: BandChoice,
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
/// The envelope band is the options' band, or the candidate band (fast-kurtogram cells and fixed wide
/// bands, see [`BandChoice`]) whose envelope shows a fault family most strongly, after removing
/// discrete lines when strong shaft-synchronous tones are present (cepstral pre-whitening on request). The location follows each family's
/// physics with a margin over the runner-up, else "unclear" (see [`LocationCall`] and
/// [`rules::LOCATION_RULES`]); clipped or silent recordings get "none".
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

    // Envelope: the user's band, or the candidate band whose envelope shows a fault family best.
    let (choice, ses) = if let Some((lo, hi)) = options.demodulation_band_hz {
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
        let sig = PreparedSignal::new(engine, &centred, fs, options.prewhiten)?;
        let ses = squared_envelope_spectrum(engine, &sig, lo, hi)?;
        let choice = BandChoice {
            band_hz: [lo, hi],
            source: "user".to_owned(),
            prewhitened: options.prewhiten,
            reason: "given by the user".to_owned(),
            ..BandChoice::default()
        };
        (choice, ses)
    } else {
        let (choice, _sig, ses) = band::choose_band(
            engine,
            &centred,
            fs,
            &freqs,
            &psd,
            &options.search,
            options.prewhiten,
        )?;
        (choice, ses)
    };
    let band = choice.band_hz;

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
    let corroborating = (choice.source != "user").then_some(locate::Corroboration {
        agreeing: choice.corroborating_bands,
        present: choice.present_bands,
    });
    let location = locate::locate(
        &findings,
        recording_problem(&centred, &indicators).as_deref(),
        corroborating,
    );

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
    // The median line (the element a full sort would put in the middle).
    let mid = in_band.len() / 2;
    let noise_floor_g = if in_band.is_empty() {
        0.0
    } else {
        *in_band.select_nth_unstable_by(mid, f64::total_cmp).1
    };
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
        impulse_factor: indicators::impulse_factor(&centred),
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
        demodulation_band_source: choice.source.clone(),
        demodulation_band_sk: choice.sk,
        prewhitened: choice.prewhitened,
        findings,
        diagnosis: location.diagnosis.clone(),
        confidence: location.confidence,
        location,
        band_choice: choice,
        stage_indicators,
    })
}

/// Why a recording cannot carry a location: silent (no signal) or clipped (flat-topped at its
/// extreme, [`rules::CLIPPED_FRACTION`]). `None` when usable.
fn recording_problem(centred: &[f64], ind: &Indicators) -> Option<String> {
    if !(ind.accel_rms_g > 1e-9 && ind.accel_peak_g > 0.0) {
        return Some("the recording is silent (no signal)".to_owned());
    }
    let top = ind.accel_peak_g * (1.0 - 1e-6);
    let at_top = centred.iter().filter(|v| v.abs() >= top).count();
    let need = (rules::CLIPPED_FRACTION.value * centred.len() as f64).max(8.0);
    (at_top as f64 >= need)
        .then(|| format!("the recording is clipped ({at_top} samples at its largest value)"))
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

#[cfg(test)]
mod tests;
