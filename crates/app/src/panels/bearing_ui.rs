//! The right-hand panel beside the bearing views: the current stage call with its evidence sentences and
//! the forecast.

use eframe::egui;

use crate::actions::Action;
use crate::model::{Annotation, BearingHistory, PlantTree, ReadingId};
use crate::palette;

/// The label of the note text field.
pub const NOTE_FIELD_LABEL: &str = "New note:";

/// The button that stores a note.
pub const ADD_NOTE_BUTTON: &str = "Add note";

/// The button that makes the spectra overlay's readings the baseline.
pub const MARK_BASELINE_BUTTON: &str = "Use the overlaid months as the baseline";

/// The button that forgets the baseline marks.
pub const CLEAR_BASELINE_BUTTON: &str = "Back to the first readings";

/// Kinds of note offered, as stored.
const NOTE_KINDS: [&str; 3] = ["observation", "lubrication", "maintenance"];

/// The evidence panel, with the note being typed.
#[derive(Debug, Default)]
pub struct EvidencePanel {
    /// Text of the note being typed.
    pub note_text: String,
    /// Kind of the note being typed (index into the kinds).
    pub note_kind: usize,
}

/// What the evidence panel needs besides the bearing.
pub struct EvidenceContext<'a> {
    /// The plant tree (for the description).
    pub plant: Option<&'a PlantTree>,
    /// The readings overlaid in the spectra view (candidates for the baseline).
    pub overlaid: &'a [ReadingId],
    /// The day notes are dated by.
    pub today: chrono::NaiveDate,
}

impl EvidencePanel {
    /// Draws the panel.
    pub fn ui(
        &mut self,
        ui: &mut egui::Ui,
        history: &BearingHistory,
        cx: &EvidenceContext<'_>,
        actions: &mut Vec<Action>,
    ) {
        let plant = cx.plant;
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
                if let Some(installed) = history
                    .lives_started
                    .last()
                    .filter(|_| history.lives_started.len() > 1)
                {
                    ui.strong(format!("New bearing since {installed}: no call on it yet"));
                    ui.label("The calls of the bearing it replaced stay on the life trend.");
                } else {
                    ui.strong("no stage call stored");
                    ui.label(
                        "Trends show indicators only until the stage logic has run on this bearing.",
                    );
                }
            }
            Some(call) => {
                ui.strong(format!("Stage {}", call.stage));
                if let Some(loc) = &call.location {
                    ui.label(location_line(loc)).on_hover_text(&loc.reason);
                }
                ui.label(
                    egui::RichText::new(format!(
                        "called at point {} on {}; points read: {}",
                        call.point,
                        call.taken_at.format("%-d %b %Y"),
                        call.points.join(", ")
                    ))
                    .small(),
                );
                egui::ScrollArea::vertical()
                    .max_height(ui.available_height() - 80.0)
                    .show(ui, |ui| {
                        for sentence in &call.evidence {
                            ui.label(format!("• {sentence}"));
                        }
                        if call.evidence.is_empty() {
                            ui.label("The call has no evidence sentences.");
                        }
                        rules_ui(ui);
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
        self.baseline_ui(ui, history, cx, actions);
        self.notes_ui(ui, history, cx, actions);
        ui.separator();
        ui.label(
            egui::RichText::new(
                "Advice only. Isolate and lock out before any work on the machine.",
            )
            .small()
            .italics(),
        );
    }

    #[allow(
        clippy::unused_self,
        reason = "drawn beside the notes, which keep the panel's state"
    )]
    fn baseline_ui(
        &self,
        ui: &mut egui::Ui,
        history: &BearingHistory,
        cx: &EvidenceContext<'_>,
        actions: &mut Vec<Action>,
    ) {
        ui.separator();
        let marked: Vec<String> = history
            .readings
            .iter()
            .filter(|r| r.baseline)
            .map(|r| format!("{} {}", r.point, r.day_label()))
            .collect();
        if marked.is_empty() {
            ui.label("Baseline: each life's first readings");
        } else {
            ui.label(format!("Baseline marked: {}", marked.join(", ")));
        }
        ui.horizontal_wrapped(|ui| {
            if ui
                .add_enabled(!cx.overlaid.is_empty(), egui::Button::new(MARK_BASELINE_BUTTON))
                .on_hover_text(
                    "Readings you know were taken on a healthy bearing; the stage calls of this bearing are recomputed",
                )
                .clicked()
            {
                actions.push(Action::Annotate(Annotation::SetBaseline(cx.overlaid.to_vec())));
            }
            if !marked.is_empty() && ui.button(CLEAR_BASELINE_BUTTON).clicked() {
                actions.push(Action::Annotate(Annotation::SetBaseline(Vec::new())));
            }
        });
    }

    fn notes_ui(
        &mut self,
        ui: &mut egui::Ui,
        history: &BearingHistory,
        cx: &EvidenceContext<'_>,
        actions: &mut Vec<Action>,
    ) {
        ui.separator();
        ui.strong(format!("Notes ({})", history.notes.len()));
        for n in history.notes.iter().rev().take(6) {
            ui.label(format!("{} · {}: {}", n.on_day, n.kind, n.text));
        }
        ui.horizontal(|ui| {
            egui::ComboBox::from_id_salt("note-kind")
                .selected_text(NOTE_KINDS[self.note_kind % NOTE_KINDS.len()])
                .show_ui(ui, |ui| {
                    for (i, k) in NOTE_KINDS.iter().enumerate() {
                        ui.selectable_value(&mut self.note_kind, i, *k);
                    }
                });
            let label = ui.label(NOTE_FIELD_LABEL);
            ui.add(
                egui::TextEdit::singleline(&mut self.note_text)
                    .desired_width(f32::INFINITY)
                    .hint_text("what you saw, did or added"),
            )
            .labelled_by(label.id);
        });
        if ui
            .add_enabled(
                !self.note_text.trim().is_empty(),
                egui::Button::new(ADD_NOTE_BUTTON),
            )
            .clicked()
        {
            actions.push(Action::Annotate(Annotation::AddNote {
                on_day: cx.today,
                kind: NOTE_KINDS[self.note_kind % NOTE_KINDS.len()].to_owned(),
                text: self.note_text.trim().to_owned(),
                reading: None,
            }));
            self.note_text.clear();
        }
    }
}

/// The header of the thresholds list under the evidence.
pub const RULES_HEADER: &str = "Thresholds behind the calls";

/// Every threshold of the location, stage and life calls (the same table as `spallcast rules`), folded
/// under the evidence so an analyst can check what a sentence rests on.
fn rules_ui(ui: &mut egui::Ui) {
    use spallcast_analysis::location_rules::LOCATION_RULES;
    use spallcast_analysis::stage::rules::RULES;
    egui::CollapsingHeader::new(RULES_HEADER)
        .default_open(false)
        .show(ui, |ui| {
            for (title, rules) in [
                ("Band choice and fault location", &LOCATION_RULES[..]),
                ("Stage and remaining life", RULES),
            ] {
                ui.strong(title);
                for r in rules {
                    ui.label(format!("{} = {} {}", r.id, r.value, r.unit))
                        .on_hover_text(format!("{}\nChecked on: {}", r.meaning, r.source));
                    ui.label(egui::RichText::new(r.meaning).small());
                }
            }
        });
}

/// The bearing life's location in one line: "Fault location over this life: outer race (87 %)".
pub fn location_line(loc: &spallcast_analysis::stage::LifeLocation) -> String {
    use spallcast_analysis::stage::Location;
    match loc.location {
        Location::Unknown => {
            let named: Vec<&str> = loc
                .support
                .iter()
                .take(2)
                .map(|s| s.location.name())
                .collect();
            format!(
                "Fault location over this life: unclear (between {})",
                named.join(" and ")
            )
        }
        Location::None => "Fault location over this life: none named".to_owned(),
        l => format!(
            "Fault location over this life: {} ({:.0} %)",
            l.name(),
            100.0 * loc.confidence
        ),
    }
}
