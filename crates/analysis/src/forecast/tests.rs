//! Forecast tests on synthetic lives whose damage growth is known in closed form.

use super::*;
use crate::stage::{LifeReading, ReadingIndicators, StageOptions, ToneEvidence, assess_life};

const MONTH: f64 = 30.0 * DAY_S;

fn ctx(lubrication: Lubrication, shaft_hz: f64) -> ForecastContext {
    ForecastContext {
        lubrication,
        shaft_hz,
        installed_s: None,
        rating_life_s: None,
    }
}

/// Generic readings whose RMS follows `db(month)` dB over 0.2 g.
fn life(months: usize, db: impl Fn(f64) -> f64) -> Vec<LifeReading> {
    (0..months)
        .map(|m| {
            let t = m as f64;
            let rms = 0.2 * 10f64.powf(db(t) / 20.0);
            LifeReading {
                t_s: t * MONTH,
                indicators: ReadingIndicators {
                    accel_rms_g: Some(rms),
                    kurtosis: Some(3.0),
                    ..Default::default()
                },
                baseline_mark: false,
            }
        })
        .collect()
}

// Log-linear growth: 1.5 dB per month from month 4; stage-3 level (8 dB) is reached at month
// 4 + 8/1.5 = 9.33 and the stage-4 level (14 dB) at 4 + 14/1.5 = 13.33 (algebra).
#[test]
fn exponential_growth_is_projected_to_the_algebraic_crossing() {
    let readings = life(8, |m| if m < 4.0 { 0.0 } else { 1.5 * (m - 4.0) });
    let calls = assess_life(&readings, &StageOptions::default());
    let f = forecast_life(&calls, &ctx(Lubrication::Grease, 25.0)).unwrap();
    assert_eq!(f.method, ForecastMethod::Trend, "{f:#?}");
    let replace = f.replace_by.unwrap();
    let risk = f.risk_from.unwrap();
    // The trend window includes flat readings (months 3-4), so the fit is a little shallower.
    assert!(
        (replace.t_s / MONTH - 9.33).abs() < 1.2,
        "{}",
        replace.t_s / MONTH
    );
    assert!(
        (risk.t_s / MONTH - 13.33).abs() < 2.0,
        "{}",
        risk.t_s / MONTH
    );
    assert!(replace.lo_s <= replace.t_s && replace.hi_s.is_none_or(|h| h >= replace.t_s));
    assert!(f.assumptions.iter().any(|a| a.contains("log-linear")));
}

#[test]
fn too_few_readings_fall_back_on_stage_durations_and_oil_outlasts_grease() {
    // Baseline of three, then a tone appears: stage 2 with one reading beyond the baseline.
    let mut readings = life(4, |_| 0.0);
    readings[3].indicators.tones = Some([
        ToneEvidence {
            envelope_score_db: 15.0,
            envelope_harmonics: 3,
            ..Default::default()
        },
        ToneEvidence::default(),
        ToneEvidence::default(),
        ToneEvidence::default(),
    ]);
    let calls = assess_life(&readings, &StageOptions::default());
    assert_eq!(calls[3].stage, 2);
    let grease = forecast_life(&calls, &ctx(Lubrication::Grease, 25.0)).unwrap();
    let oil = forecast_life(&calls, &ctx(Lubrication::Oil, 25.0)).unwrap();
    let fast = forecast_life(&calls, &ctx(Lubrication::Grease, 50.0)).unwrap();
    assert_eq!(grease.method, ForecastMethod::StageDurations);
    assert!(
        grease
            .assumptions
            .iter()
            .any(|a| a.contains("stage-duration ranges") && a.contains("grease-fed"))
    );
    let g = grease.replace_by.unwrap();
    let o = oil.replace_by.unwrap();
    let q = fast.replace_by.unwrap();
    // Oil-fed outlasts grease-fed; a faster shaft reaches the point sooner (common practice, no source).
    assert!(o.t_s > g.t_s && q.t_s < g.t_s);
    // Grease at the reference speed: 60..240 days after the first stage-2 call.
    assert!((g.lo_s - (calls[3].t_s + 60.0 * DAY_S)).abs() < 1.0);
    assert!((g.hi_s.unwrap() - (calls[3].t_s + 240.0 * DAY_S)).abs() < 1.0);
    assert!(grease.risk_from.unwrap().t_s > g.t_s);
}

#[test]
fn stage_four_is_reached_and_a_flat_life_gets_no_date() {
    let readings = life(9, |m| if m < 3.0 { 0.0 } else { 4.0 * (m - 3.0) });
    let calls = assess_life(&readings, &StageOptions::default());
    assert_eq!(calls.last().unwrap().stage, 4, "{:#?}", calls.last());
    let f = forecast_life(&calls, &ctx(Lubrication::Grease, 25.0)).unwrap();
    assert_eq!(f.method, ForecastMethod::Reached);
    assert!(f.risk_from.unwrap().t_s <= f.as_of_s);
    assert!(f.replace_by.unwrap().t_s <= f.risk_from.unwrap().t_s);

    let flat = assess_life(&life(10, |_| 0.0), &StageOptions::default());
    let f = forecast_life(&flat, &ctx(Lubrication::Grease, 25.0)).unwrap();
    assert_eq!(f.method, ForecastMethod::None);
    assert!(f.replace_by.is_none() && f.risk_from.is_none());
    assert!(forecast_life(&[], &ctx(Lubrication::Grease, 25.0)).is_none());
}

#[test]
fn a_rating_life_prior_is_used_only_without_damage() {
    let flat = assess_life(&life(6, |_| 0.0), &StageOptions::default());
    let l10 = 100.0 * MONTH;
    let c = ForecastContext {
        rating_life_s: Some(l10),
        installed_s: Some(0.0),
        ..ctx(Lubrication::Grease, 25.0)
    };
    let f = forecast_life(&flat, &c).unwrap();
    assert_eq!(f.method, ForecastMethod::RatingLife);
    // Stage 3 begins with about 3 % of L10 left (centre of 1-5 %, from memory).
    assert!((f.replace_by.unwrap().t_s - 0.97 * l10).abs() < 1.0);
    assert!(f.assumptions.iter().any(|a| a.contains("rating life")));
}

#[test]
fn backtest_reports_stage_lead_times_and_forecast_errors() {
    // Replaced at month 14, when the index reached about 15 dB.
    let readings = life(14, |m| if m < 4.0 { 0.0 } else { 1.5 * (m - 4.0) });
    let replaced = 14.0 * MONTH;
    let bt = backtest_life(
        &readings,
        &StageOptions::default(),
        &ctx(Lubrication::Grease, 25.0),
        replaced,
    );
    assert_eq!(bt.points.len(), 14);
    let s2 = bt.first_call_s[2].unwrap();
    let s3 = bt.first_call_s[3].unwrap();
    assert!(s2 < s3 && s3 <= replaced);
    assert!((bt.lead_s[3].unwrap() - (replaced - s3)).abs() < 1e-6);
    assert!(
        bt.first_call_s[1].is_some(),
        "a stage-2 call also flags stage 1 and above"
    );
    let late = bt.points.last().unwrap();
    assert!(late.replace_by.is_some());
    assert!(bt.median_abs_error_s.is_some() && bt.coverage.is_some());
}
