//! The outage-plan calendar: planned outages over the coming months, each a drop zone listing the
//! bearing replacements planned in it, and beside them the bearings that still need a slot, ordered by
//! their replace-by date. A bearing is planned by dragging it onto an outage or by accepting the
//! suggested outage; warnings are shown in words. Outages are added and edited in a small form.
//!
//! [`PlanView`] only draws a [`PlanBoard`] and returns [`PlanChange`]s; [`PlanPanel`] holds a board,
//! the steps that can be taken back and the last message, and returns a [`PlanAsk`] from
//! [`PlanPanel::draw`]. It never touches the database: the window's data thread carries the ask out
//! ([`spallcast_plan::steps::apply_changes`], [`spallcast_plan::steps::undo_step`], through
//! [`crate::store_backend`]) and hands the outcome back to [`PlanPanel::received`];
//! [`crate::store_backend::plan_steps`] does the same on the calling thread for tools and tests.

mod cards_ui;
mod outage_editor;

use std::collections::BTreeMap;

use eframe::egui;
use spallcast_plan::source::{PlanChange, PlanUndo};
use spallcast_plan::{Forecast, PlanBoard};

pub use outage_editor::OutageEditor;
/// What a plan step did to the undo list (defined with the plan steps in `spallcast-plan`).
pub use spallcast_plan::steps::StepOutcome;

/// What is dragged: a bearing life.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct PlanDrag {
    /// The bearing life being planned.
    pub life_id: i64,
}

/// Colour of warning text (a dark amber, distinct from the stage ramp).
pub const WARNING_TEXT: egui::Color32 = egui::Color32::from_rgb(0x8a, 0x3f, 0x00);

/// Caution repeated where a late-stage bearing is decided on: the stage-4 card and the "Mark done" form.
pub const LATE_STAGE_CAUTION: &str = "A late-stage bearing can fail within minutes, and a quiet reading does not \
prove a machine safe. Advice only: isolate and lock out before any work.";

/// Heading of the column of bearings without a slot.
pub const NEEDS_HEADING: &str = "Bearings that need a slot (by replace-by date)";

/// UI state of the calendar (no data: the board is passed in each frame).
#[derive(Debug, Clone)]
pub struct PlanView {
    /// How far ahead outages are shown, in months.
    pub horizon_months: u32,
    /// The add/edit outage form.
    pub editor: OutageEditor,
    /// The plan entry whose "mark done" form is open, with its date and finding texts.
    pub(crate) done_form: Option<(i64, String, String)>,
}

impl Default for PlanView {
    fn default() -> Self {
        Self {
            horizon_months: 12,
            editor: OutageEditor::default(),
            done_form: None,
        }
    }
}

impl PlanView {
    /// Draws the calendar and returns the changes the planner asked for this frame.
    pub fn ui(&mut self, ui: &mut egui::Ui, board: &PlanBoard) -> Vec<PlanChange> {
        let mut changes = Vec::new();
        ui.horizontal(|ui| {
            ui.heading("Outage plan");
            ui.label(format!("as of {}", board.today));
            ui.separator();
            ui.label("Show the next");
            ui.add(
                egui::DragValue::new(&mut self.horizon_months)
                    .range(1..=36)
                    .suffix(" months"),
            );
        });
        ui.label(
            "Drag a bearing onto an outage, or accept the suggestion. Advice only: isolate and lock out before \
             work; local codes and licensed practice prevail.",
        );
        ui.separator();
        let horizon_days = i64::from(self.horizon_months) * 31;
        ui.columns(2, |cols| {
            if let [left, right] = cols {
                egui::ScrollArea::vertical()
                    .id_salt("plan_outages")
                    .show(left, |ui| {
                        self.outages_ui(ui, board, horizon_days, &mut changes);
                    });
                egui::ScrollArea::vertical()
                    .id_salt("plan_needs")
                    .show(right, |ui| {
                        cards_ui::needs_ui(ui, board, &mut changes);
                        ui.separator();
                        self.editor.ui(ui, &mut changes);
                    });
            }
        });
        changes
    }

    fn outages_ui(
        &mut self,
        ui: &mut egui::Ui,
        board: &PlanBoard,
        horizon_days: i64,
        changes: &mut Vec<PlanChange>,
    ) {
        let outages = board.coming_outages(horizon_days);
        if outages.is_empty() {
            ui.label("No planned outages in this period. Add one with the form on the right.");
        }
        for outage in outages {
            let frame = egui::Frame::group(ui.style()).inner_margin(6.0);
            let (_, dropped) = ui.dnd_drop_zone::<PlanDrag, ()>(frame, |ui| {
                ui.set_min_width(ui.available_width());
                cards_ui::outage_header_ui(ui, outage, &mut self.editor);
                let tasks = board.tasks_in(outage.id);
                if tasks.is_empty() {
                    ui.weak("No replacements planned. Drop a bearing here.");
                }
                for entry in tasks {
                    cards_ui::task_ui(ui, board, entry, &mut self.done_form, changes);
                }
            });
            if let Some(drag) = dropped {
                changes.push(PlanChange::Assign {
                    life_id: drag.life_id,
                    outage_id: outage.id,
                });
            }
            ui.add_space(4.0);
        }
    }
}

/// The calendar with its data: a board read from the store, the view state and the last message.
#[derive(Debug, Clone)]
pub struct PlanPanel {
    /// View state.
    pub view: PlanView,
    /// The plan as last read.
    pub board: PlanBoard,
    /// Forecasts supplied by the caller instead of the stored ones (tests, or a caller that computes
    /// them); `None` reads the stored forecasts.
    pub forecasts: Option<BTreeMap<i64, Forecast>>,
    /// The last result or error, in words.
    pub message: Option<String>,
    /// Steps that can be taken back, oldest first (at most [`UNDO_DEPTH`]).
    pub undo: Vec<PlanUndo>,
}

/// How many plan steps the window can take back.
pub const UNDO_DEPTH: usize = 20;

/// Label of the button that takes back the last plan step (followed by what it did).
pub const UNDO_LABEL: &str = "Undo";

/// What the planner asked for in one frame.
#[derive(Debug, Clone, PartialEq)]
pub enum PlanAsk {
    /// Apply these changes.
    Change(Vec<PlanChange>),
    /// Take back this step (the last one done).
    Undo(PlanUndo),
}

impl PlanPanel {
    /// A panel for a board read elsewhere (the window's data thread), with the stored forecasts.
    #[must_use]
    pub fn from_board(board: PlanBoard) -> Self {
        Self {
            view: PlanView::default(),
            board,
            forecasts: None,
            message: None,
            undo: Vec::new(),
        }
    }

    /// A panel for a board read with forecasts supplied by the caller (by bearing life id); the data
    /// layer reads the board again with the same forecasts after each step.
    #[must_use]
    pub fn with_forecasts(board: PlanBoard, forecasts: BTreeMap<i64, Forecast>) -> Self {
        Self {
            forecasts: Some(forecasts),
            ..Self::from_board(board)
        }
    }

    /// Draws the last message, the undo button and the calendar; returns what was asked this frame.
    /// Ctrl+Z (Cmd+Z) asks for the undo too.
    pub fn draw(&mut self, ui: &mut egui::Ui) -> Option<PlanAsk> {
        let mut ask = None;
        ui.horizontal_wrapped(|ui| {
            if let Some(last) = self.undo.last() {
                let shortcut = egui::KeyboardShortcut::new(egui::Modifiers::COMMAND, egui::Key::Z);
                let clicked = ui
                    .button(UNDO_LABEL)
                    .on_hover_text(format!(
                        "Take back the last change to the plan ({}): {}",
                        ui.ctx().format_shortcut(&shortcut),
                        last.what
                    ))
                    .clicked();
                let typed = ui.input_mut(|i| i.consume_shortcut(&shortcut));
                ui.weak(format!("last change: {}", last.what));
                if clicked || typed {
                    ask = Some(PlanAsk::Undo(last.clone()));
                }
            }
        });
        if let Some(msg) = &self.message {
            ui.label(egui::RichText::new(msg).strong());
        }
        let changes = self.view.ui(ui, &self.board);
        if ask.is_none() && !changes.is_empty() {
            ask = Some(PlanAsk::Change(changes));
        }
        ask
    }

    /// Takes the outcome of [`spallcast_plan::steps::apply_changes`] or
    /// [`spallcast_plan::steps::undo_step`]: the message, the board read again, and
    /// what became of the undo list. An undo that went through leaves the list; one refused stays, so
    /// the reason shows and nothing is lost.
    pub fn received<E: std::fmt::Display>(
        &mut self,
        message: String,
        board: Result<PlanBoard, E>,
        outcome: StepOutcome,
    ) {
        match outcome {
            StepOutcome::Changed(Some(step)) => {
                self.undo.push(step);
                if self.undo.len() > UNDO_DEPTH {
                    self.undo.remove(0);
                }
            }
            StepOutcome::Undone => {
                self.undo.pop();
            }
            StepOutcome::Changed(None) | StepOutcome::NotUndone => {}
        }
        match board {
            Ok(board) => {
                self.board = board;
                self.message = Some(message);
            }
            Err(err) => {
                self.message = Some(format!("{message}\nCould not read the plan again: {err}"));
            }
        }
    }
}
