//! Remaining-useful-life error and score of the IEEE PHM 2012 prognostic challenge (PRONOSTIA).
//!
//! Percent error `Er = 100·(actual − predicted)/actual` (positive: the prediction came early). Score
//! `A = exp(−ln(0.5)·Er/5)` for `Er ≤ 0` (late, punished hard) and `A = exp(+ln(0.5)·Er/20)` for
//! `Er > 0` (early, punished gently). Source: the challenge description (Nectoux et al. 2012), from
//! memory as transcribed in the shared reference sheet section 10.

/// Percent error of one remaining-life prediction; `NaN` when `actual_rul` is not positive.
pub fn rul_percent_error(actual_rul: f64, predicted_rul: f64) -> f64 {
    if actual_rul > 0.0 {
        100.0 * (actual_rul - predicted_rul) / actual_rul
    } else {
        f64::NAN
    }
}

/// Score of one prediction from its percent error (1 = perfect).
pub fn rul_score(percent_error: f64) -> f64 {
    let ln_half = 0.5_f64.ln();
    if percent_error <= 0.0 {
        (-ln_half * percent_error / 5.0).exp()
    } else {
        (ln_half * percent_error / 20.0).exp()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Check values of the reference sheet section 10 (V-calc from the challenge's formula):
    // Er = 0 → 1; Er = −5 → 0.5; Er = +20 → 0.5; Er = +40 → 0.25.
    #[test]
    fn score_matches_the_published_check_values() {
        assert!((rul_score(0.0) - 1.0).abs() < 1e-12);
        assert!((rul_score(-5.0) - 0.5).abs() < 1e-12);
        assert!((rul_score(20.0) - 0.5).abs() < 1e-12);
        assert!((rul_score(40.0) - 0.25).abs() < 1e-12);
        // Late is punished harder than early by the same amount.
        assert!(rul_score(-10.0) < rul_score(10.0));
        // Er sign: predicting 80 of 100 left is 20 % early.
        assert!((rul_percent_error(100.0, 80.0) - 20.0).abs() < 1e-12);
        assert!(rul_percent_error(0.0, 1.0).is_nan());
    }
}
