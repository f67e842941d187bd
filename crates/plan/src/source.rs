//! The adapter between the store and the planning logic: reads a [`PlanBoard`] and the report pictures,
//! and writes plan changes back.
//!
//! Forecast dates come from the stored stage calls (see [`stored_forecasts`]); callers that hold
//! forecasts of their own pass them to [`load_board_with`].

use std::collections::{BTreeMap, HashMap};

use chrono::NaiveDate;
use spallcast_analysis::forecast::governing::{CallRank, governing, urgency_s};
use spallcast_analysis::record::StageRecord;
use spallcast_analysis::spectrum::{Detector, Quantity, SpectrumEngine, SpectrumUnits};
use spallcast_analysis::stage::keys;
use spallcast_analysis::window::Window;
use spallcast_model::units::date_of_unix_s;
use spallcast_store::{BearingState, OutageInput, PlanSnapshot, Store};

use crate::board::PlanBoard;
use crate::error::{PlanError, Result};
use crate::html::{BearingImages, ImagesByLife, SpectrumImage, TrendImage};
use crate::model::{BearingLife, BearingNeed, Forecast, LifeLocationCall, PlanEntry, PlanStatus};

/// Bearings at or above this stage are offered for a slot. Stage 1 shows only ultrasonic-band energy;
/// the replacement window opens at stage 2 (common practice, no source; REFERENCES §9), but a stage-1
/// bearing with a forecast is listed too so the planner sees it coming.
pub const MIN_STAGE_FOR_SLOT: u8 = 1;

/// The scalar trended in the report, with a fallback when it is absent.
pub const TREND_SCALARS: [(&str, &str, &str); 2] = [
    (keys::VELOCITY_RMS_MM_S, "velocity RMS", "mm/s"),
    (keys::ACCEL_RMS_G, "acceleration RMS", "g"),
];

/// A change the planner makes; the calendar view returns these and [`apply_change`] writes them.
#[derive(Debug, Clone, PartialEq)]
pub enum PlanChange {
    /// Plan a bearing life into an outage (moving it out of any other outage it was planned in).
    Assign {
        /// Bearing life.
        life_id: i64,
        /// Target outage.
        outage_id: i64,
    },
    /// Take a planned replacement out of its outage.
    Unplan {
        /// Plan entry.
        entry_id: i64,
    },
    /// Call off a planned replacement, keeping the record.
    Cancel {
        /// Plan entry.
        entry_id: i64,
        /// Why.
        note: String,
    },
    /// The replacement was done: close the life and start a new one on `replaced_on`.
    MarkDone {
        /// Plan entry.
        entry_id: i64,
        /// Day the new bearing went in.
        replaced_on: NaiveDate,
        /// What was found on the removed bearing.
        found: String,
    },
    /// Add an outage.
    AddOutage(OutageInput),
    /// Change an outage.
    UpdateOutage {
        /// Outage id.
        id: i64,
        /// New values.
        outage: OutageInput,
    },
    /// Delete an outage (and its plan entries).
    DeleteOutage {
        /// Outage id.
        id: i64,
    },
}

/// `MACHINE POSITION` of a bearing life, for status lines; the id when the life is unknown.
fn life_label(store: &Store, life_id: i64) -> Result<String> {
    for s in store.latest_states()? {
        if s.life.as_ref().is_some_and(|l| l.id == life_id) {
            return Ok(format!("{} {}", s.machine, s.position));
        }
    }
    Ok(store
        .plan_entries(None)?
        .into_iter()
        .find(|e| e.life_id == life_id)
        .map_or_else(
            || format!("bearing life {life_id}"),
            |e| format!("{} {}", e.machine, e.position),
        ))
}

/// `MACHINE POSITION` of a plan entry's bearing and its outage, for status lines.
fn entry_label(store: &Store, entry_id: i64) -> Result<(String, Option<spallcast_store::Outage>)> {
    let Some(e) = store
        .plan_entries(None)?
        .into_iter()
        .find(|e| e.id == entry_id)
    else {
        return Ok((format!("plan entry {entry_id}"), None));
    };
    let outage = store.outages()?.into_iter().find(|o| o.id == e.outage_id);
    Ok((format!("{} {}", e.machine, e.position), outage))
}

fn outage_label(store: &Store, outage_id: i64) -> Result<String> {
    Ok(store
        .outages()?
        .into_iter()
        .find(|o| o.id == outage_id)
        .map_or_else(
            || format!("outage {outage_id}"),
            |o| format!("\"{}\"", o.name),
        ))
}

/// Writes one change; returns a sentence for the status line, naming bearings and outages (never
/// internal ids).
pub fn apply_change(store: &mut Store, change: &PlanChange) -> Result<String> {
    Ok(match change {
        PlanChange::Assign { life_id, outage_id } => {
            let entry = store.plan_life(*life_id, *outage_id, "")?;
            // Moving: the life is planned in one outage at a time.
            for other in store.plan_entries(None)? {
                if other.life_id == *life_id
                    && other.id != entry
                    && other.status == PlanStatus::Planned
                {
                    store.unplan(other.id)?;
                }
            }
            format!(
                "planned {} in {}",
                life_label(store, *life_id)?,
                outage_label(store, *outage_id)?
            )
        }
        PlanChange::Unplan { entry_id } => {
            let (bearing, outage) = entry_label(store, *entry_id)?;
            store.unplan(*entry_id)?;
            match outage {
                Some(o) => format!("took {bearing} out of \"{}\"", o.name),
                None => format!("took {bearing} out of its outage"),
            }
        }
        PlanChange::Cancel { entry_id, note } => {
            let (bearing, _) = entry_label(store, *entry_id)?;
            store.cancel_plan(*entry_id, note)?;
            format!("cancelled the replacement of {bearing}")
        }
        PlanChange::MarkDone {
            entry_id,
            replaced_on,
            found,
        } => {
            let (bearing, outage) = entry_label(store, *entry_id)?;
            store.mark_done(*entry_id, *replaced_on, found)?;
            let line = format!(
                "replacement of {bearing} done on {replaced_on}; its new bearing starts a new life"
            );
            match outage.filter(|o| *replaced_on < o.start) {
                Some(o) => format!(
                    "{line}\nWarning: {replaced_on} is before outage \"{}\" starts ({}): check the date",
                    o.name, o.start
                ),
                None => line,
            }
        }
        PlanChange::AddOutage(o) => {
            store.add_outage(o)?;
            format!("added outage \"{}\"", o.name)
        }
        PlanChange::UpdateOutage { id, outage } => {
            store.update_outage(*id, outage)?;
            format!("saved outage \"{}\"", outage.name)
        }
        PlanChange::DeleteOutage { id } => {
            let name = outage_label(store, *id)?;
            store.delete_outage(*id)?;
            format!("deleted outage {name}")
        }
    })
}

/// A step the planner can take back: what it did, in words, and the planning tables before and after
/// it. Made by [`apply_changes_undoable`]; taken back by [`undo`].
#[derive(Debug, Clone, PartialEq)]
pub struct PlanUndo {
    /// What the step did (the status lines of the changes that were applied).
    pub what: String,
    before: PlanSnapshot,
    after: PlanSnapshot,
}

/// Applies `changes` in order, each its own transaction, like [`apply_change`]. Returns, per change,
/// its status line or its error, and the step that takes back every change that was applied (`None`
/// when nothing changed, or when the plan could not be read to record it).
pub fn apply_changes_undoable(
    store: &mut Store,
    changes: &[PlanChange],
) -> (Vec<Result<String>>, Option<PlanUndo>) {
    let before = store.plan_snapshot().ok();
    let outcomes: Vec<Result<String>> = changes.iter().map(|c| apply_change(store, c)).collect();
    let what = outcomes
        .iter()
        .filter_map(|o| o.as_ref().ok())
        .filter_map(|line| line.lines().next())
        .collect::<Vec<_>>()
        .join("; ");
    let undo = match (before, store.plan_snapshot().ok()) {
        (Some(before), Some(after)) if before != after => Some(PlanUndo {
            what,
            before,
            after,
        }),
        _ => None,
    };
    (outcomes, undo)
}

/// Takes back a step made by [`apply_changes_undoable`]: outages, plan entries and bearing lives return
/// to what they were before it (a replacement marked done reopens the removed bearing's life, and its
/// readings go back to it). Returns a status line.
///
/// # Errors
/// When the plan has changed since the step (another change here, or another program): nothing is
/// undone then; a store error.
pub fn undo(store: &mut Store, step: &PlanUndo) -> Result<String> {
    store.restore_plan(&step.before, &step.after)?;
    Ok(format!("undone: {}", step.what))
}

/// Bearing details by position id (bearing type from the plant tree).
fn bearing_types(store: &Store) -> Result<HashMap<i64, String>> {
    let tree = store.plant_tree()?;
    Ok(tree
        .areas
        .iter()
        .flat_map(|a| a.machines.iter())
        .flat_map(|m| m.bearings.iter())
        .map(|b| (b.position_id, b.bearing_type.clone()))
        .collect())
}

fn life_of(
    state: &BearingState,
    bearing_type: &str,
    life_id: i64,
    installed: NaiveDate,
) -> BearingLife {
    BearingLife {
        life_id,
        machine_id: state.machine.clone(),
        machine_name: state.machine_name.clone(),
        area: state.area.clone(),
        position: state.position.clone(),
        bearing_type: bearing_type.to_owned(),
        lubrication: state.lubrication.as_str().to_owned(),
        installed,
    }
}

/// The current (open) bearing life of every position.
pub fn current_lives(store: &Store) -> Result<Vec<BearingLife>> {
    let types = bearing_types(store)?;
    let states = store.latest_states()?;
    Ok(states
        .iter()
        .filter_map(|s| {
            let life = s.life.as_ref().filter(|l| l.removed.is_none())?;
            let bt = types.get(&s.position_id).map_or("", String::as_str);
            Some(life_of(s, bt, life.id, life.installed))
        })
        .collect())
}

/// One bearing's call as every view and export shows it: the governing point's latest stored call on
/// the bearing's newest life (the rule of [`spallcast_analysis::forecast::governing`], which the
/// command line's replacement list uses too).
#[derive(Debug, Clone, PartialEq)]
pub struct BearingCall {
    /// Bearing position id.
    pub position_id: i64,
    /// The life the call is on.
    pub life_id: i64,
    /// The point whose call governs.
    pub point: String,
    /// The reading the call was made on.
    pub reading_id: i64,
    /// When that reading was taken.
    pub taken_at: chrono::DateTime<chrono::Utc>,
    /// The points with calls on this life, in id order (what the call rests on).
    pub points: Vec<String>,
    /// Stage 0..=4.
    pub stage: u8,
    /// The stored record, when it is of the current schema.
    pub record: Option<StageRecord>,
    /// The life's location as it stands at the life's latest reading (the record of the newest call
    /// of any point): the same one `spallcast bearings` shows. `None` when that record has none.
    pub location: Option<spallcast_analysis::stage::LifeLocation>,
}

/// Every bearing's call, by position id. A bearing whose newest life has no stored call (one just
/// replaced, or never read) is absent.
pub fn bearing_calls(store: &Store) -> Result<BTreeMap<i64, BearingCall>> {
    Ok(governing_calls(store.latest_point_calls()?))
}

/// One bearing's call ([`bearing_calls`] for one position), reading only that bearing's calls.
pub fn bearing_call(store: &Store, position_id: i64) -> Result<Option<BearingCall>> {
    Ok(governing_calls(store.latest_point_calls_of(position_id)?).remove(&position_id))
}

fn governing_calls(point_calls: Vec<spallcast_store::PointCall>) -> BTreeMap<i64, BearingCall> {
    let mut by_position: BTreeMap<i64, Vec<(spallcast_store::PointCall, Option<StageRecord>)>> =
        BTreeMap::new();
    for pc in point_calls {
        let record = serde_json::from_value::<StageRecord>(pc.call.evidence.clone())
            .ok()
            .filter(StageRecord::is_current);
        by_position
            .entry(pc.position_id)
            .or_default()
            .push((pc, record));
    }
    let mut out = BTreeMap::new();
    for (position_id, calls) in by_position {
        let points: Vec<String> = calls.iter().map(|(pc, _)| pc.point.clone()).collect();
        let location = calls
            .iter()
            .max_by_key(|(pc, _)| pc.taken_at)
            .and_then(|(_, record)| record.as_ref()?.life_location.clone());
        let best = governing(calls, |(pc, record)| CallRank {
            stage: pc.call.stage,
            urgency_s: urgency_s(record.as_ref().and_then(|r| r.forecast.as_ref())),
            point: &pc.point,
        });
        if let Some((pc, record)) = best {
            out.insert(
                position_id,
                BearingCall {
                    position_id,
                    life_id: pc.life_id,
                    point: pc.point,
                    reading_id: pc.call.reading_id,
                    taken_at: pc.taken_at,
                    points,
                    stage: pc.call.stage,
                    record,
                    location,
                },
            );
        }
    }
    out
}

/// Forecasts of current lives, read from each bearing's call ([`bearing_calls`]): the call must be
/// on a life not yet removed and hold a [`StageRecord`] of the current schema whose forecast has
/// both `replace_by` and `risk_from` (the central estimates are the dates planned against). The
/// call's evidence sentences become the evidence text. Lives without such a call are left out.
pub fn stored_forecasts(store: &Store) -> Result<BTreeMap<i64, Forecast>> {
    let removed: std::collections::HashSet<i64> = store
        .latest_states()?
        .into_iter()
        .filter_map(|s| s.life.filter(|l| l.removed.is_some()).map(|l| l.id))
        .collect();
    let mut out = BTreeMap::new();
    for call in bearing_calls(store)?.into_values() {
        if removed.contains(&call.life_id) {
            continue;
        }
        if let Some(f) = call
            .record
            .as_ref()
            .and_then(|r| forecast_from_record(call.stage, r))
        {
            // The life's location as it stands at its newest reading, not at the governing one.
            let location = call.location.as_ref().map(location_call).or(f.location);
            out.insert(call.life_id, Forecast { location, ..f });
        }
    }
    Ok(out)
}

/// The planner's forecast from a stage record: `None` unless the record is of the current schema and
/// its forecast has both dates; the location is the record's own (as it stood at that reading).
pub fn forecast_from_record(stage: u8, record: &StageRecord) -> Option<Forecast> {
    if !record.is_current() {
        return None;
    }
    let forecast = record.forecast.as_ref()?;
    Some(Forecast {
        stage,
        evidence: record.call.evidence.join("; "),
        replace_by: date_of_unix_s(forecast.replace_by?.t_s)?,
        risk_from: date_of_unix_s(forecast.risk_from?.t_s)?,
        location: record.life_location.as_ref().map(location_call),
    })
}

/// The planner's form of a life's location.
fn location_call(l: &spallcast_analysis::stage::LifeLocation) -> LifeLocationCall {
    LifeLocationCall {
        location: l.location,
        // In 0..=100 after the clamp: the cast cannot truncate.
        confidence_pct: (100.0 * l.confidence.clamp(0.0, 1.0)).round() as u8,
    }
}

/// Reads the board with the forecasts stored in the database.
pub fn load_board(store: &Store, today: NaiveDate) -> Result<PlanBoard> {
    let forecasts = stored_forecasts(store)?;
    load_board_with(store, today, &forecasts)
}

/// Reads the board, taking forecasts (by life id) from the caller.
pub fn load_board_with(
    store: &Store,
    today: NaiveDate,
    forecasts: &BTreeMap<i64, Forecast>,
) -> Result<PlanBoard> {
    let types = bearing_types(store)?;
    let states = store.latest_states()?;
    let by_place: HashMap<(&str, &str), &BearingState> = states
        .iter()
        .map(|s| ((s.machine.as_str(), s.position.as_str()), s))
        .collect();
    let outages = store.outages()?;
    let needs = current_lives(store)?
        .into_iter()
        .filter_map(|life| {
            let forecast = forecasts
                .get(&life.life_id)
                .filter(|f| f.stage >= MIN_STAGE_FOR_SLOT)?
                .clone();
            Some(BearingNeed { life, forecast })
        })
        .collect();
    let mut entries = Vec::new();
    for e in store.plan_entries(None)? {
        let Some(state) = by_place.get(&(e.machine.as_str(), e.position.as_str())) else {
            return Err(PlanError::Invalid(format!(
                "plan entry {} names an unknown bearing position",
                e.id
            )));
        };
        let installed = store
            .lives(state.position_id)?
            .into_iter()
            .find(|l| l.id == e.life_id)
            .map_or(NaiveDate::MIN, |l| l.installed);
        let bt = types.get(&state.position_id).map_or("", String::as_str);
        entries.push(PlanEntry {
            id: e.id,
            outage_id: e.outage_id,
            status: e.status,
            note: e.note,
            life: life_of(state, bt, e.life_id, installed),
            forecast: forecasts.get(&e.life_id).cloned(),
        });
    }
    let notes = life_notes(store, &states)?;
    let mut board = PlanBoard {
        today,
        outages,
        needs,
        entries,
        notes,
    };
    board.normalise();
    Ok(board)
}

/// The analyst's notes of every bearing life, by life id: the notes of its position dated within
/// the life.
fn life_notes(store: &Store, states: &[BearingState]) -> Result<BTreeMap<i64, Vec<String>>> {
    let mut out = BTreeMap::new();
    for state in states {
        let notes = store.notes(state.position_id)?;
        if notes.is_empty() {
            continue;
        }
        for life in store.lives(state.position_id)? {
            let lines: Vec<String> = notes
                .iter()
                .filter(|n| n.on_day >= life.installed && life.removed.is_none_or(|r| n.on_day < r))
                .map(|n| format!("{} {}: {}", n.on_day, n.kind, n.text))
                .collect();
            if !lines.is_empty() {
                out.insert(life.id, lines);
            }
        }
    }
    Ok(out)
}

/// The lives the report shows: planned or done in an outage, or still needing a slot.
fn report_lives(board: &PlanBoard) -> Vec<i64> {
    let mut lives: Vec<i64> = board
        .entries
        .iter()
        .filter(|e| e.status != PlanStatus::Cancelled)
        .map(|e| e.life.life_id)
        .chain(board.needs.iter().map(|n| n.life.life_id))
        .collect();
    lives.sort_unstable();
    lives.dedup();
    lives
}

/// Report pictures: for each life on the report, the trend of [`TREND_SCALARS`] at the point of its
/// latest reading, and the acceleration amplitude spectrum of that reading's stored waveform (Hann
/// window, averaged segments of up to 8192 samples, peak lines in g) computed with the analysis crate.
/// A life without readings gets no pictures; a waveform too short for a spectrum gets only a trend.
pub fn load_images(store: &Store, board: &PlanBoard) -> Result<ImagesByLife> {
    let mut engine = SpectrumEngine::new();
    let mut out = ImagesByLife::new();
    for life_id in report_lives(board) {
        let mut images = BearingImages::default();
        for (scalar, name, units) in TREND_SCALARS {
            let series = store.trend(life_id, scalar)?;
            let Some(last) = series.last() else { continue };
            let point = last.point.clone();
            images.trend = Some(TrendImage {
                name: format!("{name} at {point}"),
                units: units.to_owned(),
                points: series
                    .iter()
                    .filter(|p| p.point == point)
                    .map(|p| (p.taken_at.date_naive(), p.value))
                    .collect(),
            });
            if let Some(w) = store.waveforms(&[last.reading_id])?.into_iter().next() {
                images.spectrum = spectrum_image(&mut engine, &w);
            }
            break;
        }
        out.insert(life_id, images);
    }
    Ok(out)
}

fn spectrum_image(
    engine: &mut SpectrumEngine,
    w: &spallcast_store::Waveform,
) -> Option<SpectrumImage> {
    let samples: Vec<f64> = w.samples_g.iter().map(|&v| f64::from(v)).collect();
    if samples.len() < 64 {
        return None;
    }
    let segment = spallcast_analysis::spectrum::fast_len_at_most(samples.len().min(8192));
    let units = SpectrumUnits {
        quantity: Quantity::AccelerationG,
        detector: Detector::Peak,
    };
    let s = engine
        .amplitude_spectrum(
            &samples,
            w.meta.sample_rate_hz,
            segment,
            Window::Hann,
            units,
            0.0,
        )
        .ok()?;
    Some(SpectrumImage {
        taken_at: w.meta.taken_at.format("%Y-%m-%d %H:%M %:z").to_string(),
        point: w.meta.point.clone(),
        freq_hz: (0..s.values.len()).map(|i| s.freq_hz(i)).collect(),
        amplitude: s.values,
        units: "g peak".to_owned(),
    })
}
