//! Plan steps as the planner takes them: apply a set of changes (or take back the last step) in the
//! store, read the board again, and say in words what was done, with warnings for the slot chosen.
//!
//! Used by the window's data thread (through its store adapter) and by tools and tests that drive the
//! calendar view against a store; the view itself only emits the asks.

use std::collections::BTreeMap;

use chrono::NaiveDate;
use spallcast_store::Store;

use crate::source::{
    PlanChange, PlanUndo, apply_changes_undoable, load_board, load_board_with, undo,
};
use crate::{BearingNeed, Forecast, PlanBoard};

/// What a plan step did to the undo list.
#[derive(Debug, Clone, PartialEq)]
pub enum StepOutcome {
    /// Changes were applied; the step that takes them back (`None` when nothing changed).
    Changed(Option<PlanUndo>),
    /// The last step was taken back.
    Undone,
    /// The undo was refused (the message says why).
    NotUndone,
}

/// Reads the board as of `today`: with `forecasts` supplied by the caller (by bearing life id), or
/// with the stored forecasts when `None`.
///
/// # Errors
/// A store error while reading.
pub fn read_board(
    store: &Store,
    today: NaiveDate,
    forecasts: Option<&BTreeMap<i64, Forecast>>,
) -> crate::Result<PlanBoard> {
    match forecasts {
        Some(f) => load_board_with(store, today, f),
        None => load_board(store, today),
    }
}

/// Takes back `step` in `store` and reads the board again; the message says what was undone or why
/// not (see [`crate::source::undo`]).
pub fn undo_step(
    store: &mut Store,
    today: NaiveDate,
    forecasts: Option<&BTreeMap<i64, Forecast>>,
    step: &PlanUndo,
) -> (String, crate::Result<PlanBoard>, StepOutcome) {
    let (message, outcome) = match undo(store, step) {
        Ok(line) => (line, StepOutcome::Undone),
        Err(err) => (format!("Not undone: {err}"), StepOutcome::NotUndone),
    };
    let board = read_board(store, today, forecasts);
    (message, board, outcome)
}

/// Applies the planner's changes to `store`, one small transaction each, and reads the board again.
/// Returns the message in words (what was done, warnings for the slot chosen, or why not) and the new
/// board, and the step that takes the changes back (`None` when nothing changed). `forecasts`: as for
/// [`read_board`]; `None` reads the stored ones.
pub fn apply_changes(
    store: &mut Store,
    today: NaiveDate,
    forecasts: Option<&BTreeMap<i64, Forecast>>,
    changes: &[PlanChange],
) -> (String, crate::Result<PlanBoard>, StepOutcome) {
    let mut lines = Vec::new();
    let mut assigned = Vec::new();
    let (outcomes, step) = apply_changes_undoable(store, changes);
    for (change, outcome) in changes.iter().zip(outcomes) {
        match outcome {
            Ok(done) => {
                lines.push(done);
                if let PlanChange::Assign { life_id, outage_id } = change {
                    assigned.push((*life_id, *outage_id));
                }
            }
            Err(err) => lines.push(format!("Not done: {err}")),
        }
    }
    let board = read_board(store, today, forecasts);
    if let Ok(board) = &board {
        for (life_id, outage_id) in assigned {
            lines.extend(slot_warnings_after(board, life_id, outage_id));
        }
    }
    (lines.join("\n"), board, StepOutcome::Changed(step))
}

/// Warnings, in words, for a bearing life just planned into an outage (read from the new board).
fn slot_warnings_after(board: &PlanBoard, life_id: i64, outage_id: i64) -> Vec<String> {
    let Some(outage) = board.outage(outage_id) else {
        return Vec::new();
    };
    let need = board
        .entries
        .iter()
        .find(|e| e.life.life_id == life_id && e.outage_id == outage_id)
        .and_then(|e| {
            Some(BearingNeed {
                life: e.life.clone(),
                forecast: e.forecast.clone()?,
            })
        });
    need.map(|need| crate::slot_warnings(&need, outage, board.today))
        .unwrap_or_default()
        .iter()
        .map(|w| format!("Warning: {w}"))
        .collect()
}
