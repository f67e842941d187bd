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

/// Excess amplitude over baseline growing exactly as the exponential model says:
/// 0.3·exp(0.25·(m − 12)) from month 12, none before.
fn exp_db(m: f64) -> f64 {
    if m < 12.0 {
        0.0
    } else {
        20.0 * (1.0 + 0.3 * (0.25 * (m - 12.0)).exp()).log10()
    }
}

// Exponential growth of the excess amplitude (Gebraeel et al. 2005 form, from memory): the
// stage-3 level (8 dB, excess 1.512) is reached at month 12 + ln(1.512/0.3)/0.25 = 18.47 and the
// stage-4 level (14 dB, excess 4.012) at 12 + ln(4.012/0.3)/0.25 = 22.37 (algebra). With exact data
// the posterior slope is within about 1 % of the truth, so the projections land there.
#[test]
fn exponential_growth_is_projected_to_the_algebraic_crossing() {
    let readings = life(19, exp_db);
    let calls = assess_life(&readings, &StageOptions::default());
    assert_eq!(calls.last().unwrap().stage, 2, "{:#?}", calls.last());
    let f = forecast_life(&calls, &ctx(Lubrication::Grease, 25.0)).unwrap();
    assert_eq!(f.method, ForecastMethod::Model, "{f:#?}");
    assert!((f.fpt_s.unwrap() / MONTH - 12.0).abs() < 1e-9);
    let replace = f.replace_by.unwrap();
    let risk = f.risk_from.unwrap();
    assert!(
        (replace.t_s / MONTH - 18.47).abs() < 0.3,
        "{}",
        replace.t_s / MONTH
    );
    assert!(
        (risk.t_s / MONTH - 22.37).abs() < 0.5,
        "{}",
        risk.t_s / MONTH
    );
    assert!(replace.lo_s <= replace.t_s && replace.hi_s.is_none_or(|h| h >= replace.t_s));
    let eol = f.end_of_life.unwrap();
    assert_eq!(f.end_of_life_basis, EolBasis::Model);
    assert!(eol.t_s > risk.t_s);
    assert!(
        f.assumptions
            .iter()
            .any(|a| a.contains("Degradation model"))
    );
}

// The same life on a test rig (one reading every 10 s instead of every month) gets the same stages
// and the same forecast in the life's own time: every rule is relative to the observed span.
#[test]
fn the_same_life_on_any_time_scale_gets_the_same_calls_and_forecast() {
    let monthly = life(19, exp_db);
    let scale = 10.0 / MONTH;
    let rig: Vec<LifeReading> = monthly
        .iter()
        .map(|r| LifeReading {
            t_s: r.t_s * scale,
            ..r.clone()
        })
        .collect();
    let a = assess_life(&monthly, &StageOptions::default());
    let b = assess_life(&rig, &StageOptions::default());
    let stages = |c: &[StageCall]| c.iter().map(|c| c.stage).collect::<Vec<_>>();
    assert_eq!(stages(&a), stages(&b));
    let fa = forecast_life(&a, &ctx(Lubrication::Grease, 25.0)).unwrap();
    let fb = forecast_life(&b, &ctx(Lubrication::Grease, 25.0)).unwrap();
    let (ra, rb) = (fa.replace_by.unwrap().t_s, fb.replace_by.unwrap().t_s);
    assert!(
        (ra * scale - rb).abs() < 1e-6 * rb.abs().max(1.0),
        "{ra} vs {rb}"
    );
}

// Oil-fed lives forecast longer than grease-fed at equal damage (common practice, no source;
// reference sheet section 9).
#[test]
fn oil_fed_outlasts_grease_fed_at_equal_damage_in_the_model() {
    let calls = assess_life(&life(19, exp_db), &StageOptions::default());
    let g = forecast_life(&calls, &ctx(Lubrication::Grease, 25.0)).unwrap();
    let o = forecast_life(&calls, &ctx(Lubrication::Oil, 25.0)).unwrap();
    assert_eq!(o.method, ForecastMethod::Model);
    assert!(o.replace_by.unwrap().t_s > g.replace_by.unwrap().t_s);
    assert!(o.risk_from.unwrap().t_s > g.risk_from.unwrap().t_s);
    assert!(o.end_of_life.unwrap().t_s > g.end_of_life.unwrap().t_s);
    // Before any damage, the survival prior is longer for oil too.
    let flat = assess_life(&life(10, |_| 0.0), &StageOptions::default());
    let g = forecast_life(&flat, &ctx(Lubrication::Grease, 25.0)).unwrap();
    let o = forecast_life(&flat, &ctx(Lubrication::Oil, 25.0)).unwrap();
    assert_eq!(g.end_of_life_basis, EolBasis::SurvivalPrior);
    assert!(o.end_of_life.unwrap().t_s > g.end_of_life.unwrap().t_s);
}

// A damage index that leaves the baseline scatter but shows no stage (4 dB, below every stage
// level) starts the model, yet a stage-0 life gets no replace-by or risk date.
#[test]
fn no_date_without_damage_evidence() {
    let readings = life(12, |m| if m < 8.0 { 0.0 } else { 4.0 });
    let calls = assess_life(&readings, &StageOptions::default());
    assert!(calls.iter().all(|c| c.stage == 0), "{calls:#?}");
    let f = forecast_life(&calls, &ctx(Lubrication::Grease, 25.0)).unwrap();
    assert!(f.replace_by.is_none() && f.risk_from.is_none(), "{f:#?}");
    assert_eq!(f.method, ForecastMethod::None);
    assert!(
        f.assumptions
            .iter()
            .any(|a| a.contains("No bearing defect evidence"))
    );
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

// A rating-life prior on a life without damage evidence is shown as a prior, never as a due date
// (this replaced an older expectation that it set replace_by).
#[test]
fn a_rating_life_prior_is_shown_only_as_a_prior() {
    let flat = assess_life(&life(6, |_| 0.0), &StageOptions::default());
    let l10 = 100.0 * MONTH;
    let c = ForecastContext {
        rating_life_s: Some(l10),
        installed_s: Some(0.0),
        ..ctx(Lubrication::Grease, 25.0)
    };
    let f = forecast_life(&flat, &c).unwrap();
    assert_eq!(f.method, ForecastMethod::None);
    assert!(f.replace_by.is_none() && f.risk_from.is_none());
    let p = f.rating_life_prior.unwrap();
    assert!((p.t_s - l10).abs() < 1.0 && p.lo_s < p.t_s);
    assert!(f.assumptions.iter().any(|a| a.contains("only as a prior")));
}

// A stage-2 life (defect tone) whose damage index stays flat: the stage-duration date passes with
// no progression, so the forecast is moved on and says so.
#[test]
fn a_passed_date_with_no_progression_is_revised() {
    let mut readings = life(16, |_| 0.0);
    for r in readings.iter_mut().skip(3) {
        r.indicators.tones = Some([
            ToneEvidence {
                envelope_score_db: 15.0,
                envelope_harmonics: 3,
                ..Default::default()
            },
            ToneEvidence::default(),
            ToneEvidence::default(),
            ToneEvidence::default(),
        ]);
    }
    let calls = assess_life(&readings, &StageOptions::default());
    assert!(calls[3..].iter().all(|c| c.stage == 2));
    let early = forecast_life(&calls[..5], &ctx(Lubrication::Grease, 25.0)).unwrap();
    assert!(!early.revised);
    let late = forecast_life(&calls, &ctx(Lubrication::Grease, 25.0)).unwrap();
    let now = calls.last().unwrap().t_s;
    // 60-240 days from the first stage-2 call at month 3 has passed by month 15.
    assert!(late.revised, "{late:#?}");
    assert!(late.replace_by.unwrap().lo_s >= now - 1.0);
    assert!(late.assumptions.iter().any(|a| a.contains("Revised")));
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
