//! The plant hierarchy: areas → machines → bearing positions, each bearing with its stage badge.

use eframe::egui;

use crate::actions::Action;
use crate::model::{BearingKey, PlantTree};
use crate::palette;

/// The label of the plant tree's filter field.
pub const FIND_LABEL: &str = "Find:";

/// The left-hand plant panel.
#[derive(Debug, Default)]
pub struct PlantTreePanel {
    /// Text filter on machine ids and names, positions and point ids.
    pub filter: String,
}

impl PlantTreePanel {
    /// Draws the tree; a click on a bearing asks to select it.
    pub fn ui(
        &mut self,
        ui: &mut egui::Ui,
        plant: Option<&PlantTree>,
        selected: Option<&BearingKey>,
        actions: &mut Vec<Action>,
    ) {
        ui.heading("Plant");
        let Some(plant) = plant else {
            ui.label("No plant loaded.");
            return;
        };
        if !plant.site.is_empty() {
            ui.label(egui::RichText::new(&plant.site).italics());
        }
        ui.horizontal(|ui| {
            let label = ui.label(FIND_LABEL);
            ui.add(
                egui::TextEdit::singleline(&mut self.filter)
                    .desired_width(120.0)
                    .hint_text("machine, position or point"),
            )
            .labelled_by(label.id);
        });
        ui.separator();
        let needle = self.filter.trim().to_lowercase();
        let mut shown = 0;
        egui::ScrollArea::vertical()
            .auto_shrink([false, false])
            .show(ui, |ui| {
                for area in &plant.areas {
                    let machines: Vec<_> = area
                        .machines
                        .iter()
                        .filter(|m| {
                            needle.is_empty()
                                || m.id.to_lowercase().contains(&needle)
                                || m.name.to_lowercase().contains(&needle)
                                || m.bearings.iter().any(|b| {
                                    b.label().to_lowercase().contains(&needle)
                                        || b.points
                                            .iter()
                                            .any(|p| p.to_lowercase().contains(&needle))
                                })
                        })
                        .collect();
                    if machines.is_empty() {
                        continue;
                    }
                    shown += machines.len();
                    egui::CollapsingHeader::new(egui::RichText::new(&area.name).strong())
                        .id_salt(("area", &area.name))
                        .default_open(true)
                        .show(ui, |ui| {
                            for machine in machines {
                                egui::CollapsingHeader::new(format!(
                                    "{}  {}",
                                    machine.id, machine.name
                                ))
                                .id_salt(("machine", &machine.id))
                                .default_open(true)
                                .show(ui, |ui| {
                                    for bearing in &machine.bearings {
                                        ui.horizontal(|ui| {
                                            palette::stage_badge_ui(ui, bearing.stage);
                                            let is_selected = selected == Some(&bearing.key);
                                            if ui
                                                .selectable_label(is_selected, bearing.label())
                                                .clicked()
                                            {
                                                actions.push(Action::SelectBearing(
                                                    bearing.key.clone(),
                                                ));
                                            }
                                        });
                                    }
                                });
                            }
                        });
                }
                if shown == 0 {
                    ui.label(format!(
                        "No machine, position or point matches \"{}\".",
                        self.filter.trim()
                    ));
                }
            });
    }
}
