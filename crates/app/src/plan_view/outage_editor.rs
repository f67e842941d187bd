//! The add/edit outage form. Outages also live in the plant file's `[[outages]]` tables; the store keeps
//! the two in step when a plant file is applied or written.

use eframe::egui;
use spallcast_model::OutageInput;
use spallcast_plan::Outage;
use spallcast_plan::source::PlanChange;

use super::WARNING_TEXT;

/// Text fields of the outage form; `editing` holds the id of the outage being changed.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct OutageEditor {
    /// Outage being edited, `None` for a new one.
    pub editing: Option<i64>,
    /// Name.
    pub name: String,
    /// First day, `YYYY-MM-DD`.
    pub start: String,
    /// Last day, `YYYY-MM-DD`.
    pub end: String,
    /// Areas taken down, comma-separated.
    pub areas: String,
    /// Extra machines taken down, comma-separated machine ids.
    pub machines: String,
}

fn split_list(s: &str) -> Vec<String> {
    s.split(',')
        .map(str::trim)
        .filter(|t| !t.is_empty())
        .map(str::to_owned)
        .collect()
}

impl OutageEditor {
    /// Fills the form from an outage.
    pub fn load(&mut self, o: &Outage) {
        *self = Self {
            editing: Some(o.id),
            name: o.name.clone(),
            start: o.start.to_string(),
            end: o.end.to_string(),
            areas: o.areas.join(", "),
            machines: o.machines.join(", "),
        };
    }

    /// The outage the form describes, or what is wrong with it, in words.
    pub fn input(&self) -> Result<OutageInput, String> {
        let name = self.name.trim();
        if name.is_empty() {
            return Err("give the outage a name".to_owned());
        }
        let start = self
            .start
            .trim()
            .parse()
            .map_err(|_| "first day: write the date as YYYY-MM-DD".to_owned())?;
        let end = self
            .end
            .trim()
            .parse()
            .map_err(|_| "last day: write the date as YYYY-MM-DD".to_owned())?;
        if end < start {
            return Err("the last day is before the first day".to_owned());
        }
        let (areas, machines) = (split_list(&self.areas), split_list(&self.machines));
        if areas.is_empty() && machines.is_empty() {
            return Err("list at least one area or machine that the outage takes down".to_owned());
        }
        Ok(OutageInput {
            name: name.to_owned(),
            start,
            end,
            areas,
            machines,
        })
    }

    /// Draws the form; pushes an add, update or delete when a button is pressed.
    pub fn ui(&mut self, ui: &mut egui::Ui, changes: &mut Vec<PlanChange>) {
        ui.heading(if self.editing.is_some() {
            "Edit outage"
        } else {
            "New outage"
        });
        egui::Grid::new("outage_form")
            .num_columns(2)
            .show(ui, |ui| {
                for (label, value, hint) in [
                    ("Name", &mut self.name, "e.g. Spring intake shutdown"),
                    ("First day", &mut self.start, "YYYY-MM-DD"),
                    ("Last day", &mut self.end, "YYYY-MM-DD"),
                    ("Areas down", &mut self.areas, "comma-separated area names"),
                    (
                        "Machines down",
                        &mut self.machines,
                        "comma-separated machine ids",
                    ),
                ] {
                    ui.label(label);
                    ui.add(
                        egui::TextEdit::singleline(value)
                            .hint_text(hint)
                            .desired_width(220.0),
                    );
                    ui.end_row();
                }
            });
        let parsed = self.input();
        ui.horizontal(|ui| {
            let ok = parsed.is_ok();
            match self.editing {
                None => {
                    if ui
                        .add_enabled(ok, egui::Button::new("Add outage"))
                        .clicked()
                        && let Ok(input) = &parsed
                    {
                        changes.push(PlanChange::AddOutage(input.clone()));
                        *self = Self::default();
                    }
                }
                Some(id) => {
                    if ui
                        .add_enabled(ok, egui::Button::new("Save outage"))
                        .clicked()
                        && let Ok(input) = &parsed
                    {
                        changes.push(PlanChange::UpdateOutage {
                            id,
                            outage: input.clone(),
                        });
                        *self = Self::default();
                    }
                    if ui
                        .button("Delete outage")
                        .on_hover_text("Also removes its planned replacements")
                        .clicked()
                    {
                        changes.push(PlanChange::DeleteOutage { id });
                        *self = Self::default();
                    }
                }
            }
            if ui.button("Clear form").clicked() {
                *self = Self::default();
            }
        });
        if let Err(why) = &parsed
            && *self != Self::default()
        {
            ui.label(egui::RichText::new(why).color(WARNING_TEXT));
        }
    }
}
