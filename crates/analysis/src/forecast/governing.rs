//! Which point's call is the bearing's call.
//!
//! A bearing is read at two or three points (horizontal, vertical, axial); each point has its own
//! latest stage call and forecast. The bearing has one answer, and every view and export shows the
//! same one: the point with the highest stage governs (a defect seen in one direction is a defect of
//! the bearing, whatever the other directions show); among equal stages the most urgent forecast (the
//! earliest replace-by date, else the earliest stage-4 risk date); among equal dates the first point
//! id, so the choice never depends on the order the points were read in.

use std::cmp::Ordering;

use super::Forecast;

/// When a forecast makes its bearing urgent, seconds since the Unix epoch: its replace-by date, else
/// its stage-4 risk date; `+∞` without either (or without a forecast).
pub fn urgency_s(forecast: Option<&Forecast>) -> f64 {
    forecast
        .and_then(|f| f.replace_by.or(f.risk_from))
        .map_or(f64::INFINITY, |p| p.t_s)
}

/// What the rule compares of one point's latest call.
#[derive(Debug, Clone, Copy)]
pub struct CallRank<'a> {
    /// The stage of the point's latest call.
    pub stage: u8,
    /// [`urgency_s`] of that call's forecast.
    pub urgency_s: f64,
    /// The point id.
    pub point: &'a str,
}

impl CallRank<'_> {
    /// `Greater` when `self` governs over `other`.
    fn governs(&self, other: &CallRank<'_>) -> Ordering {
        self.stage
            .cmp(&other.stage)
            .then_with(|| other.urgency_s.total_cmp(&self.urgency_s))
            .then_with(|| other.point.cmp(self.point))
    }
}

/// The governing candidate (see the module text), `None` when there is none.
pub fn governing<T>(
    candidates: impl IntoIterator<Item = T>,
    rank: impl Fn(&T) -> CallRank<'_>,
) -> Option<T> {
    let mut best: Option<T> = None;
    for c in candidates {
        best = Some(match best {
            Some(b) if rank(&b).governs(&rank(&c)) != Ordering::Less => b,
            _ => c,
        });
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rank<'a>(c: &'a (u8, f64, &'a str)) -> CallRank<'a> {
        CallRank {
            stage: c.0,
            urgency_s: c.1,
            point: c.2,
        }
    }

    // The rule is ours (common practice, no source: the worst direction speaks for the bearing).
    #[test]
    fn highest_stage_then_earliest_date_then_first_point() {
        let calls = [(2, 100.0, "A"), (3, 900.0, "V"), (3, 500.0, "H")];
        assert_eq!(governing(calls.iter(), |c| rank(c)).map(|c| c.2), Some("H"));
        let tied = [(3, 500.0, "V"), (3, 500.0, "H")];
        assert_eq!(governing(tied.iter(), |c| rank(c)).map(|c| c.2), Some("H"));
        let reversed = [(3, 500.0, "H"), (3, 500.0, "V")];
        assert_eq!(
            governing(reversed.iter(), |c| rank(c)).map(|c| c.2),
            Some("H")
        );
        let no_date = [(1, f64::INFINITY, "A"), (1, 7.0, "V")];
        assert_eq!(
            governing(no_date.iter(), |c| rank(c)).map(|c| c.2),
            Some("V")
        );
        let none: [(u8, f64, &str); 0] = [];
        assert!(governing(none.iter(), |c| rank(c)).is_none());
    }
}
