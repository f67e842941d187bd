//! The outage-plan calendar against a store on the calling thread: read a [`PlanPanel`]'s board and
//! carry out the [`PlanAsk`]s it emits (for tools and tests; the window sends the same asks to its data
//! thread through [`crate::source::PlantSource`]). The view never holds the database.

use std::collections::BTreeMap;

use chrono::NaiveDate;
use spallcast_plan::Forecast;
use spallcast_plan::steps::{apply_changes, read_board, undo_step};
use spallcast_store::Store;

use crate::plan_view::{PlanAsk, PlanPanel};

/// Reads the plan from `store` as of `today`, with the stored forecasts.
///
/// # Errors
/// A store error while reading.
pub fn load(store: &Store, today: NaiveDate) -> spallcast_plan::Result<PlanPanel> {
    Ok(PlanPanel::from_board(read_board(store, today, None)?))
}

/// Reads the plan with forecasts supplied by the caller (by bearing life id).
///
/// # Errors
/// A store error while reading.
pub fn load_with(
    store: &Store,
    today: NaiveDate,
    forecasts: BTreeMap<i64, Forecast>,
) -> spallcast_plan::Result<PlanPanel> {
    let board = read_board(store, today, Some(&forecasts))?;
    Ok(PlanPanel::with_forecasts(board, forecasts))
}

/// Reads the panel's board again (after an import or a change made elsewhere).
///
/// # Errors
/// A store error while reading.
pub fn reload(panel: &mut PlanPanel, store: &Store) -> spallcast_plan::Result<()> {
    panel.board = read_board(store, panel.board.today, panel.forecasts.as_ref())?;
    Ok(())
}

/// Carries out `ask` in `store` (apply the changes, or take back the step), reads the board again
/// and hands the outcome to the panel.
pub fn execute(panel: &mut PlanPanel, store: &mut Store, ask: &PlanAsk) {
    let today = panel.board.today;
    let (message, board, outcome) = match ask {
        PlanAsk::Change(changes) => apply_changes(store, today, panel.forecasts.as_ref(), changes),
        PlanAsk::Undo(step) => undo_step(store, today, panel.forecasts.as_ref(), step),
    };
    panel.received(message, board, outcome);
}
