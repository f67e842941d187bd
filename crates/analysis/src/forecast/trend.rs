//! Least-squares line with a prediction interval, and the time at which it reaches a level.
//!
//! The damage index is in dB, so a straight line in dB is log-linear (exponential) growth of the
//! underlying amplitude. The prediction band at time `t` is the ordinary least-squares one:
//! `ŷ(t) ± q·s·√(1 + 1/n + (t − t̄)²/Sxx)` with `q` the Student-t quantile for `n − 2` degrees of freedom.

use serde::{Deserialize, Serialize};

/// A projected time with its interval, seconds on the caller's axis.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Projection {
    /// Central estimate.
    pub t_s: f64,
    /// Earliest time within the interval.
    pub lo_s: f64,
    /// Latest time within the interval; `None` when the interval is open (the trend may never get
    /// there within the horizon searched).
    pub hi_s: Option<f64>,
}

/// A fitted straight line `y = intercept + slope·(t − t_mean)`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LineFit {
    /// Value at `t_mean`.
    pub intercept: f64,
    /// Slope per second.
    pub slope: f64,
    /// Mean of the fitted times.
    pub t_mean: f64,
    /// Σ(t − t̄)².
    pub sxx: f64,
    /// Residual standard deviation (n − 2 degrees of freedom).
    pub residual_sd: f64,
    /// Number of points.
    pub n: usize,
    /// Last fitted time.
    pub t_last: f64,
}

/// Upper 90 % quantile of Student's t for 1..=30 degrees of freedom (from memory, standard tables; df 1
/// and 2 are checked against their closed forms in the tests).
const T90: [f64; 30] = [
    3.078, 1.886, 1.638, 1.533, 1.476, 1.440, 1.415, 1.397, 1.383, 1.372, 1.363, 1.356, 1.350,
    1.345, 1.341, 1.337, 1.333, 1.330, 1.328, 1.325, 1.323, 1.321, 1.319, 1.318, 1.316, 1.315,
    1.314, 1.313, 1.311, 1.310,
];

/// Upper 90 % Student-t quantile (an 80 % two-sided interval), normal 1.2816 beyond 120 df.
pub fn t_quantile_90(df: usize) -> f64 {
    match df {
        0 => f64::INFINITY,
        1..=30 => T90[df - 1],
        31..=40 => 1.303,
        41..=60 => 1.296,
        61..=120 => 1.289,
        _ => 1.2816,
    }
}

/// Ordinary least squares of `y` on `t`; `None` with fewer than 3 points or no spread in `t`.
pub fn fit_line(t: &[f64], y: &[f64]) -> Option<LineFit> {
    let n = t.len().min(y.len());
    if n < 3 {
        return None;
    }
    let nf = n as f64;
    let t_mean = t.iter().take(n).sum::<f64>() / nf;
    let y_mean = y.iter().take(n).sum::<f64>() / nf;
    let sxx: f64 = t.iter().take(n).map(|ti| (ti - t_mean).powi(2)).sum();
    if !(sxx > 0.0 && sxx.is_finite()) {
        return None;
    }
    let sxy: f64 = t
        .iter()
        .zip(y)
        .take(n)
        .map(|(ti, yi)| (ti - t_mean) * (yi - y_mean))
        .sum();
    let slope = sxy / sxx;
    let sse: f64 = t
        .iter()
        .zip(y)
        .take(n)
        .map(|(ti, yi)| (yi - y_mean - slope * (ti - t_mean)).powi(2))
        .sum();
    let residual_sd = (sse / (nf - 2.0)).sqrt();
    let t_last = t.iter().take(n).copied().fold(f64::NEG_INFINITY, f64::max);
    Some(LineFit {
        intercept: y_mean,
        slope,
        t_mean,
        sxx,
        residual_sd,
        n,
        t_last,
    })
}

impl LineFit {
    /// Fitted value at `t`.
    pub fn predict(&self, t: f64) -> f64 {
        self.intercept + self.slope * (t - self.t_mean)
    }

    /// Half-width of the prediction band at `t` for quantile `q`.
    pub fn half_width(&self, t: f64, q: f64) -> f64 {
        q * self.residual_sd
            * (1.0 + 1.0 / self.n as f64 + (t - self.t_mean).powi(2) / self.sxx).sqrt()
    }

    /// Standard error of the slope.
    pub fn slope_se(&self) -> f64 {
        self.residual_sd / self.sxx.sqrt()
    }

    /// When the line reaches `level` (searching from `from_s` over `horizon_s`), with the 80 %
    /// prediction interval: the earliest time the upper band reaches it and the first time the lower
    /// band does. `None` when the slope is not positive or the centre never reaches `level` in the
    /// horizon.
    pub fn crossing(&self, level: f64, from_s: f64, horizon_s: f64) -> Option<Projection> {
        if self.slope.is_nan() || self.slope <= 0.0 || horizon_s.is_nan() || horizon_s <= 0.0 {
            return None;
        }
        let q = t_quantile_90(self.n.saturating_sub(2));
        let end = from_s + horizon_s;
        let centre = (self.t_mean + (level - self.intercept) / self.slope).max(from_s);
        if centre > end {
            return None;
        }
        let lo = first_reach(
            |t| self.predict(t) + self.half_width(t, q) - level,
            from_s,
            end,
        )
        .unwrap_or(centre);
        let hi = first_reach(
            |t| self.predict(t) - self.half_width(t, q) - level,
            from_s,
            end,
        );
        Some(Projection {
            t_s: centre,
            lo_s: lo.min(centre),
            hi_s: hi.map(|h| h.max(centre)),
        })
    }
}

/// First `t` in `[a, b]` where `f(t) ≥ 0` (scan, then bisection), `None` if there is none.
fn first_reach(f: impl Fn(f64) -> f64, a: f64, b: f64) -> Option<f64> {
    const STEPS: usize = 512;
    if f(a) >= 0.0 {
        return Some(a);
    }
    let step = (b - a) / STEPS as f64;
    let mut prev = a;
    for k in 1..=STEPS {
        let t = a + step * k as f64;
        if f(t) >= 0.0 {
            let (mut lo, mut hi) = (prev, t);
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                if f(mid) >= 0.0 {
                    hi = mid;
                } else {
                    lo = mid;
                }
            }
            return Some(hi);
        }
        prev = t;
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    // Student t with 1 df is the Cauchy distribution: t_p = tan(π(p − ½)); with 2 df
    // t_p = (2p − 1)/√(2p(1 − p)) (closed forms; any statistics text).
    #[test]
    fn t_quantiles_match_closed_forms() {
        let p: f64 = 0.9;
        assert!((t_quantile_90(1) - (std::f64::consts::PI * (p - 0.5)).tan()).abs() < 1e-3);
        assert!((t_quantile_90(2) - (2.0 * p - 1.0) / (2.0 * p * (1.0 - p)).sqrt()).abs() < 1e-3);
        // Standard normal 90 % quantile 1.2816 is the limit, approached from above.
        assert!((t_quantile_90(1000) - 1.2816).abs() < 1e-4);
        assert!((1..200).all(|d| t_quantile_90(d) >= t_quantile_90(d + 1)));
    }

    // Exact line: slope and intercept recovered, zero residual, crossing exact.
    #[test]
    fn exact_line_is_recovered_and_crosses_where_algebra_says() {
        let t: Vec<f64> = (0..6).map(|i| f64::from(i) * 10.0).collect();
        let y: Vec<f64> = t.iter().map(|t| 1.0 + 0.5 * t).collect();
        let fit = fit_line(&t, &y).unwrap();
        assert!((fit.slope - 0.5).abs() < 1e-12);
        assert!((fit.predict(0.0) - 1.0).abs() < 1e-12);
        assert!(fit.residual_sd < 1e-9);
        let c = fit.crossing(31.0, 50.0, 1000.0).unwrap();
        assert!((c.t_s - 60.0).abs() < 1e-9);
        assert!((c.lo_s - 60.0).abs() < 1e-6 && (c.hi_s.unwrap() - 60.0).abs() < 1e-6);
        assert!(
            fit.crossing(31.0, 50.0, 5.0).is_none(),
            "beyond the horizon"
        );
    }

    // Noisy line (fixed pattern of residuals): interval brackets the centre; falling trend gives none.
    #[test]
    fn noisy_line_interval_brackets_centre() {
        let noise = [0.3, -0.2, 0.1, -0.4, 0.2, 0.0, -0.1, 0.3];
        let t: Vec<f64> = (0..8).map(f64::from).collect();
        let y: Vec<f64> = t.iter().zip(noise).map(|(t, e)| 2.0 * t + e).collect();
        let fit = fit_line(&t, &y).unwrap();
        let c = fit.crossing(30.0, 7.0, 100.0).unwrap();
        assert!(c.lo_s < c.t_s && c.t_s < c.hi_s.unwrap());
        assert!((c.t_s - 15.0).abs() < 0.5);
        let down: Vec<f64> = y.iter().map(|v| -v).collect();
        assert!(
            fit_line(&t, &down)
                .unwrap()
                .crossing(30.0, 7.0, 100.0)
                .is_none()
        );
        assert!(fit_line(&t[..2], &y[..2]).is_none());
    }
}
