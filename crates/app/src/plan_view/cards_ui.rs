//! The pieces of the calendar: an outage's header, a planned replacement, a bearing needing a slot.

use eframe::egui;
use spallcast_plan::source::PlanChange;
use spallcast_plan::{BearingNeed, Outage, PlanBoard, PlanEntry, PlanStatus, SlotWarning};

use super::{NEEDS_HEADING, OutageEditor, PlanDrag, WARNING_TEXT};
use crate::palette::stage_badge_ui;

/// Name, dates and scope of an outage, with a button that loads it into the editor.
pub(super) fn outage_header_ui(ui: &mut egui::Ui, outage: &Outage, editor: &mut OutageEditor) {
    ui.horizontal_wrapped(|ui| {
        ui.strong(&outage.name);
        ui.label(format!(
            "{} to {} ({} days)",
            outage.start,
            outage.end,
            outage.days()
        ));
        if ui
            .small_button("Edit")
            .on_hover_text("Load this outage into the outage form")
            .clicked()
        {
            editor.load(outage);
        }
    });
    let mut down = Vec::new();
    if !outage.areas.is_empty() {
        down.push(format!("areas {}", outage.areas.join(", ")));
    }
    if !outage.machines.is_empty() {
        down.push(format!("machines {}", outage.machines.join(", ")));
    }
    let down = if down.is_empty() {
        "nothing listed".to_owned()
    } else {
        down.join("; ")
    };
    ui.weak(format!("Down: {down}"));
}

fn warnings_ui(ui: &mut egui::Ui, warnings: &[SlotWarning]) {
    for w in warnings {
        ui.label(egui::RichText::new(format!("Warning: {w}")).color(WARNING_TEXT));
    }
}

/// A bearing's label, also the text a test finds it by: "machine position".
pub fn bearing_label(life: &spallcast_plan::BearingLife) -> String {
    life.label()
}

/// One planned (or done) replacement in an outage.
pub(super) fn task_ui(
    ui: &mut egui::Ui,
    board: &PlanBoard,
    entry: &PlanEntry,
    done_form: &mut Option<(i64, String, String)>,
    changes: &mut Vec<PlanChange>,
) {
    ui.horizontal_wrapped(|ui| {
        stage_badge_ui(ui, entry.forecast.as_ref().map(|f| f.stage));
        if entry.status == PlanStatus::Planned {
            // A planned bearing can be dragged on to another outage.
            let id = egui::Id::unique(("plan_task", entry.id));
            ui.dnd_drag_source(
                id,
                PlanDrag {
                    life_id: entry.life.life_id,
                },
                |ui| {
                    ui.label(bearing_label(&entry.life));
                },
            );
        } else {
            ui.label(bearing_label(&entry.life));
        }
        ui.weak(format!(
            "{}, {}, {}",
            entry.life.machine_name, entry.life.bearing_type, entry.life.lubrication
        ));
        if let Some(f) = &entry.forecast {
            ui.label(format!("replace by {}", f.replace_by));
        }
        if entry.status == PlanStatus::Done {
            ui.label("done");
            return;
        }
        if ui
            .small_button("Remove")
            .on_hover_text("Take it out of this outage")
            .clicked()
        {
            changes.push(PlanChange::Unplan { entry_id: entry.id });
        }
        if ui
            .small_button("Cancel")
            .on_hover_text("Call the replacement off, keeping the record")
            .clicked()
        {
            changes.push(PlanChange::Cancel {
                entry_id: entry.id,
                note: "cancelled in the plan view".to_owned(),
            });
        }
        if ui.small_button("Mark done…").clicked() {
            *done_form = Some((entry.id, board.today.to_string(), String::new()));
        }
    });
    warnings_ui(ui, &board.entry_warnings(entry));
    if let Some((id, date, found)) = done_form.as_mut().filter(|f| f.0 == entry.id) {
        let id = *id;
        let mut close = false;
        ui.horizontal_wrapped(|ui| {
            let label = ui.label("Replaced on");
            ui.add(egui::TextEdit::singleline(date).desired_width(90.0))
                .labelled_by(label.id);
            let label = ui.label("Found");
            ui.add(
                egui::TextEdit::singleline(found)
                    .desired_width(160.0)
                    .hint_text("e.g. outer race spall"),
            )
            .labelled_by(label.id);
            match date.trim().parse() {
                Ok(replaced_on) => {
                    if ui.button("Confirm replacement").clicked() {
                        changes.push(PlanChange::MarkDone {
                            entry_id: id,
                            replaced_on,
                            found: found.trim().to_owned(),
                        });
                        close = true;
                    }
                }
                Err(_) => {
                    ui.label(egui::RichText::new("date as YYYY-MM-DD").color(WARNING_TEXT));
                }
            }
            if ui.button("Close").clicked() {
                close = true;
            }
        });
        ui.label(
            egui::RichText::new(super::LATE_STAGE_CAUTION)
                .small()
                .color(WARNING_TEXT),
        );
        if close {
            *done_form = None;
        }
    }
    ui.add_space(2.0);
}

/// The bearings without a slot, soonest replace-by first, each draggable and with its suggestion.
pub(super) fn needs_ui(ui: &mut egui::Ui, board: &PlanBoard, changes: &mut Vec<PlanChange>) {
    ui.heading(NEEDS_HEADING);
    let needs = board.open_needs();
    if needs.is_empty() {
        ui.label("Every bearing with a forecast has a slot.");
    }
    for need in needs {
        need_ui(ui, board, need, changes);
    }
}

fn need_ui(
    ui: &mut egui::Ui,
    board: &PlanBoard,
    need: &BearingNeed,
    changes: &mut Vec<PlanChange>,
) {
    egui::Frame::group(ui.style()).inner_margin(4.0).show(ui, |ui| {
        ui.set_min_width(ui.available_width());
        ui.horizontal_wrapped(|ui| {
            stage_badge_ui(ui, Some(need.forecast.stage));
            let id = egui::Id::unique(("plan_need", need.life.life_id));
            ui.dnd_drag_source(id, PlanDrag { life_id: need.life.life_id }, |ui| {
                ui.label(egui::RichText::new(bearing_label(&need.life)).strong());
            })
            .response
            .on_hover_text("Drag onto an outage to plan its replacement");
            ui.label(format!("replace by {}, at risk from {}", need.forecast.replace_by, need.forecast.risk_from));
        });
        ui.weak(format!(
            "{} ({}), {}, {} lubricated",
            need.life.machine_name, need.life.area, need.life.bearing_type, need.life.lubrication
        ));
        if !need.forecast.evidence.is_empty() {
            ui.weak(&need.forecast.evidence);
        }
        if need.forecast.stage >= 4 {
            ui.label(
                egui::RichText::new(format!("Replace now. {}", super::LATE_STAGE_CAUTION))
                    .small()
                    .color(WARNING_TEXT),
            );
        }
        if let Some(outage) = board.suggestion(need) {
            ui.horizontal_wrapped(|ui| {
                ui.label(format!("Suggested: {}", outage.name));
                let accept = ui
                    .button(format!("Plan {} in {}", bearing_label(&need.life), outage.name))
                    .on_hover_text("The last outage that takes this machine down before the replace-by date");
                if accept.clicked() {
                    changes.push(PlanChange::Assign { life_id: need.life.life_id, outage_id: outage.id });
                }
            });
        } else {
            warnings_ui(ui, &board.open_need_warnings(need));
            // Overdue or nothing in time: the next outage that takes the machine down, late.
            if let Some(outage) = board.late_offer(need) {
                ui.horizontal_wrapped(|ui| {
                    ui.label(format!("Next outage that takes it down: {} (starts {})", outage.name, outage.start));
                    let accept = ui
                        .button(format!("Plan {} in {} (late)", bearing_label(&need.life), outage.name))
                        .on_hover_text("After the replace-by date: an unplanned stop sooner is safer");
                    if accept.clicked() {
                        changes.push(PlanChange::Assign { life_id: need.life.life_id, outage_id: outage.id });
                    }
                });
            }
        }
    });
}
