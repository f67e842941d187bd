//! Stage assessment and replacement forecast over a plant database.
//!
//! For every bearing position and each of its lives, the readings' stored indicators are loaded in
//! time order per measurement point, assessed with [`spallcast_analysis::stage::assess_life`], and
//! forecast with [`spallcast_analysis::forecast::forecast_life`]. [`assess_store`] writes the call of
//! every reading into the store's stage-call table as a typed
//! [`StageRecord`] (the call, and the forecast as it stood at
//! that reading), serialised with serde. A position's summary is its most urgent point in the current life.
//!
//! Calls and forecasts are advisory; a person decides, and isolates and locks out the machine before
//! any work on it.

use std::collections::BTreeMap;

use chrono::{DateTime, TimeZone as _, Utc};
use serde::Serialize;
use spallcast_analysis::Diagnosis;
use spallcast_analysis::forecast::governing::{CallRank, governing, urgency_s};
use spallcast_analysis::forecast::{
    Backtest, Forecast, ForecastContext, backtest_life, forecast_life,
};
use spallcast_analysis::record::StageRecord;
use spallcast_analysis::stage::{
    LifeLocation, LifeReading, Location, LocationTally, ReadingIndicators, StageCall, StageOptions,
    ToneUse, assess_life, keys,
};
use spallcast_model::units::unix_s_of_date as date_s;
use spallcast_store::{BearingState, LifeInfo, ReadingMeta, Store};

use crate::error::{Doing as _, PipelineError, Result};

/// Version of the stage logic recorded with every stored call (2: each record carries the life's
/// location as it stood at that reading; 3: stage 1 needs the defect family absent from every band
/// below the ultrasonic range).
pub const STAGE_VERSION: &str = "spallcast-stage-4";

/// The assessed history of one measurement point over one bearing life.
#[derive(Debug, Clone, Serialize)]
pub struct PointHistory {
    /// Point id (tag).
    pub point: String,
    /// Reading ids, parallel to `calls`.
    pub reading_ids: Vec<i64>,
    /// When each reading was taken.
    pub taken_at: Vec<DateTime<Utc>>,
    /// One call per reading.
    pub calls: Vec<StageCall>,
    /// Forecast at each reading (causal: from the calls up to it).
    pub forecasts: Vec<Option<Forecast>>,
    /// The life's location as it stood at each reading (every point's calls up to its time).
    pub life_locations: Vec<LifeLocation>,
    /// Readings left out (not analysed or suspect), with the reason.
    pub skipped: Vec<(i64, String)>,
}

/// One bearing life of a position.
#[derive(Debug, Clone, Serialize)]
pub struct LifeAssessment {
    /// The life.
    pub life: LifeInfo,
    /// One history per measurement point.
    pub points: Vec<PointHistory>,
    /// The life's one fault location: every point's calls accumulated (see
    /// [`spallcast_analysis::stage::life_location`]).
    pub location: LifeLocation,
    /// For a replaced life: the replay against the actual replacement, per point.
    pub backtests: Vec<(String, Backtest)>,
}

/// The current state of one bearing position, for the replacement list.
#[derive(Debug, Clone, Serialize)]
pub struct BearingSummary {
    /// Bearing position id.
    pub position_id: i64,
    /// Area.
    pub area: String,
    /// Machine id (tag).
    pub machine: String,
    /// Machine name.
    pub machine_name: String,
    /// Position.
    pub position: String,
    /// Point whose call is reported (the most urgent one), if any reading was assessed.
    pub point: Option<String>,
    /// Stage 0..=4 (`None` without assessed readings).
    pub stage: Option<u8>,
    /// Fault location of the current life: every point's readings accumulated, the same for every
    /// view of the bearing (`None` without assessed readings).
    pub location: Option<Location>,
    /// Confidence 0..1 of that location.
    pub location_confidence: Option<f64>,
    /// Why that location (the evidence per location over the life).
    pub location_reason: Option<String>,
    /// Confidence 0..1 of the governing point's latest stage call.
    pub confidence: Option<f64>,
    /// Forecast (dates as Unix seconds inside; see the `*_at` fields for dates).
    pub forecast: Option<Forecast>,
    /// `replace_by` central date.
    pub replace_by: Option<DateTime<Utc>>,
    /// `risk_from` central date.
    pub risk_from: Option<DateTime<Utc>>,
    /// Latest reading of the current life.
    pub last_reading: Option<DateTime<Utc>>,
}

/// Seconds on the Unix axis to a UTC date.
pub fn utc_from_s(t_s: f64) -> Option<DateTime<Utc>> {
    if !t_s.is_finite() {
        return None;
    }
    Utc.timestamp_opt(t_s.floor() as i64, 0).single()
}

fn to_s(t: DateTime<Utc>) -> f64 {
    t.timestamp() as f64 + f64::from(t.timestamp_subsec_millis()) / 1000.0
}

/// Indicators of one reading from its stored analysis: the `stage.*` scalars when the analyzer
/// stored them, else the analysis document read back as a diagnosis.
fn reading_indicators(
    store: &Store,
    reading: &ReadingMeta,
) -> Result<Result<ReadingIndicators, String>> {
    let Some(record) = store
        .analysis(reading.id)
        .doing(|| format!("loading the analysis of reading {}", reading.id))?
    else {
        return Ok(Err("not analysed".to_owned()));
    };
    if record.scalars.keys().any(|k| k.starts_with("stage."))
        && record.scalars.contains_key(keys::ACCEL_RMS_G)
    {
        return Ok(Ok(ReadingIndicators::from_scalars(&record.scalars)));
    }
    match serde_json::from_value::<Diagnosis>(record.document) {
        Ok(d) => Ok(Ok(ReadingIndicators::from_diagnosis(&d, ToneUse::Use))),
        Err(e) => Ok(Err(format!(
            "analysis document of version {} not readable: {e}",
            record.version
        ))),
    }
}

/// Assesses every life of one bearing position (oldest life first), without writing anything.
pub fn assess_position(
    store: &Store,
    state: &BearingState,
    options: &StageOptions,
) -> Result<Vec<LifeAssessment>> {
    let lives = store
        .lives_with_readings(state.position_id)
        .doing(|| format!("loading the lives of {} {}", state.machine, state.position))?;
    let mut out = Vec::with_capacity(lives.len());
    for life in lives {
        let mut by_point: BTreeMap<String, Vec<&ReadingMeta>> = BTreeMap::new();
        for r in &life.readings {
            by_point.entry(r.point.clone()).or_default().push(r);
        }
        let mut points = Vec::new();
        let mut backtests = Vec::new();
        for (point, mut readings) in by_point {
            readings.sort_by_key(|r| r.taken_at);
            let mut hist = PointHistory {
                point: point.clone(),
                reading_ids: Vec::new(),
                taken_at: Vec::new(),
                calls: Vec::new(),
                forecasts: Vec::new(),
                life_locations: Vec::new(),
                skipped: Vec::new(),
            };
            let mut life_readings = Vec::new();
            let mut shaft_hz = 0.0;
            for r in readings {
                if let Some(why) = &r.suspect {
                    hist.skipped.push((r.id, format!("suspect reading: {why}")));
                    continue;
                }
                match reading_indicators(store, r)? {
                    Ok(indicators) => {
                        let t = r.taken_at.with_timezone(&Utc);
                        hist.reading_ids.push(r.id);
                        hist.taken_at.push(t);
                        shaft_hz = r.shaft_hz;
                        life_readings.push(LifeReading {
                            t_s: to_s(t),
                            indicators,
                            baseline_mark: r.baseline,
                        });
                    }
                    Err(why) => hist.skipped.push((r.id, why)),
                }
            }
            let ctx = ForecastContext {
                lubrication: state.lubrication,
                shaft_hz,
                installed_s: Some(date_s(life.life.installed)),
                rating_life_s: None,
            };
            hist.calls = assess_life(&life_readings, options);
            hist.forecasts = (0..hist.calls.len())
                .map(|i| forecast_life(&hist.calls[..=i], &ctx))
                .collect();
            if let Some(removed) = life.life.removed
                && !life_readings.is_empty()
            {
                backtests.push((
                    point.clone(),
                    backtest_life(&life_readings, options, &ctx, date_s(removed)),
                ));
            }
            points.push(hist);
        }
        let location = running_life_locations(&mut points);
        out.push(LifeAssessment {
            life: life.life,
            points,
            location,
            backtests,
        });
    }
    Ok(out)
}

/// Fills each point's `life_locations` (the life's location as it stood at each reading: every
/// point's calls with a time up to that reading's accumulated, ties taken together) and returns the
/// location over the whole life.
fn running_life_locations(points: &mut [PointHistory]) -> LifeLocation {
    let mut order: Vec<(usize, usize)> = points
        .iter()
        .enumerate()
        .flat_map(|(p, h)| (0..h.calls.len()).map(move |i| (p, i)))
        .collect();
    order.sort_by(|a, b| {
        points[a.0].calls[a.1]
            .t_s
            .total_cmp(&points[b.0].calls[b.1].t_s)
    });
    let mut at: Vec<Vec<Option<LifeLocation>>> =
        points.iter().map(|h| vec![None; h.calls.len()]).collect();
    let mut tally = LocationTally::default();
    let mut k = 0;
    while k < order.len() {
        let t = points[order[k].0].calls[order[k].1].t_s;
        let mut end = k;
        while end < order.len() && points[order[end].0].calls[order[end].1].t_s <= t {
            tally.add(&points[order[end].0].calls[order[end].1]);
            end += 1;
        }
        let now = tally.location();
        for &(p, i) in &order[k..end] {
            at[p][i] = Some(now.clone());
        }
        k = end;
    }
    for (h, locs) in points.iter_mut().zip(at) {
        h.life_locations = locs
            .into_iter()
            .map(|l| l.unwrap_or_else(|| tally.location()))
            .collect();
    }
    tally.location()
}

/// The summary of a position from its current (latest) life: the point with the highest stage, then
/// the earliest `replace_by`.
pub fn summarize(state: &BearingState, lives: &[LifeAssessment]) -> BearingSummary {
    let current = lives.last();
    // One rule for the bearing's call, shared with the planner and the window.
    let best = current.and_then(|l| {
        governing(
            l.points.iter().filter_map(|p| {
                Some((
                    p,
                    p.calls.last()?,
                    p.forecasts.last().and_then(Option::as_ref),
                ))
            }),
            |(p, call, forecast)| CallRank {
                stage: call.stage,
                urgency_s: urgency_s(*forecast),
                point: &p.point,
            },
        )
    });
    let last_reading = current.and_then(|l| {
        l.points
            .iter()
            .filter_map(|p| p.taken_at.last().copied())
            .max()
    });
    BearingSummary {
        position_id: state.position_id,
        area: state.area.clone(),
        machine: state.machine.clone(),
        machine_name: state.machine_name.clone(),
        position: state.position.clone(),
        point: best.map(|b| b.0.point.clone()),
        stage: best.map(|b| b.1.stage),
        location: best.and(current).map(|l| l.location.location),
        location_confidence: best.and(current).map(|l| l.location.confidence),
        location_reason: best.and(current).map(|l| l.location.reason.clone()),
        confidence: best.map(|b| b.1.confidence),
        replace_by: best
            .and_then(|b| b.2?.replace_by)
            .and_then(|p| utc_from_s(p.t_s)),
        risk_from: best
            .and_then(|b| b.2?.risk_from)
            .and_then(|p| utc_from_s(p.t_s)),
        forecast: best.and_then(|b| b.2.cloned()),
        last_reading,
    }
}

/// Sorts summaries by urgency: highest stage first, then earliest `replace_by`, then earliest
/// `risk_from`; positions without readings last.
pub fn sort_by_urgency(list: &mut [BearingSummary]) {
    list.sort_by(|a, b| {
        let key = |s: &BearingSummary| {
            (
                s.stage.map_or(-1, i32::from),
                s.replace_by.map_or(i64::MAX, |d| d.timestamp()),
                s.risk_from.map_or(i64::MAX, |d| d.timestamp()),
            )
        };
        let (sa, ra, fa) = key(a);
        let (sb, rb, fb) = key(b);
        sb.cmp(&sa)
            .then(ra.cmp(&rb))
            .then(fa.cmp(&fb))
            .then(a.machine.cmp(&b.machine))
            .then(a.position.cmp(&b.position))
    });
}

/// Counts of one run of [`assess_store`].
#[derive(Debug, Clone, Default, Serialize)]
pub struct AssessReport {
    /// Positions assessed.
    pub positions: usize,
    /// Stage calls written.
    pub calls_written: usize,
    /// Readings left out (not analysed, unreadable or suspect).
    pub readings_skipped: usize,
    /// One summary per position, most urgent first.
    pub summaries: Vec<BearingSummary>,
}

/// Assesses every bearing position and life in the store and writes each reading's stage call (with
/// its evidence and the forecast at that reading) into the stage-call table, one transaction per
/// bearing position.
pub fn assess_store(store: &mut Store, options: &StageOptions) -> Result<AssessReport> {
    let states = store
        .latest_states()
        .doing(|| "listing bearing positions".to_owned())?;
    let mut report = AssessReport::default();
    for state in &states {
        let lives = assess_position(store, state, options)?;
        report.readings_skipped += store_position_calls(store, state, &lives)?;
        report.calls_written += lives
            .iter()
            .flat_map(|l| &l.points)
            .map(|p| p.calls.len())
            .sum::<usize>();
        report.summaries.push(summarize(state, &lives));
        report.positions += 1;
    }
    sort_by_urgency(&mut report.summaries);
    Ok(report)
}

/// Writes the stage calls of one position's assessed lives in one transaction (a crash leaves the
/// position's calls all old or all new). Returns the number of readings left out.
pub fn store_position_calls(
    store: &mut Store,
    state: &BearingState,
    lives: &[LifeAssessment],
) -> Result<usize> {
    let mut calls = Vec::new();
    let mut skipped = 0;
    for life in lives {
        for p in &life.points {
            skipped += p.skipped.len();
            for (((id, call), forecast), location) in p
                .reading_ids
                .iter()
                .zip(&p.calls)
                .zip(&p.forecasts)
                .zip(&p.life_locations)
            {
                let record = StageRecord::new(p.point.clone(), call.clone(), forecast.clone())
                    .with_life_location(location.clone());
                let evidence =
                    serde_json::to_value(&record).map_err(|source| PipelineError::Encode {
                        reading_id: *id,
                        source,
                    })?;
                calls.push(spallcast_store::NewStageCall {
                    reading_id: *id,
                    stage: call.stage,
                    evidence,
                });
            }
        }
    }
    store.put_stage_calls(&calls, STAGE_VERSION).doing(|| {
        format!(
            "storing the stage calls of {} {}",
            state.machine, state.position
        )
    })?;
    Ok(skipped)
}

/// Counts of one run of [`complete_stage_calls`].
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct CompleteReport {
    /// Positions re-assessed.
    pub positions: usize,
    /// Stage calls written.
    pub calls_written: usize,
}

/// Re-assesses only the positions whose stage calls are missing, from another stage-logic version, or
/// older than their reading's analysis (after an interrupted import, an upgrade, a re-analysis), one
/// transaction per position. `progress(done, total)` counts positions.
pub fn complete_stage_calls(
    store: &mut Store,
    options: &StageOptions,
    progress: &mut dyn FnMut(usize, usize),
) -> Result<CompleteReport> {
    let stale: std::collections::HashSet<i64> = store
        .positions_with_stale_calls(STAGE_VERSION)
        .doing(|| "finding positions with missing stage calls".to_owned())?
        .into_iter()
        .collect();
    let mut report = CompleteReport::default();
    if stale.is_empty() {
        return Ok(report);
    }
    let states = store
        .latest_states()
        .doing(|| "listing bearing positions".to_owned())?;
    let total = stale.len();
    progress(0, total);
    for state in states.iter().filter(|s| stale.contains(&s.position_id)) {
        let lives = assess_position(store, state, options)?;
        store_position_calls(store, state, &lives)?;
        report.calls_written += lives
            .iter()
            .flat_map(|l| &l.points)
            .map(|p| p.calls.len())
            .sum::<usize>();
        report.positions += 1;
        progress(report.positions, total);
    }
    Ok(report)
}

/// Summaries of every position, most urgent first, computed without writing.
pub fn bearing_summaries(store: &Store, options: &StageOptions) -> Result<Vec<BearingSummary>> {
    let states = store
        .latest_states()
        .doing(|| "listing bearing positions".to_owned())?;
    let mut out = Vec::with_capacity(states.len());
    for state in &states {
        let lives = assess_position(store, state, options)?;
        out.push(summarize(state, &lives));
    }
    sort_by_urgency(&mut out);
    Ok(out)
}
