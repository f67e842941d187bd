//! The data-access seam: what the window needs from the store and the analysis crate.
//!
//! Worker threads call a [`Backend`]; the panels never do. [`crate::store_backend::StoreBackend`] is the
//! real one (`SQLite` store, analysis crate); tests and benches may supply their own.

use std::path::Path;

use chrono::NaiveDate;
use spallcast_plan::PlanBoard;
use spallcast_plan::source::{PlanChange, PlanUndo};

use crate::plan_view::StepOutcome;

use crate::model::{
    Annotation, Attention, BearingHistory, BearingKey, ImportProgress, ImportSummary, PlantTree,
    ReadingId, ReadingSpectra, UpdateProgress, Waveform,
};

/// A read connection to one plant database. Not `Sync`: each worker thread opens its own.
pub trait PlantSource: Send {
    /// The plant hierarchy with each bearing's latest stage.
    fn plant(&mut self) -> anyhow::Result<PlantTree>;
    /// What needs attention after the latest route day.
    fn attention(&mut self) -> anyhow::Result<Attention>;
    /// One bearing's readings, stage call and forecast.
    fn bearing(&mut self, key: &BearingKey) -> anyhow::Result<BearingHistory>;
    /// The samples of one reading.
    fn waveform(&mut self, reading: ReadingId) -> anyhow::Result<Waveform>;
    /// The outage plan as of `today`.
    fn plan(&mut self, today: NaiveDate) -> anyhow::Result<PlanBoard>;
    /// Applies the planner's changes; returns what was done in words and the plan read again.
    fn change_plan(
        &mut self,
        today: NaiveDate,
        changes: &[PlanChange],
    ) -> (String, anyhow::Result<PlanBoard>, StepOutcome);
    /// Takes back a plan step (see [`spallcast_plan::steps::undo_step`]), then reads the plan again.
    fn undo_plan(
        &mut self,
        today: NaiveDate,
        step: &PlanUndo,
    ) -> (String, anyhow::Result<PlanBoard>, StepOutcome);
    /// Whether another connection (a command-line import, a second window) changed the database since
    /// the last call.
    fn changed_elsewhere(&mut self) -> anyhow::Result<bool>;
    /// Changes the analyst's records on a bearing (a note, the baseline marks; the bearing's stage
    /// calls are recomputed after a baseline change); returns what was done in words.
    fn annotate(&mut self, key: &BearingKey, change: &Annotation) -> anyhow::Result<String>;
}

/// Opens sources, imports route folders and computes spectra. Shared by every worker thread.
pub trait Backend: Send + Sync {
    /// Opens a database for reading, first bringing it up to date where the backend does that
    /// (re-analysis, stage calls), reporting progress. The error names the file and what is wrong.
    fn open(
        &self,
        db_path: &Path,
        progress: &mut dyn FnMut(UpdateProgress),
    ) -> anyhow::Result<Box<dyn PlantSource>>;
    /// Imports a route folder into the database, reporting progress as it goes.
    fn import_route(
        &self,
        db_path: &Path,
        folder: &Path,
        progress: &mut dyn FnMut(ImportProgress),
    ) -> anyhow::Result<ImportSummary>;
    /// The acceleration, velocity and envelope spectra of a waveform.
    fn spectra(&self, waveform: &Waveform) -> anyhow::Result<ReadingSpectra>;
}
