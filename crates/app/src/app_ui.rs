//! The window layout: top bar, status bar with the permanent cautions, plant tree, the current view, and
//! the first-run notice.

use eframe::egui;

use crate::actions::Action;
use crate::app::SpallcastApp;
use crate::palette;
use crate::settings::View;

/// The permanent caution line of the status bar.
pub const CAUTION_LINE: &str = "Advice only: Spallcast's stage calls and dates can be wrong. Isolate and lock out a \
                                machine before any work on it; local codes and licensed practice prevail.";

/// Title of the first-run notice.
pub const NOTICE_TITLE: &str = "Before you rely on Spallcast";

/// The button that closes the first-run notice.
pub const NOTICE_BUTTON: &str = "I have read this";

impl SpallcastApp {
    /// Draws every panel and returns what they asked for.
    pub(crate) fn layout_ui(&mut self, ui: &mut egui::Ui) -> Vec<Action> {
        let mut actions = Vec::new();
        egui::Panel::top("spallcast-top").show(ui, |ui| self.top_bar_ui(ui, &mut actions));
        egui::Panel::bottom("spallcast-status").show(ui, |ui| self.status_bar_ui(ui));
        egui::Panel::left("spallcast-plant")
            .resizable(true)
            .default_size(270.0)
            .show(ui, |ui| {
                self.tree.ui(
                    ui,
                    self.plant.as_ref(),
                    self.selected.as_ref(),
                    &mut actions,
                );
            });
        let view = self.state.view;
        if view.is_bearing_view()
            && let Some(history) = &self.history
        {
            egui::Panel::right("spallcast-evidence")
                .resizable(true)
                .default_size(300.0)
                .show(ui, |ui| {
                    let cx = crate::panels::bearing_ui::EvidenceContext {
                        plant: self.plant.as_ref(),
                        overlaid: self.spectra.overlay_of(&history.key),
                        today: self.today,
                    };
                    self.evidence.ui(ui, history, &cx, &mut actions);
                });
        }
        egui::CentralPanel::default().show(ui, |ui| self.view_ui(ui, view, &mut actions));
        if !self.state.cautions_acknowledged {
            cautions_notice_ui(ui.ctx(), &mut actions);
        }
        self.import_summary_ui(ui.ctx(), &mut actions);
        if let Some(prompt) = &mut self.path_prompt {
            let no_recent = Vec::new();
            let recent = match prompt.purpose {
                crate::path_prompt::PathPurpose::OpenDatabase => &self.state.recent_databases,
                crate::path_prompt::PathPurpose::ImportFolder => &self.state.recent_folders,
                crate::path_prompt::PathPurpose::ExportPlot => &no_recent,
            };
            let (action, keep) = crate::path_prompt::prompt_ui(ui.ctx(), prompt, recent);
            actions.extend(action);
            if !keep {
                self.path_prompt = None;
            }
        }
        actions
    }

    fn top_bar_ui(&mut self, ui: &mut egui::Ui, actions: &mut Vec<Action>) {
        ui.horizontal(|ui| {
            ui.strong("Spallcast");
            ui.separator();
            if ui.button("Open database…").clicked() {
                actions.push(Action::OpenDatabaseDialog);
            }
            let can_import = self.worker.is_some() && self.import.is_none();
            if ui
                .add_enabled(can_import, egui::Button::new("Import route folder…"))
                .clicked()
            {
                actions.push(Action::ImportDialog);
            }
            units_menu(ui, &mut self.state.units);
            if let Some(path) = self.db_path() {
                ui.label(
                    egui::RichText::new(path.display().to_string())
                        .small()
                        .weak(),
                );
            }
            if let Some(job) = &self.import {
                ui.separator();
                let p = job.progress;
                ui.add(
                    egui::ProgressBar::new(p.fraction())
                        .desired_width(220.0)
                        .text(format!("importing {} / {} rows", p.done, p.total)),
                );
            }
        });
        ui.horizontal(|ui| {
            for view in View::TABS {
                if ui
                    .selectable_label(self.state.view == view, view.label())
                    .clicked()
                {
                    actions.push(Action::ShowView(view));
                }
            }
            if let Some(key) = &self.selected {
                ui.separator();
                let stage = self
                    .plant
                    .as_ref()
                    .and_then(|p| p.bearing(key))
                    .and_then(|b| b.stage);
                palette::stage_badge_ui(ui, stage);
                ui.label(key.display())
                    .on_hover_text(crate::shortcuts::SHORTCUTS_TEXT);
            }
        });
    }

    fn status_bar_ui(&mut self, ui: &mut egui::Ui) {
        egui::Frame::new()
            .fill(palette::CAUTION_FILL)
            .inner_margin(4.0)
            .show(ui, |ui| {
                ui.set_width(ui.available_width());
                ui.label(egui::RichText::new(CAUTION_LINE).color(palette::CAUTION_TEXT));
            });
        ui.horizontal(|ui| {
            if self.is_busy() {
                ui.spinner();
            }
            if let Some(status) = &self.status {
                if status.is_error {
                    ui.colored_label(ui.visuals().error_fg_color, &status.text);
                } else {
                    ui.label(&status.text);
                }
            }
            if let Some(t) = self.last_spectra_time {
                ui.separator();
                ui.label(
                    egui::RichText::new(format!(
                        "last spectra: {:.0} ms",
                        t.as_secs_f64() * 1000.0
                    ))
                    .weak(),
                );
            }
        });
    }

    fn view_ui(&mut self, ui: &mut egui::Ui, view: View, actions: &mut Vec<Action>) {
        match view {
            View::Changes => {
                self.changes.ui(
                    ui,
                    self.attention.as_ref(),
                    self.plant.as_ref(),
                    self.today,
                    actions,
                );
            }
            View::OutagePlan => match &mut self.plan {
                Some(panel) => match panel.draw(ui) {
                    Some(crate::plan_view::PlanAsk::Change(changes)) => {
                        actions.push(Action::ChangePlan(changes));
                    }
                    Some(crate::plan_view::PlanAsk::Undo(step)) => {
                        actions.push(Action::UndoPlan(step));
                    }
                    None => {}
                },
                None => {
                    ui.horizontal(|ui| {
                        ui.spinner();
                        ui.label("reading the outage plan…");
                    });
                }
            },
            View::Spectra | View::Trend | View::Waveform => {
                let Some(history) = &self.history else {
                    if self.history_loading {
                        ui.horizontal(|ui| {
                            ui.spinner();
                            ui.label("loading the bearing…");
                        });
                    } else {
                        ui.label("Choose a bearing in the plant tree.");
                    }
                    return;
                };
                match view {
                    View::Spectra => {
                        self.spectra.units = self.state.units;
                        self.spectra
                            .ui(ui, &mut self.state.spectra, history, &self.cache, actions);
                    }
                    View::Trend => {
                        self.trend.units = self.state.units;
                        self.trend.ui(ui, &mut self.state.trend_indicators, history);
                    }
                    _ => {
                        self.waveform.units = self.state.units;
                        self.waveform.ui(ui, history, &self.cache, actions);
                    }
                }
            }
        }
    }

    fn import_summary_ui(&self, ctx: &egui::Context, actions: &mut Vec<Action>) {
        let Some(result) = &self.import_summary else {
            return;
        };
        egui::Window::new("Import summary")
            .collapsible(false)
            .resizable(true)
            .show(ctx, |ui| {
                match result {
                    Ok(s) => {
                        ui.label(format!(
                            "{} readings imported, {} already present.",
                            s.imported, s.already_present
                        ));
                        if s.rejected.is_empty() {
                            ui.label("No file was refused.");
                        } else {
                            ui.strong(format!("{} files refused:", s.rejected.len()));
                            egui::ScrollArea::vertical()
                                .max_height(240.0)
                                .show(ui, |ui| {
                                    for r in &s.rejected {
                                        ui.label(format!("{}: {}", r.file, r.reason));
                                    }
                                });
                        }
                    }
                    Err(e) => {
                        ui.colored_label(
                            ui.visuals().error_fg_color,
                            format!("The import failed: {e}"),
                        );
                    }
                }
                if ui.button("Close").clicked() {
                    actions.push(Action::DismissImportSummary);
                }
            });
    }
}

fn cautions_notice_ui(ctx: &egui::Context, actions: &mut Vec<Action>) {
    egui::Modal::new(egui::Id::unique("spallcast-cautions")).show(ctx, |ui| {
        ui.set_max_width(520.0);
        ui.heading(NOTICE_TITLE);
        ui.add_space(6.0);
        ui.label(
            "Spallcast's stage calls, forecasts and replacement dates are advice computed from vibration data. \
             They can be wrong, and they do not replace an analyst's judgement or your site's procedures.",
        );
        ui.add_space(4.0);
        ui.label(
            "Before any inspection or work on a machine, isolate it and lock it out (electrical, mechanical, \
             hydraulic and pneumatic energy, and stored energy in springs, flywheels and coasting rotors), and \
             prove it dead.",
        );
        ui.add_space(4.0);
        ui.label("Follow your local codes, permit-to-work rules and licensed practice: they prevail over this tool.");
        ui.add_space(4.0);
        ui.label("A quiet reading does not prove a machine is safe to approach.");
        ui.add_space(8.0);
        if ui.button(NOTICE_BUTTON).clicked() {
            actions.push(Action::AcknowledgeCautions);
        }
    });
}

/// The display-unit choices (saved between runs). Only drawing and readouts change; the store and the
/// exports keep g and mm/s.
fn units_menu(ui: &mut egui::Ui, units: &mut crate::settings::UnitPrefs) {
    use crate::settings::{AccelUnit, VelocityUnit};
    ui.menu_button(crate::settings::UNITS_MENU, |ui| {
        ui.label("Acceleration");
        ui.radio_value(&mut units.accel, AccelUnit::G, "g");
        ui.radio_value(&mut units.accel, AccelUnit::MetrePerS2, "m/s²");
        ui.separator();
        ui.label("Velocity");
        ui.radio_value(&mut units.velocity, VelocityUnit::MmPerS, "mm/s");
        ui.radio_value(&mut units.velocity, VelocityUnit::InPerS, "in/s");
        ui.separator();
        ui.weak("Display only: the database and the exports keep g and mm/s.");
    });
}
