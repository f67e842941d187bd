//! FFT engine, Welch averaging, amplitude scaling and acceleration-to-velocity conversion.
//!
//! Scaling (see also the crate doc):
//! - [`PsdScaling::Density`]: one-sided PSD, `|X|²/(fs·Σw²)` doubled except DC and Nyquist (unit²/Hz),
//!   identical to `scipy.signal.welch(scaling='density')`.
//! - [`PsdScaling::Spectrum`]: one-sided power spectrum, `|X|²/(Σw)²` doubled except DC and Nyquist
//!   (unit²); a sine's line reads its mean square A²/2. Identical to `scaling='spectrum'`.
//! - Amplitude spectra are the square root of the power spectrum (RMS), times √2 for peak.

use std::collections::HashMap;
use std::sync::Arc;

use realfft::RealFftPlanner;
use rustfft::FftPlanner;
use rustfft::num_complex::Complex;
use serde::{Deserialize, Serialize};

use crate::AnalysisError;
use crate::window::Window;

/// Standard gravity, m/s² per g.
pub const STANDARD_GRAVITY: f64 = 9.806_65;

/// Physical quantity of spectrum values.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    /// Acceleration in g.
    AccelerationG,
    /// Acceleration in m/s².
    AccelerationMS2,
    /// Velocity in mm/s.
    VelocityMmS,
    /// Velocity in in/s.
    VelocityInS,
    /// Squared envelope of acceleration, g².
    SquaredEnvelopeG2,
}

/// Amplitude detector of spectrum lines.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Detector {
    /// Peak amplitude (a sine of amplitude A reads A).
    Peak,
    /// RMS amplitude (a sine of amplitude A reads A/√2).
    Rms,
}

/// Units of an amplitude spectrum.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct SpectrumUnits {
    /// What is measured.
    pub quantity: Quantity,
    /// Peak or RMS lines.
    pub detector: Detector,
}

/// A one-sided amplitude spectrum on a uniform frequency axis starting at 0 Hz.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Spectrum {
    /// Line spacing, Hz. Line `i` is at `i·freq_step_hz`.
    pub freq_step_hz: f64,
    /// Line amplitudes.
    pub values: Vec<f64>,
    /// Units of `values`.
    pub units: SpectrumUnits,
}

impl Spectrum {
    /// Frequency of line `i` in Hz.
    pub fn freq_hz(&self, i: usize) -> f64 {
        i as f64 * self.freq_step_hz
    }
    /// Frequency of line `i` in cycles per minute.
    pub fn freq_cpm(&self, i: usize) -> f64 {
        60.0 * self.freq_hz(i)
    }
    /// Frequency of line `i` in orders of a shaft speed in Hz.
    pub fn freq_orders(&self, i: usize, shaft_hz: f64) -> f64 {
        self.freq_hz(i) / shaft_hz
    }
}

/// Scaling of a Welch estimate.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PsdScaling {
    /// Power spectral density, unit²/Hz.
    Density,
    /// Power spectrum, unit² (line height = mean square of a sine).
    Spectrum,
}

/// Parameters of a Welch estimate (the defaults of `scipy.signal.welch` are Hann, 50 % overlap,
/// mean removal, density).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WelchParams {
    /// Segment length in samples.
    pub segment_len: usize,
    /// Overlap in samples (less than `segment_len`).
    pub overlap: usize,
    /// Window applied to each segment.
    pub window: Window,
    /// Subtract each segment's mean before windowing (`detrend='constant'`).
    pub detrend_mean: bool,
    /// Density or spectrum.
    pub scaling: PsdScaling,
}

impl WelchParams {
    /// Hann, 50 % overlap, mean removed, density: scipy's defaults for a segment length.
    pub fn scipy_default(segment_len: usize) -> Self {
        Self {
            segment_len,
            overlap: segment_len / 2,
            window: Window::Hann,
            detrend_mean: true,
            scaling: PsdScaling::Density,
        }
    }
}

/// A one-sided Welch power estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct PowerSpectrum {
    /// Line spacing, Hz.
    pub freq_step_hz: f64,
    /// One-sided power (density or spectrum, see `scaling`), `segment_len/2 + 1` lines.
    pub values: Vec<f64>,
    /// How `values` are scaled.
    pub scaling: PsdScaling,
    /// Equivalent noise bandwidth of the window, Hz.
    pub enbw_hz: f64,
    /// Number of averaged segments.
    pub segments: usize,
}

/// The FFT engine: owns the FFT planners (plans are cached and reused) and cached windows.
///
/// Keep one per thread and reuse it for a batch of readings.
pub struct SpectrumEngine {
    real: RealFftPlanner<f64>,
    complex: FftPlanner<f64>,
    /// Single-precision plans, for ranking candidate demodulation bands (never for reported values).
    complex32: FftPlanner<f32>,
    /// See `complex32`.
    real32: RealFftPlanner<f32>,
    /// FFT scratch space kept between calls (a fresh one per call costs page faults on long FFTs).
    scratch64: Vec<Complex<f64>>,
    /// See `scratch64`.
    scratch32: Vec<Complex<f32>>,
    windows: HashMap<(Window, usize), Arc<[f64]>>,
}

impl std::fmt::Debug for SpectrumEngine {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("SpectrumEngine")
            .field("cached_windows", &self.windows.len())
            .finish_non_exhaustive()
    }
}

impl Default for SpectrumEngine {
    fn default() -> Self {
        Self::new()
    }
}

impl SpectrumEngine {
    /// A new engine with empty caches.
    pub fn new() -> Self {
        Self {
            real: RealFftPlanner::new(),
            complex: FftPlanner::new(),
            complex32: FftPlanner::new(),
            real32: RealFftPlanner::new(),
            scratch64: Vec::new(),
            scratch32: Vec::new(),
            windows: HashMap::new(),
        }
    }

    /// Periodic window of length `n`, cached.
    pub fn window(&mut self, window: Window, n: usize) -> Arc<[f64]> {
        Arc::clone(
            self.windows
                .entry((window, n))
                .or_insert_with(|| window.coefficients(n).into()),
        )
    }

    /// Unnormalised real FFT of `x` (like `numpy.fft.rfft`): `x.len()/2 + 1` complex bins.
    pub fn rfft(&mut self, x: &[f64]) -> Vec<Complex<f64>> {
        let n = x.len();
        if n == 0 {
            return Vec::new();
        }
        let plan = self.real.plan_fft_forward(n);
        let mut input = x.to_vec();
        let mut out = plan.make_output_vec();
        let scratch = sized(&mut self.scratch64, plan.get_scratch_len());
        // Lengths come from the plan itself, so processing cannot fail.
        if plan
            .process_with_scratch(&mut input, &mut out, scratch)
            .is_err()
        {
            out.fill(Complex::new(0.0, 0.0));
        }
        out
    }

    /// In-place unnormalised complex FFT (forward, or inverse without the 1/N factor).
    pub fn fft_in_place(&mut self, buf: &mut [Complex<f64>], inverse: bool) {
        planned_fft_in_place(&mut self.complex, &mut self.scratch64, buf, inverse);
    }

    /// [`Self::fft_in_place`] in single precision: about twice the speed, for intermediate values whose
    /// rounding (~1e-7 relative) cannot matter, such as ranking candidate bands.
    pub fn fft_in_place_f32(&mut self, buf: &mut [Complex<f32>], inverse: bool) {
        planned_fft_in_place(&mut self.complex32, &mut self.scratch32, buf, inverse);
    }

    /// Unnormalised real FFT in single precision (for ranking only, like [`Self::fft_in_place_f32`]):
    /// `input` is used as scratch; `input.len()/2 + 1` bins.
    pub(crate) fn rfft_f32(&mut self, input: &mut [f32]) -> Vec<Complex<f32>> {
        let n = input.len();
        if n == 0 {
            return Vec::new();
        }
        let plan = self.real32.plan_fft_forward(n);
        let mut out = plan.make_output_vec();
        let scratch = sized(&mut self.scratch32, plan.get_scratch_len());
        // Lengths come from the plan itself, so processing cannot fail.
        if plan.process_with_scratch(input, &mut out, scratch).is_err() {
            out.fill(Complex::new(0.0, 0.0));
        }
        out
    }

    /// Welch-averaged one-sided power estimate of `x` sampled at `fs_hz`.
    ///
    /// # Errors
    /// [`AnalysisError::BadParameter`] for a zero segment, an overlap not below the segment, a segment
    /// longer than the signal or a bad sample rate; [`AnalysisError::NonFinite`] for NaN/∞ samples.
    pub fn welch(
        &mut self,
        x: &[f64],
        fs_hz: f64,
        p: &WelchParams,
    ) -> Result<PowerSpectrum, AnalysisError> {
        check_rate(fs_hz)?;
        check_finite(x)?;
        let n = p.segment_len;
        if n < 2 || p.overlap >= n || n > x.len() {
            return Err(AnalysisError::BadParameter(format!(
                "Welch segment of {n} samples with overlap {} does not fit a signal of {} samples",
                p.overlap,
                x.len()
            )));
        }
        let w = self.window(p.window, n);
        let s1: f64 = w.iter().sum();
        let s2: f64 = w.iter().map(|v| v * v).sum();
        let plan = self.real.plan_fft_forward(n);
        let mut buf = plan.make_input_vec();
        let mut out = plan.make_output_vec();
        let mut scratch = plan.make_scratch_vec();
        let mut acc = vec![0.0; n / 2 + 1];
        let step = n - p.overlap;
        let mut segments = 0;
        let mut start = 0;
        while start + n <= x.len() {
            let seg = &x[start..start + n];
            let mean = if p.detrend_mean {
                seg.iter().sum::<f64>() / n as f64
            } else {
                0.0
            };
            for ((b, s), wv) in buf.iter_mut().zip(seg).zip(w.iter()) {
                *b = (s - mean) * wv;
            }
            if plan
                .process_with_scratch(&mut buf, &mut out, &mut scratch)
                .is_err()
            {
                return Err(AnalysisError::BadParameter(
                    "FFT buffer size mismatch".to_owned(),
                ));
            }
            for (a, c) in acc.iter_mut().zip(&out) {
                *a += c.norm_sqr();
            }
            segments += 1;
            start += step;
        }
        let scale = match p.scaling {
            PsdScaling::Density => 1.0 / (fs_hz * s2),
            PsdScaling::Spectrum => 1.0 / (s1 * s1),
        } / segments as f64;
        let last = acc.len() - 1;
        for (k, a) in acc.iter_mut().enumerate() {
            let double = k != 0 && !(n.is_multiple_of(2) && k == last);
            *a *= if double { 2.0 * scale } else { scale };
        }
        Ok(PowerSpectrum {
            freq_step_hz: fs_hz / n as f64,
            values: acc,
            scaling: p.scaling,
            // ENBW in bins, N·Σw²/(Σw)² (REFERENCES §7.1), from the sums already taken.
            enbw_hz: n as f64 * s2 / (s1 * s1) * fs_hz / n as f64,
            segments,
        })
    }

    /// Averaged acceleration amplitude spectrum of `samples_g` (in g), converted to `quantity`.
    ///
    /// Velocity is obtained by dividing each line by 2πf (frequency-domain integration); lines below
    /// `low_cut_hz` are set to zero. Use [`Window::FlatTop`] when line amplitudes must read true.
    ///
    /// # Errors
    /// As [`SpectrumEngine::welch`]; [`AnalysisError::BadParameter`] if `quantity` is the squared envelope.
    pub fn amplitude_spectrum(
        &mut self,
        samples_g: &[f64],
        fs_hz: f64,
        segment_len: usize,
        window: Window,
        units: SpectrumUnits,
        low_cut_hz: f64,
    ) -> Result<Spectrum, AnalysisError> {
        let p = WelchParams {
            segment_len,
            overlap: segment_len / 2,
            window,
            detrend_mean: true,
            scaling: PsdScaling::Spectrum,
        };
        let ps = self.welch(samples_g, fs_hz, &p)?;
        let det = match units.detector {
            Detector::Peak => std::f64::consts::SQRT_2,
            Detector::Rms => 1.0,
        };
        let df = ps.freq_step_hz;
        let conv = conversion_from_g(units.quantity)?;
        let values = ps
            .values
            .iter()
            .enumerate()
            .map(|(k, &p)| det * p.sqrt() * conv.factor(k as f64 * df, low_cut_hz))
            .collect();
        Ok(Spectrum {
            freq_step_hz: df,
            values,
            units,
        })
    }
}

/// Per-line conversion of an acceleration-in-g spectrum to another quantity.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Conversion {
    scale: f64,
    integrate: bool,
}

impl Conversion {
    /// Amplitude factor at frequency `f_hz` (0 below `low_cut_hz` when integrating).
    pub(crate) fn factor(self, f_hz: f64, low_cut_hz: f64) -> f64 {
        if self.integrate {
            if f_hz < low_cut_hz.max(f64::MIN_POSITIVE) {
                0.0
            } else {
                self.scale / (std::f64::consts::TAU * f_hz)
            }
        } else {
            self.scale
        }
    }
}

/// The identity conversion (acceleration in g stays in g).
pub(crate) fn identity_conversion() -> Conversion {
    Conversion {
        scale: 1.0,
        integrate: false,
    }
}

/// Conversion from acceleration in g to `quantity`.
pub(crate) fn conversion_from_g(quantity: Quantity) -> Result<Conversion, AnalysisError> {
    Ok(match quantity {
        Quantity::AccelerationG => Conversion {
            scale: 1.0,
            integrate: false,
        },
        Quantity::AccelerationMS2 => Conversion {
            scale: STANDARD_GRAVITY,
            integrate: false,
        },
        Quantity::VelocityMmS => Conversion {
            scale: STANDARD_GRAVITY * 1000.0,
            integrate: true,
        },
        Quantity::VelocityInS => Conversion {
            scale: STANDARD_GRAVITY / 0.0254,
            integrate: true,
        },
        Quantity::SquaredEnvelopeG2 => {
            return Err(AnalysisError::BadParameter(
                "a squared envelope is not a conversion of acceleration".to_owned(),
            ));
        }
    })
}

/// Mean square of the band `[lo_hz, hi_hz]` from a density PSD, optionally converted (velocity etc.).
pub(crate) fn band_mean_square(
    psd: &PowerSpectrum,
    lo_hz: f64,
    hi_hz: f64,
    conv: Conversion,
) -> f64 {
    let df = psd.freq_step_hz;
    psd.values
        .iter()
        .enumerate()
        .filter(|(k, _)| {
            let f = *k as f64 * df;
            f >= lo_hz && f <= hi_hz
        })
        .map(|(k, &p)| {
            let c = conv.factor(k as f64 * df, lo_hz);
            p * c * c * df
        })
        .sum()
}

/// Fails on a non-positive or non-finite sample rate.
pub(crate) fn check_rate(fs_hz: f64) -> Result<(), AnalysisError> {
    if fs_hz.is_finite() && fs_hz > 0.0 {
        Ok(())
    } else {
        Err(AnalysisError::BadSampleRate(fs_hz))
    }
}

/// Fails on the first NaN or infinite sample.
pub(crate) fn check_finite(x: &[f64]) -> Result<(), AnalysisError> {
    match x.iter().position(|v| !v.is_finite()) {
        Some(index) => Err(AnalysisError::NonFinite { index }),
        None => Ok(()),
    }
}

/// One in-place complex FFT with a plan from `planner` (cached there), at either precision.
fn planned_fft_in_place<T: rustfft::FftNum>(
    planner: &mut FftPlanner<T>,
    scratch: &mut Vec<Complex<T>>,
    buf: &mut [Complex<T>],
    inverse: bool,
) {
    if buf.is_empty() {
        return;
    }
    let plan = if inverse {
        planner.plan_fft_inverse(buf.len())
    } else {
        planner.plan_fft_forward(buf.len())
    };
    let scratch = sized(scratch, plan.get_inplace_scratch_len());
    plan.process_with_scratch(buf, scratch);
}

/// The first `len` entries of `scratch`, grown (with zeros) when it is shorter.
fn sized<T: rustfft::FftNum>(scratch: &mut Vec<Complex<T>>, len: usize) -> &mut [Complex<T>] {
    if scratch.len() < len {
        scratch.resize(len, Complex::new(T::zero(), T::zero()));
    }
    &mut scratch[..len]
}

/// Largest length ≤ `n` whose only prime factors are 2, 3 and 5 (fast FFT sizes).
pub fn fast_len_at_most(n: usize) -> usize {
    (1..=n).rev().find(|&m| is_smooth(m)).unwrap_or(1)
}

/// Smallest length ≥ `n` whose only prime factors are 2, 3 and 5.
pub fn fast_len_at_least(n: usize) -> usize {
    // A 5-smooth number exists below 2n for every n, so the search ends.
    (n.max(1)..=2 * n.max(1))
        .find(|&m| is_smooth(m))
        .unwrap_or(n)
}

fn is_smooth(mut m: usize) -> bool {
    if m == 0 {
        return false;
    }
    for p in [2, 3, 5] {
        while m.is_multiple_of(p) {
            m /= p;
        }
    }
    m == 1
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sine(a: f64, f: f64, fs: f64, n: usize) -> Vec<f64> {
        (0..n)
            .map(|i| a * (std::f64::consts::TAU * f * i as f64 / fs).sin())
            .collect()
    }

    // REFERENCES §7.2: a sine's peak reads true with flat-top (within 0.1 dB) even between bins.
    #[test]
    fn flat_top_reads_sine_peak_and_rms_within_0_1_db() {
        let mut e = SpectrumEngine::new();
        for f in [100.0, 123.37, 251.5] {
            let x = sine(2.0, f, 4096.0, 40960);
            let peak = SpectrumUnits {
                quantity: Quantity::AccelerationG,
                detector: Detector::Peak,
            };
            let s = e
                .amplitude_spectrum(&x, 4096.0, 4096, Window::FlatTop, peak, 0.0)
                .unwrap();
            let top = s.values.iter().copied().fold(0.0, f64::max);
            assert!((20.0 * (top / 2.0).log10()).abs() < 0.1, "f {f}: {top}");
            let rms = SpectrumUnits {
                detector: Detector::Rms,
                ..peak
            };
            let s = e
                .amplitude_spectrum(&x, 4096.0, 4096, Window::FlatTop, rms, 0.0)
                .unwrap();
            let top = s.values.iter().copied().fold(0.0, f64::max);
            assert!((20.0 * (top / std::f64::consts::SQRT_2).log10()).abs() < 0.1);
        }
    }

    // Analytic: velocity of a 1 g sine at 100 Hz is 9806.65/(2π·100) mm/s peak; in/s by 25.4.
    #[test]
    fn velocity_by_frequency_domain_integration() {
        let mut e = SpectrumEngine::new();
        let x = sine(1.0, 100.0, 8192.0, 81920);
        let u = SpectrumUnits {
            quantity: Quantity::VelocityMmS,
            detector: Detector::Peak,
        };
        let s = e
            .amplitude_spectrum(&x, 8192.0, 8192, Window::FlatTop, u, 10.0)
            .unwrap();
        let top = s.values.iter().copied().fold(0.0, f64::max);
        let want = STANDARD_GRAVITY * 1000.0 / (std::f64::consts::TAU * 100.0);
        assert!((top / want - 1.0).abs() < 0.012, "{top} vs {want}");
        let u = SpectrumUnits {
            quantity: Quantity::VelocityInS,
            detector: Detector::Peak,
        };
        let s2 = e
            .amplitude_spectrum(&x, 8192.0, 8192, Window::FlatTop, u, 10.0)
            .unwrap();
        let top2 = s2.values.iter().copied().fold(0.0, f64::max);
        assert!((top2 * 25.4 / top - 1.0).abs() < 1e-9);
        // Lines below the low cut are zeroed.
        assert!(s.values[..10].iter().all(|&v| v == 0.0));
    }

    // Parseval (REFERENCES §7.2): Σx² = (1/N)Σ|X|² over the full two-sided spectrum.
    #[test]
    fn parseval_holds_for_rfft() {
        let mut e = SpectrumEngine::new();
        let x: Vec<f64> = (0..1000)
            .map(|i| ((i * 7919) % 101) as f64 / 50.0 - 1.0)
            .collect();
        let big = e.rfft(&x);
        let n = x.len();
        let mut two_sided: f64 = big.iter().map(|c| 2.0 * c.norm_sqr()).sum();
        two_sided -= big[0].norm_sqr() + big[n / 2].norm_sqr();
        let time: f64 = x.iter().map(|v| v * v).sum();
        assert!((two_sided / n as f64 - time).abs() < 1e-9 * time);
    }

    // Best check value 9: Welch 'spectrum' scaling, A = 2 at 50 Hz, fs 1000, Hann, nperseg 1000 → 2.000.
    #[test]
    fn welch_spectrum_scaling_matches_scipy_check() {
        let mut e = SpectrumEngine::new();
        let x = sine(2.0, 50.0, 1000.0, 100_000);
        let p = WelchParams {
            scaling: PsdScaling::Spectrum,
            ..WelchParams::scipy_default(1000)
        };
        let ps = e.welch(&x, 1000.0, &p).unwrap();
        assert!((ps.values[50] - 2.0).abs() < 1e-6, "{}", ps.values[50]);
        // Best check value 10: the density integrates to the variance (2.000).
        let ps = e
            .welch(&x, 1000.0, &WelchParams::scipy_default(1000))
            .unwrap();
        let total: f64 = ps.values.iter().sum::<f64>() * ps.freq_step_hz;
        assert!((total - 2.0).abs() < 1e-6, "{total}");
        // Density peak × ENBW (1.5 bins) gives the mean square as well.
        assert!((ps.values[50] * ps.enbw_hz - 2.0).abs() < 1e-6);
    }

    #[test]
    fn welch_rejects_bad_input() {
        let mut e = SpectrumEngine::new();
        let x = vec![0.0; 100];
        assert!(
            e.welch(&x, 1000.0, &WelchParams::scipy_default(200))
                .is_err()
        );
        assert!(e.welch(&x, 0.0, &WelchParams::scipy_default(50)).is_err());
        let mut y = x.clone();
        y[3] = f64::NAN;
        assert!(matches!(
            e.welch(&y, 1000.0, &WelchParams::scipy_default(50)),
            Err(AnalysisError::NonFinite { index: 3 })
        ));
    }

    #[test]
    fn fast_lengths() {
        assert_eq!(fast_len_at_most(121_265), 120_000);
        assert_eq!(fast_len_at_least(65_537), 65_610);
        assert_eq!(fast_len_at_most(1), 1);
    }
}
