//! The demo dated relative to the day it is built: every date of the plant file and the scenario
//! moves by the same whole number of weeks, so the last route day falls within the seven days up to
//! "today", weekdays stay as written and the planned outages stay ahead.

use chrono::NaiveDate;

use super::spec::Scenario;
use crate::error::SimError;

/// The demo plant file and scenario with every date moved by [`DatedDemo::shift_days`].
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct DatedDemo {
    /// The plant file text (installation dates, history and outages moved).
    pub plant_toml: String,
    /// The scenario text (route days, onsets, replacements, speed changes, bad recordings moved).
    pub scenario_toml: String,
    /// Days every date moved by (a multiple of 7; negative when the demo is built before the dates
    /// as written).
    pub shift_days: i64,
    /// The last route day after the move: within the seven days up to `today`.
    pub last_route_day: NaiveDate,
}

/// Moves every date of `plant_toml` and `scenario_toml` by the same whole number of weeks so that
/// the scenario's last route day is `today` or one of the six days before it.
pub fn dated_demo(
    plant_toml: &str,
    scenario_toml: &str,
    today: NaiveDate,
) -> Result<DatedDemo, SimError> {
    let scenario: Scenario = toml::from_str(scenario_toml).map_err(|e| SimError::Toml {
        file: "scenario.toml".to_owned(),
        message: e.to_string(),
    })?;
    let last = scenario
        .route_days
        .iter()
        .map(|d| d.date)
        .max()
        .ok_or_else(|| SimError::Scenario {
            file: "scenario.toml".to_owned(),
            message: "route_days is empty".to_owned(),
        })?;
    let shift_days = 7 * (today - last).num_days().div_euclid(7);
    let last_route_day = last + chrono::Duration::days(shift_days);
    Ok(DatedDemo {
        plant_toml: shift_dates(plant_toml, shift_days),
        scenario_toml: shift_dates(scenario_toml, shift_days),
        shift_days,
        last_route_day,
    })
}

/// Moves every quoted ISO date (`"YYYY-MM-DD"`) in a TOML text by `days`; everything else,
/// comments included, is kept as written. A date that would leave chrono's range is kept.
pub fn shift_dates(text: &str, days: i64) -> String {
    let mut out = String::with_capacity(text.len());
    let mut rest = text;
    while let Some(i) = rest.find('"') {
        let (before, from_quote) = rest.split_at(i);
        out.push_str(before);
        let date = from_quote
            .get(1..11)
            .filter(|_| from_quote.as_bytes().get(11) == Some(&b'"'))
            .filter(|t| is_iso_date_shape(t))
            .and_then(|t| NaiveDate::parse_from_str(t, "%Y-%m-%d").ok())
            .and_then(|d| d.checked_add_signed(chrono::Duration::days(days)));
        if let Some(d) = date {
            out.push('"');
            out.push_str(&d.format("%Y-%m-%d").to_string());
            out.push('"');
            rest = from_quote.get(12..).unwrap_or("");
        } else {
            out.push('"');
            rest = from_quote.get(1..).unwrap_or("");
        }
    }
    out.push_str(rest);
    out
}

fn is_iso_date_shape(t: &str) -> bool {
    t.len() == 10
        && t.bytes().enumerate().all(|(i, b)| {
            if i == 4 || i == 7 {
                b == b'-'
            } else {
                b.is_ascii_digit()
            }
        })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use chrono::Datelike;

    fn d(t: &str) -> NaiveDate {
        NaiveDate::parse_from_str(t, "%Y-%m-%d").unwrap()
    }

    #[test]
    fn shifts_quoted_dates_only() {
        let text = "# 2026-11-10 stays\na = \"2026-11-10\"\nb = \"not-a-date\"\nc = \"2026-13-01\"\ne = \"\"\n";
        let out = shift_dates(text, 21);
        assert_eq!(
            out,
            "# 2026-11-10 stays\na = \"2026-12-01\"\nb = \"not-a-date\"\nc = \"2026-13-01\"\ne = \"\"\n"
        );
        assert_eq!(shift_dates(&out, -21), text);
    }

    /// The last route day lands within the week up to today, on the weekday as written.
    #[test]
    fn last_route_day_within_the_week_before_today() {
        let scenario = "route_days = [ { date = \"2026-11-10\", start = \"08:30\", offset = \"+00:00\" } ]\n\
                        seed = 1\ndefault_sample_rate_hz = 25600.0\ndefault_samples = 2048\n";
        for today in [
            "2026-11-10",
            "2026-11-16",
            "2026-11-17",
            "2026-12-02",
            "2027-06-30",
            "2026-01-01",
        ] {
            let today = d(today);
            let dated = dated_demo("", scenario, today).unwrap();
            let gap = (today - dated.last_route_day).num_days();
            assert!((0..7).contains(&gap), "{today}: {}", dated.last_route_day);
            assert_eq!(dated.shift_days % 7, 0);
            assert_eq!(dated.last_route_day.weekday(), d("2026-11-10").weekday());
            assert!(
                dated
                    .scenario_toml
                    .contains(&dated.last_route_day.to_string())
            );
        }
    }
}
