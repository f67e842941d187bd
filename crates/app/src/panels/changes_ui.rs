//! "Since last route": bearings whose stage or findings changed since the previous route day, bearings
//! due soonest, and files the imports refused.

use eframe::egui;

use crate::actions::Action;
use crate::model::{Attention, PlantTree};
use crate::palette;
use crate::settings::View;

/// The attention view.
#[derive(Debug, Default)]
pub struct ChangesPanel;

impl ChangesPanel {
    #[allow(
        clippy::unused_self,
        reason = "one struct per panel; this one keeps no state yet"
    )]
    /// Draws the view.
    pub fn ui(
        &mut self,
        ui: &mut egui::Ui,
        attention: Option<&Attention>,
        plant: Option<&PlantTree>,
        today: chrono::NaiveDate,
        actions: &mut Vec<Action>,
    ) {
        let Some(att) = attention else {
            ui.label("Loading…");
            return;
        };
        egui::ScrollArea::vertical()
            .auto_shrink([false, false])
            .show(ui, |ui| {
                let days = match (att.latest_day, att.previous_day) {
                    (Some(l), Some(p)) => format!("Route day {l}, compared with {p}"),
                    (Some(l), None) => {
                        format!("Route day {l} (the first: nothing to compare with)")
                    }
                    _ => "No readings imported yet. Use \"Import route folder…\" above.".to_owned(),
                };
                ui.heading(days);
                ui.add_space(6.0);
                ui.strong(format!(
                    "Changed since the previous route day ({})",
                    att.changed.len()
                ));
                if att.changed.is_empty() {
                    ui.label("No bearing changed stage or findings.");
                }
                egui::Grid::new("changed-grid")
                    .striped(true)
                    .num_columns(4)
                    .show(ui, |ui| {
                        for c in &att.changed {
                            ui.horizontal(|ui| {
                                palette::stage_badge_ui(ui, c.stage_before);
                                ui.label("to");
                                palette::stage_badge_ui(ui, c.stage_now);
                            });
                            if ui.link(c.key.display()).clicked() {
                                actions.push(Action::OpenBearingView(c.key.clone(), View::Spectra));
                            }
                            ui.label(description(plant, &c.key));
                            ui.label(&c.what);
                            ui.end_row();
                        }
                    });
                ui.add_space(10.0);
                ui.strong(format!("Due soonest ({})", att.due.len()));
                if !att.forecasts_stored {
                    ui.label("No forecasts stored yet.");
                }
                egui::Grid::new("due-grid")
                    .striped(true)
                    .num_columns(4)
                    .show(ui, |ui| {
                        for d in att.due.iter().take(20) {
                            palette::stage_badge_ui(ui, d.stage);
                            if ui.link(d.key.display()).clicked() {
                                actions.push(Action::OpenBearingView(d.key.clone(), View::Trend));
                            }
                            ui.label(description(plant, &d.key));
                            if d.replace_by < today {
                                ui.label(
                                    egui::RichText::new(format!(
                                        "overdue: replace by {}",
                                        d.replace_by
                                    ))
                                    .color(crate::plan_view::WARNING_TEXT),
                                );
                            } else {
                                ui.label(format!("replace by {}", d.replace_by));
                            }
                            ui.end_row();
                        }
                    });
                if !att.not_collected.is_empty() {
                    ui.add_space(10.0);
                    ui.strong(format!(
                        "Not collected on the last route ({})",
                        att.not_collected.len()
                    ));
                    ui.label(format!(
                        "Read on the route day before, not on the latest: {}",
                        att.not_collected.join(", ")
                    ));
                }
                ui.add_space(10.0);
                ui.strong(format!("Rejected files ({})", att.rejected.len()));
                if att.rejected.is_empty() {
                    ui.label("No file was refused.");
                }
                egui::Grid::new("rejected-grid")
                    .striped(true)
                    .num_columns(2)
                    .show(ui, |ui| {
                        for r in &att.rejected {
                            ui.label(&r.file);
                            ui.label(&r.reason);
                            ui.end_row();
                        }
                    });
            });
    }
}

fn description(plant: Option<&PlantTree>, key: &crate::model::BearingKey) -> String {
    plant
        .and_then(|p| p.bearing(key))
        .map(|b| b.description.clone())
        .unwrap_or_default()
}
