//! The right-hand panel beside the bearing views: the current stage call with its evidence sentences and
//! the forecast.

use eframe::egui;

use crate::model::{BearingHistory, PlantTree};
use crate::palette;

/// The evidence panel.
#[derive(Debug, Default)]
pub struct EvidencePanel;

impl EvidencePanel {
    #[allow(
        clippy::unused_self,
        reason = "one struct per panel; this one keeps no state yet"
    )]
    /// Draws the panel.
    pub fn ui(&mut self, ui: &mut egui::Ui, history: &BearingHistory, plant: Option<&PlantTree>) {
        let node = plant.and_then(|p| p.bearing(&history.key));
        ui.horizontal(|ui| {
            palette::stage_badge_ui(ui, history.stage_call.as_ref().map(|c| c.stage));
            ui.heading(history.key.display());
        });
        if let Some(n) = node {
            ui.label(&n.description);
        }
        ui.label(format!(
            "{} lubrication · {} readings · ISO 20816-3 group {}, {} support",
            history.lubrication,
            history.readings.len(),
            history.iso_group.number(),
            history.iso_support,
        ));
        if let Some(f) = history.factors {
            ui.label(
                egui::RichText::new(format!(
                    "factors (orders): FTF {:.3}  BSF {:.3}  BPFO {:.3}  BPFI {:.3}",
                    f.ftf, f.bsf, f.bpfo, f.bpfi
                ))
                .small(),
            );
        }
        ui.separator();
        match &history.stage_call {
            None => {
                ui.strong("no stage call stored");
                ui.label(
                    "Trends show indicators only until the stage logic has run on this bearing.",
                );
            }
            Some(call) => {
                ui.strong(format!("Stage {} (latest call)", call.stage));
                egui::ScrollArea::vertical()
                    .max_height(ui.available_height() - 80.0)
                    .show(ui, |ui| {
                        for sentence in &call.evidence {
                            ui.label(format!("• {sentence}"));
                        }
                        if call.evidence.is_empty() {
                            ui.label("The call has no evidence sentences.");
                        }
                    });
            }
        }
        let late = history.stage_call.as_ref().is_some_and(|c| c.stage >= 4);
        if late {
            // Stage 4: no interval to wait through (it would run from a date to itself).
            ui.separator();
            ui.strong("Replace now");
            ui.label(
                egui::RichText::new(crate::plan_view::LATE_STAGE_CAUTION)
                    .color(crate::plan_view::WARNING_TEXT),
            );
        } else if let Some(f) = &history.forecast {
            ui.separator();
            ui.strong(format!("Replace by {}", f.replace_by));
            if f.earliest == f.latest {
                ui.label(format!("on {}", f.earliest));
            } else {
                ui.label(format!("interval {} to {}", f.earliest, f.latest));
            }
        }
        ui.separator();
        ui.label(
            egui::RichText::new(
                "Advice only. Isolate and lock out before any work on the machine.",
            )
            .small()
            .italics(),
        );
    }
}
