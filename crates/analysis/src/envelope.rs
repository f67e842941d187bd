//! Envelope analysis: analytic band signals by FFT, spectral kurtosis, the fast kurtogram, the squared
//! envelope spectrum (SES) and cepstral pre-whitening.
//!
//! The whole record is transformed once ([`PreparedSignal`]). A band's analytic signal is formed by
//! keeping only that band of the one-sided spectrum and inverse-transforming it with a short FFT, which
//! down-samples at the same time (REFERENCES §4.1). The squared envelope `|z|²` has its mean removed
//! before its spectrum is taken.

use rustfft::num_complex::Complex;
use serde::{Deserialize, Serialize};

use crate::AnalysisError;
use crate::spectrum::{
    Detector, Quantity, Spectrum, SpectrumEngine, SpectrumUnits, check_finite, check_rate,
    fast_len_at_least, fast_len_at_most,
};

/// Fraction of a band's width tapered with a raised cosine at each edge (limits time-domain ringing).
const EDGE_TAPER: f64 = 0.05;
/// Fraction of the band signal dropped at each end before spectral kurtosis (filter edge transients and
/// the wrap-around of the circular FFT).
const EDGE_TRIM: f64 = 0.03;

/// The one-sided spectrum of a whole record, ready for band extraction.
#[derive(Debug, Clone)]
pub struct PreparedSignal {
    spec: Vec<Complex<f64>>,
    n: usize,
    fs_hz: f64,
}

impl PreparedSignal {
    /// Transforms `x` (its first `fast_len_at_most(len)` samples, mean removed). With `prewhiten`, the
    /// spectrum is replaced by `X/|X|` (cepstral pre-whitening, REFERENCES §4.3).
    ///
    /// # Errors
    /// Bad sample rate, non-finite samples, or fewer than 64 samples.
    pub fn new(
        engine: &mut SpectrumEngine,
        x: &[f64],
        fs_hz: f64,
        prewhiten: bool,
    ) -> Result<Self, AnalysisError> {
        check_rate(fs_hz)?;
        check_finite(x)?;
        if x.len() < 64 {
            return Err(AnalysisError::TooShort {
                len: x.len(),
                min: 64,
            });
        }
        let n = fast_len_at_most(x.len());
        let mean = x[..n].iter().sum::<f64>() / n as f64;
        let centred: Vec<f64> = x[..n].iter().map(|v| v - mean).collect();
        let mut spec = engine.rfft(&centred);
        if prewhiten {
            for c in &mut spec {
                let m = c.norm_sqr().sqrt();
                *c = if m > 0.0 {
                    *c / m
                } else {
                    Complex::new(0.0, 0.0)
                };
            }
        }
        if let Some(dc) = spec.first_mut() {
            *dc = Complex::new(0.0, 0.0);
        }
        Ok(Self { spec, n, fs_hz })
    }

    /// Discrete/random separation in the frequency domain: every line that stands more than `factor` (in
    /// amplitude) over the median of the lines around it (±64 lines, every 4th) is brought down to that
    /// median, keeping its phase; with `shaft_hz`, only lines within max(2 lines, 0.1 %) of a 1x
    /// harmonic. On a whole-record spectrum deterministic tones (gear mesh and its 1x sidebands,
    /// electrical lines) are single sharp lines, while the impacts of a real bearing defect slip 1–2 %
    /// and belong to the random part (REFERENCES §1.1, §4.3), so they stay, with the resonance
    /// colouring. Returns the share of spectral power removed.
    pub fn remove_discrete_lines(&mut self, factor: f64, shaft_hz: Option<f64>) -> f64 {
        let df = self.freq_step_hz();
        let mags: Vec<f64> = self.spec.iter().map(|c| c.norm_sqr().sqrt()).collect();
        let n = mags.len();
        let half = 64;
        let mut win = Vec::with_capacity(40);
        let (mut total, mut removed) = (0.0, 0.0);
        for k in 1..n {
            let m = mags[k];
            total += m * m;
            let f = k as f64 * df;
            let synchronous = shaft_hz.is_none_or(|fr| {
                let h = (f / fr).round();
                fr > 0.0 && h >= 1.0 && (f - h * fr).abs() <= (2.0 * df).max(1e-3 * f)
            });
            // The local median (of the unmodified magnitudes) only matters for a line that may go.
            if !synchronous || m <= 0.0 {
                continue;
            }
            win.clear();
            let a = k.saturating_sub(half).max(1);
            let b = (k + half).min(n - 1);
            win.extend((a..=b).step_by(4).map(|i| mags[i]));
            let mid = win.len() / 2;
            let (_, med, _) = win.select_nth_unstable_by(mid, f64::total_cmp);
            let med = *med;
            if m > factor * med {
                removed += m * m - med * med;
                self.spec[k] *= med / m;
            }
        }
        if total > 0.0 { removed / total } else { 0.0 }
    }

    /// Samples used (a fast FFT length).
    pub fn len(&self) -> usize {
        self.n
    }

    /// True when no samples are held (never, after a successful `new`).
    pub fn is_empty(&self) -> bool {
        self.n == 0
    }

    /// Sample rate, Hz.
    pub fn sample_rate_hz(&self) -> f64 {
        self.fs_hz
    }

    /// Line spacing of the record spectrum, Hz.
    pub fn freq_step_hz(&self) -> f64 {
        self.fs_hz / self.n as f64
    }

    fn bin_range(&self, lo_hz: f64, hi_hz: f64) -> Result<(usize, usize), AnalysisError> {
        let df = self.freq_step_hz();
        let nyq = self.spec.len() - 1;
        let k_lo = ((lo_hz / df).ceil().max(1.0) as usize).min(nyq);
        let k_hi = ((hi_hz / df).floor() as usize).min(nyq);
        if !(lo_hz.is_finite() && hi_hz.is_finite()) || k_hi < k_lo + 7 {
            return Err(AnalysisError::BadBand {
                lo_hz,
                hi_hz,
                reason: "fewer than 8 spectral lines inside the sample rate's range".to_owned(),
            });
        }
        Ok((k_lo, k_hi))
    }

    /// Complex analytic signal of the band `[lo_hz, hi_hz]`, shifted to base band and down-sampled by
    /// `oversample`×(band width). Returns the samples and their rate in Hz. `x(t) ≈ Re z(t)·e^{iωt}`.
    ///
    /// # Errors
    /// [`AnalysisError::BadBand`] when the band holds fewer than 8 lines.
    pub fn band_signal(
        &self,
        engine: &mut SpectrumEngine,
        lo_hz: f64,
        hi_hz: f64,
        oversample: usize,
    ) -> Result<(Vec<Complex<f64>>, f64), AnalysisError> {
        let (k_lo, k_hi) = self.bin_range(lo_hz, hi_hz)?;
        let m = fast_len_at_least((k_hi - k_lo + 1) * oversample.max(1));
        let mut buf = vec![Complex::new(0.0, 0.0); m];
        for (b, c) in buf.iter_mut().zip(self.tapered_lines(k_lo, k_hi)) {
            *b = c;
        }
        engine.fft_in_place(&mut buf, true);
        Ok((buf, self.fs_hz * m as f64 / self.n as f64))
    }

    /// Lines `k_lo..=k_hi` of the record's spectrum with the band's raised-cosine edge taper and the
    /// one-sided scale (`2/N`): the band of an analytic signal, ready for an inverse FFT.
    fn tapered_lines(&self, k_lo: usize, k_hi: usize) -> impl Iterator<Item = Complex<f64>> + '_ {
        let k = k_hi - k_lo + 1;
        let taper_len = ((k as f64 * EDGE_TAPER) as usize).max(1);
        let scale = 2.0 / self.n as f64;
        self.spec[k_lo..=k_hi]
            .iter()
            .enumerate()
            .map(move |(i, s)| *s * (edge_weight(i, k, taper_len) * scale))
    }

    /// [`Self::band_signal`] at critical rate (`oversample` 1) in single precision, for the
    /// kurtogram's spectral kurtosis: its rounding (~1e-7 relative) cannot move a cell's SK visibly.
    fn band_signal_f32(
        &self,
        engine: &mut SpectrumEngine,
        lo_hz: f64,
        hi_hz: f64,
    ) -> Result<Vec<Complex<f32>>, AnalysisError> {
        let (k_lo, k_hi) = self.bin_range(lo_hz, hi_hz)?;
        let mut buf = vec![Complex::<f32>::new(0.0, 0.0); fast_len_at_least(k_hi - k_lo + 1)];
        for (b, c) in buf.iter_mut().zip(self.tapered_lines(k_lo, k_hi)) {
            *b = Complex::new(c.re as f32, c.im as f32);
        }
        engine.fft_in_place_f32(&mut buf, true);
        Ok(buf)
    }
}

/// [`spectral_kurtosis`] of a single-precision envelope, accumulated in double precision.
fn spectral_kurtosis_f32(z: &[Complex<f32>]) -> f64 {
    sk_of_powers(z.iter().map(|c| f64::from(c.norm_sqr())))
}

/// ⟨p²⟩/⟨p⟩² − 2 of the powers `p = |z|²` (see [`spectral_kurtosis`]); 0 for none or all zero.
fn sk_of_powers(powers: impl ExactSizeIterator<Item = f64>) -> f64 {
    let n = powers.len() as f64;
    let (m2, m4) = powers.fold((0.0, 0.0), |(m2, m4), p| (m2 + p, m4 + p * p));
    if n == 0.0 || m2 <= 0.0 {
        return 0.0;
    }
    (m4 / n) / ((m2 / n) * (m2 / n)) - 2.0
}

/// Raised-cosine weight of line `i` of a band of `k` lines whose edges taper over `taper_len` lines.
fn edge_weight(i: usize, k: usize, taper_len: usize) -> f64 {
    let edge = i.min(k - 1 - i);
    if edge < taper_len {
        0.5 - 0.5 * (std::f64::consts::PI * (edge as f64 + 0.5) / taper_len as f64).cos()
    } else {
        1.0
    }
}

/// Spectral kurtosis of a complex envelope: ⟨|z|⁴⟩/⟨|z|²⟩² − 2 (0 for complex Gaussian noise, −1 for a
/// pure tone, positive for impulsive content). Returns 0 for an empty or all-zero input.
pub fn spectral_kurtosis(z: &[Complex<f64>]) -> f64 {
    sk_of_powers(z.iter().map(Complex::norm_sqr))
}

/// Limits of the kurtogram band search.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct KurtogramLimits {
    /// Deepest binary level (band width fs/2^(level+1)); the 1/3 levels in between are included.
    pub max_level: u32,
    /// Narrowest band allowed, Hz (must show several harmonics of the fault rates in its envelope).
    pub min_bandwidth_hz: f64,
    /// Lowest lower band edge allowed, Hz (keeps the band above the shaft and defect-tone region).
    pub min_lower_edge_hz: f64,
}

/// One cell of the kurtogram.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct KurtogramCell {
    /// Level in Antoni's numbering (1, 1.6, 2, 2.6, ...).
    pub level: f64,
    /// Lower band edge, Hz.
    pub lo_hz: f64,
    /// Upper band edge, Hz.
    pub hi_hz: f64,
    /// Spectral kurtosis of the band's complex envelope.
    pub sk: f64,
}

/// Result of a fast-kurtogram search.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Kurtogram {
    /// Every evaluated cell, level by level.
    pub cells: Vec<KurtogramCell>,
    /// The cell with the largest spectral kurtosis.
    pub best: KurtogramCell,
}

/// Fast kurtogram (Antoni 2007) on the 1/3-binary tree of bands, computed with FFT band filters on the
/// decimated analytic signal (in single precision), trimming each band signal's edges. Only cells within `limits` are kept.
///
/// # Errors
/// [`AnalysisError::BadBand`] when no cell satisfies the limits.
pub fn fast_kurtogram(
    engine: &mut SpectrumEngine,
    sig: &PreparedSignal,
    limits: &KurtogramLimits,
) -> Result<Kurtogram, AnalysisError> {
    let nyq = sig.fs_hz / 2.0;
    let mut widths: Vec<(f64, f64)> = Vec::new();
    for level in 1..=limits.max_level {
        widths.push((f64::from(level), nyq / f64::from(1_u32 << level)));
        if level < limits.max_level {
            widths.push((
                f64::from(level) + 0.6,
                nyq / (3.0 * f64::from(1_u32 << (level - 1))),
            ));
        }
    }
    let mut cells = Vec::new();
    for (level, width) in widths {
        let count = (nyq / width).round() as usize;
        for i in 0..count {
            let lo = i as f64 * width;
            let hi = lo + width;
            if width < limits.min_bandwidth_hz || lo < limits.min_lower_edge_hz {
                continue;
            }
            let Ok(z) = sig.band_signal_f32(engine, lo, hi) else {
                continue;
            };
            let trim = ((z.len() as f64 * EDGE_TRIM) as usize).max(1);
            let core = z.get(trim..z.len().saturating_sub(trim)).unwrap_or(&[]);
            cells.push(KurtogramCell {
                level,
                lo_hz: lo,
                hi_hz: hi,
                sk: spectral_kurtosis_f32(core),
            });
        }
    }
    let best = cells
        .iter()
        .copied()
        .max_by(|a, b| a.sk.total_cmp(&b.sk))
        .ok_or(AnalysisError::BadBand {
            lo_hz: limits.min_lower_edge_hz,
            hi_hz: nyq,
            reason: format!(
                "no kurtogram band at least {:.0} Hz wide fits above the lower edge",
                limits.min_bandwidth_hz
            ),
        })?;
    Ok(Kurtogram { cells, best })
}

/// Squared envelope spectrum of the band `[lo_hz, hi_hz]`: amplitude (peak, g²) of the spectrum of
/// `|z|² − mean`, line spacing `fs/N` of the prepared record, lines up to the band width.
///
/// # Errors
/// [`AnalysisError::BadBand`] when the band holds fewer than 8 lines.
pub fn squared_envelope_spectrum(
    engine: &mut SpectrumEngine,
    sig: &PreparedSignal,
    lo_hz: f64,
    hi_hz: f64,
) -> Result<Spectrum, AnalysisError> {
    limited_squared_envelope_spectrum(engine, sig, lo_hz, hi_hz, None)
}

/// As [`squared_envelope_spectrum`], with the squared envelope first limited to `cap_medians` times its
/// median when given. Limiting leaves Gaussian noise almost untouched (its squared envelope is
/// exponential: 8 medians are exceeded 0.4 % of the time) and the periodicity of a train of similar
/// impacts intact, while a few isolated, much larger events (knocks) can no longer fill the spectrum
/// with their broadband content.
///
/// # Errors
/// [`AnalysisError::BadBand`] when the band holds fewer than 8 lines.
pub fn limited_squared_envelope_spectrum(
    engine: &mut SpectrumEngine,
    sig: &PreparedSignal,
    lo_hz: f64,
    hi_hz: f64,
    cap_medians: Option<f64>,
) -> Result<Spectrum, AnalysisError> {
    let (z, _fs_out) = sig.band_signal(engine, lo_hz, hi_hz, 2)?;
    let m = z.len();
    let mut sq: Vec<f64> = z.iter().map(Complex::norm_sqr).collect();
    if let Some(k) = cap_medians.filter(|k| k.is_finite() && *k > 0.0) {
        let mut tmp = sq.clone();
        let mid = tmp.len() / 2;
        let (_, med, _) = tmp.select_nth_unstable_by(mid, f64::total_cmp);
        let cap = k * *med;
        if cap > 0.0 {
            for v in &mut sq {
                *v = v.min(cap);
            }
        }
    }
    let mean = sq.iter().sum::<f64>() / m as f64;
    for v in &mut sq {
        *v -= mean;
    }
    // The squared envelope is real: its real transform holds the same lines.
    let e = engine.rfft(&sq);
    let lines = (hi_hz - lo_hz) / sig.freq_step_hz();
    let keep = (lines.floor() as usize).clamp(1, m / 2);
    let values = e[..keep]
        .iter()
        .map(|c| 2.0 * c.norm_sqr().sqrt() / m as f64)
        .collect();
    Ok(Spectrum {
        freq_step_hz: sig.freq_step_hz(),
        values,
        units: SpectrumUnits {
            quantity: Quantity::SquaredEnvelopeG2,
            detector: Detector::Peak,
        },
    })
}

/// The squared envelope spectrum of one candidate band, for ranking candidates only: the same
/// quantity as [`limited_squared_envelope_spectrum`] (the same taper, cap and scale), computed in single
/// precision and returned only up to `reach_hz`. The band signal keeps its rate (`2k` samples for `k`
/// lines in the band): at a lower rate the cap would clip other samples and fold its harmonics onto the
/// low lines, and the ranking would no longer be that of the reported spectra. The reported spectrum of
/// the band finally chosen is computed again in double precision by
/// [`limited_squared_envelope_spectrum`].
///
/// # Errors
/// As [`limited_squared_envelope_spectrum`].
pub fn ranking_envelope_spectrum(
    engine: &mut SpectrumEngine,
    sig: &PreparedSignal,
    lo_hz: f64,
    hi_hz: f64,
    cap_medians: Option<f64>,
    reach_hz: f64,
) -> Result<Spectrum, AnalysisError> {
    let (k_lo, k_hi) = sig.bin_range(lo_hz, hi_hz)?;
    let k = k_hi - k_lo + 1;
    let df = sig.freq_step_hz();
    let full_len = fast_len_at_least(2 * k);
    let full_keep = (((hi_hz - lo_hz) / df).floor() as usize).clamp(1, full_len / 2);
    let reach = if reach_hz.is_finite() && reach_hz > 0.0 {
        (reach_hz / df).ceil() as usize + 1
    } else {
        full_keep
    };
    let keep = full_keep.min(reach);
    let m = full_len;
    let mut buf = vec![Complex::<f32>::new(0.0, 0.0); m];
    for (b, c) in buf.iter_mut().zip(sig.tapered_lines(k_lo, k_hi)) {
        *b = Complex::new(c.re as f32, c.im as f32);
    }
    engine.fft_in_place_f32(&mut buf, true);
    let mut sq: Vec<f32> = buf.iter().map(Complex::norm_sqr).collect();
    if let Some(kc) = cap_medians.filter(|k| k.is_finite() && *k > 0.0) {
        // |z|² is never negative, and non-negative floats order as their bit patterns do, so the
        // median is selected on integers (the same element `f32::total_cmp` would pick, faster).
        let mut tmp: Vec<u32> = sq.iter().map(|v| v.to_bits()).collect();
        let mid = tmp.len() / 2;
        let (_, med, _) = tmp.select_nth_unstable(mid);
        let cap = kc as f32 * f32::from_bits(*med);
        if cap > 0.0 {
            for v in &mut sq {
                *v = v.min(cap);
            }
        }
    }
    let mean = (sq.iter().map(|&v| f64::from(v)).sum::<f64>() / m as f64) as f32;
    for v in &mut sq {
        *v -= mean;
    }
    // The squared envelope is real: a real transform gives the same lines at half the cost.
    let lines = engine.rfft_f32(&mut sq);
    let values = lines[..keep.min(m / 2)]
        .iter()
        .map(|c| 2.0 * f64::from(c.norm()) / m as f64)
        .collect();
    Ok(Spectrum {
        freq_step_hz: df,
        values,
        units: SpectrumUnits {
            quantity: Quantity::SquaredEnvelopeG2,
            detector: Detector::Peak,
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testutil::Gauss;

    // Best check value 11 (Antoni 2006, Mem): SK anchors. K samples of complex Gaussian noise → 0 ± 3·2/√K;
    // a pure tone → −1 ± 0.01; an impulse train in noise → clearly positive.
    #[test]
    fn sk_anchors() {
        let mut g = Gauss::new(7);
        let k = 20_000;
        let noise: Vec<Complex<f64>> = (0..k).map(|_| Complex::new(g.next(), g.next())).collect();
        let sk = spectral_kurtosis(&noise);
        assert!(sk.abs() < 3.0 * 2.0 / (k as f64).sqrt(), "{sk}");
        let tone: Vec<Complex<f64>> = (0..k)
            .map(|i| Complex::from_polar(1.0, 0.01 * i as f64))
            .collect();
        assert!((spectral_kurtosis(&tone) + 1.0).abs() < 0.01);
        let imp: Vec<Complex<f64>> = (0..k)
            .map(|i| {
                Complex::new(
                    g.next() * 0.3 + if i % 200 == 0 { 10.0 } else { 0.0 },
                    g.next() * 0.3,
                )
            })
            .collect();
        assert!(spectral_kurtosis(&imp) > 5.0);
    }

    // The band signal of a real sine recovers its amplitude as |z| (analytic signal, REFERENCES §4.1).
    #[test]
    fn band_signal_recovers_sine_amplitude() {
        let mut e = SpectrumEngine::new();
        let fs = 10_000.0;
        let x: Vec<f64> = (0..20_000)
            .map(|i| 1.5 * (std::f64::consts::TAU * 1_234.5 * i as f64 / fs).cos())
            .collect();
        let sig = PreparedSignal::new(&mut e, &x, fs, false).unwrap();
        let (z, fs_out) = sig.band_signal(&mut e, 1000.0, 1500.0, 2).unwrap();
        assert!(fs_out < fs / 4.0);
        let mid = &z[z.len() / 4..3 * z.len() / 4];
        for c in mid {
            assert!((c.norm() - 1.5).abs() < 1e-3, "{}", c.norm());
        }
    }

    // Best check value 17 (third-party V-2nd): impacts every 1/105.9 s ringing a 3 kHz resonance, noise
    // 3× the signal RMS, fs 12 kHz, 10 s. The SES peak is within 0.1 Hz of 105.9 Hz, and its ratio to the
    // median background far exceeds the raw-spectrum ratio (see the tolerance note below).
    #[test]
    fn ses_finds_synthetic_impulse_train() {
        let (x, fs) = crate::testutil::impulse_train(105.9, 3000.0, 12_000.0, 10.0, 3.0, 11);
        let mut e = SpectrumEngine::new();
        let sig = PreparedSignal::new(&mut e, &x, fs, false).unwrap();
        let limits = KurtogramLimits {
            max_level: 5,
            min_bandwidth_hz: 400.0,
            min_lower_edge_hz: 500.0,
        };
        let kg = fast_kurtogram(&mut e, &sig, &limits).unwrap();
        assert!(
            kg.best.lo_hz <= 3000.0 && kg.best.hi_hz >= 3000.0,
            "{:?}",
            kg.best
        );
        let ses = squared_envelope_spectrum(&mut e, &sig, kg.best.lo_hz, kg.best.hi_hz).unwrap();
        // Ratio of the line at the repetition rate (largest within ±0.2 Hz) to the median of 60–150 Hz.
        let ratio_at = |s: &[f64], df: f64| {
            let c = (105.9 / df).round() as usize;
            let w = (0.2 / df).ceil() as usize;
            let (k, peak) = (c - w..=c + w)
                .map(|i| (i, s[i]))
                .fold((0, 0.0), |m, (i, v)| if v > m.1 { (i, v) } else { m });
            let mut bg = s[(60.0 / df) as usize..(150.0 / df) as usize].to_vec();
            bg.sort_by(f64::total_cmp);
            (peak / bg[bg.len() / 2], k as f64 * df)
        };
        let (ses_ratio, f) = ratio_at(&ses.values, ses.freq_step_hz);
        assert!((f - 105.9).abs() <= 0.1, "{f}");
        // The SES line is also the largest line between 60 and 150 Hz.
        let lo = (60.0 / ses.freq_step_hz) as usize;
        let top = ses.values[lo..(150.0 / ses.freq_step_hz) as usize]
            .iter()
            .copied()
            .fold(0.0, f64::max);
        assert!((top - ses.values[(f / ses.freq_step_hz).round() as usize]).abs() < 1e-12);
        let raw: Vec<f64> = e.rfft(&x).iter().map(|c| c.norm()).collect();
        let (raw_ratio, _) = ratio_at(&raw, fs / x.len() as f64);
        // The third party measured 31.8 against 3.0 (10.6x) on its own signal; with this signal (damping 2 %,
        // seed 11) we measure 31.4 against 3.16 (9.9x). The band asserted here is 8x, with the SES ratio
        // itself above 20, so that the check tolerates the noise draw without losing its point.
        assert!(
            ses_ratio >= 8.0 * raw_ratio && ses_ratio > 20.0,
            "SES {ses_ratio} raw {raw_ratio} band {:?}",
            kg.best
        );
    }

    // The single-precision ranking spectrum is the reported (double-precision, capped) spectrum cut at
    // its reach: the same lines to float rounding, so ranking on it picks the band the reported spectra
    // would. Signal: the impulse train of the SES check above, with knocks that the cap limits.
    #[test]
    fn ranking_spectrum_matches_the_reported_spectrum_below_its_reach() {
        let (mut x, fs) = crate::testutil::impulse_train(105.9, 3000.0, 12_000.0, 10.0, 3.0, 5);
        for k in [1_000, 40_000, 90_000] {
            x[k] += 60.0;
        }
        let mut e = SpectrumEngine::new();
        let sig = PreparedSignal::new(&mut e, &x, fs, false).unwrap();
        for (lo, hi) in [(2_000.0, 4_000.0), (1_500.0, 5_400.0), (2_250.0, 3_000.0)] {
            let full = limited_squared_envelope_spectrum(&mut e, &sig, lo, hi, Some(8.0)).unwrap();
            let cut = ranking_envelope_spectrum(&mut e, &sig, lo, hi, Some(8.0), 700.0).unwrap();
            assert!((cut.freq_step_hz - full.freq_step_hz).abs() < 1e-12);
            let want = ((700.0 / full.freq_step_hz).ceil() as usize + 1).min(full.values.len());
            assert_eq!(cut.values.len(), want, "band {lo}-{hi}");
            let top = full.values.iter().copied().fold(0.0, f64::max);
            for (i, (a, b)) in cut.values.iter().zip(&full.values).enumerate() {
                assert!(
                    (a - b).abs() <= 1e-4 * top,
                    "band {lo}-{hi} line {i}: {a} vs {b}"
                );
            }
        }
    }

    #[test]
    fn rejects_bad_bands_and_short_input() {
        let mut e = SpectrumEngine::new();
        assert!(PreparedSignal::new(&mut e, &[0.0; 10], 1000.0, false).is_err());
        let x: Vec<f64> = (0..1000).map(|i| (i as f64).sin()).collect();
        let sig = PreparedSignal::new(&mut e, &x, 1000.0, true).unwrap();
        assert!(sig.band_signal(&mut e, 400.0, 401.0, 1).is_err());
        assert!(sig.band_signal(&mut e, f64::NAN, 300.0, 1).is_err());
        assert!(squared_envelope_spectrum(&mut e, &sig, 100.0, 300.0).is_ok());
    }
}
