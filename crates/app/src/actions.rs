//! What panels ask for. Panels push actions while drawing; the app applies them after layout.

use std::path::PathBuf;

use crate::model::{BearingKey, ReadingId};
use crate::settings::View;

/// A request from a panel to the app.
#[derive(Debug, Clone, PartialEq)]
#[must_use]
pub enum Action {
    /// Ask for a database file with a dialog, then open it.
    OpenDatabaseDialog,
    /// Open this database.
    OpenDatabase(PathBuf),
    /// Ask for a route folder with a dialog, then import it.
    ImportDialog,
    /// Import this route folder into the open database.
    ImportFolder(PathBuf),
    /// Select a bearing (and load its history).
    SelectBearing(BearingKey),
    /// Select a bearing and show one of its views.
    OpenBearingView(BearingKey, View),
    /// Switch view.
    ShowView(View),
    /// Compute (or fetch from cache) the spectra of these readings.
    NeedSpectra(Vec<ReadingId>),
    /// Load the samples of this reading.
    NeedWaveform(ReadingId),
    /// The user has read the cautions.
    AcknowledgeCautions,
    /// Close the import summary.
    DismissImportSummary,
    /// Change the analyst's records on the selected bearing (a note, the baseline marks).
    Annotate(crate::model::Annotation),
    /// Move the spectra overlay's newest month to the next (+1) or previous (-1) reading.
    StepMonth(i32),
    /// Apply the planner's changes to the outage plan.
    ChangePlan(Vec<spallcast_plan::source::PlanChange>),
    /// Ask where to save the plot on screen (dialog or typed path), then save it.
    ExportPlotDialog,
    /// Save the plot on screen as this PNG and an SVG beside it (see [`crate::plot_export`]).
    ExportPlot(PathBuf),
    /// Take back the last plan step.
    UndoPlan(spallcast_plan::source::PlanUndo),
}
