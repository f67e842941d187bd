//! Small spectral helpers for the tests (rustfft as the reference FFT).
#![allow(dead_code, reason = "each test file uses a subset")]

use rustfft::FftPlanner;
use rustfft::num_complex::Complex;

/// One-sided power |X[k]|² of `x` (Hann-windowed when `hann`), zero-padded to `n_fft`.
pub fn power_spectrum(x: &[f64], n_fft: usize, hann: bool) -> Vec<f64> {
    let n = x.len();
    let mut buf: Vec<Complex<f64>> = x
        .iter()
        .enumerate()
        .map(|(i, v)| {
            let w = if hann {
                0.5 - 0.5 * (std::f64::consts::TAU * i as f64 / n as f64).cos()
            } else {
                1.0
            };
            Complex::new(v * w, 0.0)
        })
        .collect();
    buf.resize(n_fft, Complex::new(0.0, 0.0));
    FftPlanner::new().plan_fft_forward(n_fft).process(&mut buf);
    buf[..n_fft / 2].iter().map(Complex::norm_sqr).collect()
}

/// Sum of the power spectrum over [lo, hi) Hz (no window, no padding).
pub fn band_energy(x: &[f32], fs: f64, lo: f64, hi: f64) -> f64 {
    let xd: Vec<f64> = x.iter().map(|&v| f64::from(v)).collect();
    let p = power_spectrum(&xd, xd.len(), false);
    let df = fs / xd.len() as f64;
    p.iter()
        .enumerate()
        .filter(|(k, _)| (*k as f64 * df) >= lo && (*k as f64 * df) < hi)
        .map(|(_, v)| v)
        .sum()
}

/// Squared-envelope spectrum: band-pass [lo, hi] Hz by keeping only those positive-frequency
/// bins (the analytic band signal), |z|², mean removed, then the power spectrum of that,
/// zero-padded 4×. Returns (frequency resolution Hz, spectrum).
/// Method: Randall & Antoni (2011) tutorial; project reference sheet §4.1.
pub fn squared_envelope_spectrum(x: &[f32], fs: f64, lo: f64, hi: f64) -> (f64, Vec<f64>) {
    let n = x.len();
    let mut buf: Vec<Complex<f64>> = x.iter().map(|&v| Complex::new(f64::from(v), 0.0)).collect();
    let mut planner = FftPlanner::new();
    planner.plan_fft_forward(n).process(&mut buf);
    let df = fs / n as f64;
    for (k, c) in buf.iter_mut().enumerate() {
        let f = k as f64 * df;
        if k >= n / 2 || f < lo || f > hi {
            *c = Complex::new(0.0, 0.0);
        }
    }
    planner.plan_fft_inverse(n).process(&mut buf);
    let env: Vec<f64> = buf.iter().map(Complex::norm_sqr).collect();
    let mean = env.iter().sum::<f64>() / n as f64;
    let env: Vec<f64> = env.iter().map(|v| v - mean).collect();
    let n_fft = 4 * n;
    (fs / n_fft as f64, power_spectrum(&env, n_fft, true))
}

/// Frequency of the largest line in [lo, hi] Hz and its height.
pub fn peak_in(spec: &[f64], df: f64, lo: f64, hi: f64) -> (f64, f64) {
    let k0 = (lo / df).ceil() as usize;
    let k1 = ((hi / df).floor() as usize).min(spec.len() - 1);
    let (k, v) = (k0..=k1)
        .map(|k| (k, spec[k]))
        .fold((k0, f64::MIN), |a, b| if b.1 > a.1 { b } else { a });
    (k as f64 * df, v)
}

/// Median of the spectrum over [lo, hi] Hz.
pub fn median_in(spec: &[f64], df: f64, lo: f64, hi: f64) -> f64 {
    let k0 = (lo / df).ceil() as usize;
    let k1 = ((hi / df).floor() as usize).min(spec.len() - 1);
    let mut v: Vec<f64> = spec[k0..=k1].to_vec();
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}
