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

/// One projection as it was made: when, and the replace-by and end-of-life dates it gave (Unix s).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ProjectionAt {
    /// When the reading it rests on was taken.
    pub t_s: f64,
    /// The replace-by date projected then.
    pub replace_by_s: Option<f64>,
    /// The end-of-life date projected then.
    pub end_of_life_s: Option<f64>,
}

/// How a life's projections fared against its recorded end ([`track_record`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TrackRecord {
    /// End-of-life projections made before the end, and so scored.
    pub scored: usize,
    /// Their mean challenge score (1 = perfect).
    pub mean_end_of_life_score: Option<f64>,
    /// Median |replace-by − end| over the projections that gave one, days.
    pub median_abs_replace_by_error_days: Option<f64>,
}

/// The challenge score of an end-of-life projection made at `t_s` against a life that ended at
/// `end_s`: `None` when it was made at or after the end, or gave no date.
pub fn end_of_life_score(p: &ProjectionAt, end_s: f64) -> Option<f64> {
    let eol = p.end_of_life_s?;
    (end_s > p.t_s).then(|| rul_score(rul_percent_error(end_s - p.t_s, eol - p.t_s)))
}

/// Scores every projection of one life against its recorded end (a replacement: when the bearing came
/// out, not when it would have failed). Shared by `spallcast backtest` and the window.
pub fn track_record(projections: &[ProjectionAt], end_s: f64) -> TrackRecord {
    let scores: Vec<f64> = projections
        .iter()
        .filter_map(|p| end_of_life_score(p, end_s))
        .collect();
    let errors: Vec<f64> = projections
        .iter()
        .filter_map(|p| p.replace_by_s.map(|r| ((r - end_s) / 86_400.0).abs()))
        .collect();
    TrackRecord {
        scored: scores.len(),
        mean_end_of_life_score: (!scores.is_empty())
            .then(|| scores.iter().sum::<f64>() / scores.len() as f64),
        median_abs_replace_by_error_days: crate::stage::median(errors),
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

    // A life that ended 100 days after the first projection: predicting 100 is perfect (score 1),
    // 80 left at the same time is 20 % early (score 0.5, reference sheet section 10); a projection made
    // after the end is not scored. Replace-by errors 10 and 30 days: median 20.
    #[test]
    fn track_record_scores_projections_made_before_the_end() {
        let day = 86_400.0;
        let end = 100.0 * day;
        let rows = [
            ProjectionAt {
                t_s: 0.0,
                replace_by_s: Some(90.0 * day),
                end_of_life_s: Some(100.0 * day),
            },
            ProjectionAt {
                t_s: 0.0,
                replace_by_s: Some(130.0 * day),
                end_of_life_s: Some(80.0 * day),
            },
            ProjectionAt {
                t_s: 120.0 * day,
                replace_by_s: None,
                end_of_life_s: Some(150.0 * day),
            },
        ];
        let r = track_record(&rows, end);
        assert_eq!(r.scored, 2);
        assert!((r.mean_end_of_life_score.unwrap() - 0.75).abs() < 1e-12);
        assert!((r.median_abs_replace_by_error_days.unwrap() - 20.0).abs() < 1e-9);
        assert_eq!(end_of_life_score(&rows[2], end), None);
        let none = track_record(&[], end);
        assert_eq!((none.scored, none.mean_end_of_life_score), (0, None));
    }
}
