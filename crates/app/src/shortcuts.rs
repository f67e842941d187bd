//! Keyboard shortcuts: Alt+↓ / Alt+↑ the next / previous bearing in plant-tree order, Alt+→ / Alt+← the
//! next / previous month in the spectra overlay. Ignored while a text field has the keyboard.

use eframe::egui;

use crate::actions::Action;
use crate::model::{BearingKey, PlantTree};

/// The shortcuts, as the top bar's hover text shows them.
pub const SHORTCUTS_TEXT: &str =
    "Alt+↓ / Alt+↑: next / previous bearing · Alt+→ / Alt+←: next / previous month (spectra)";

/// The bearing `step` places after (or before, when negative) `current` in tree order; the first
/// bearing when nothing is selected. Stops at the ends.
pub fn step_bearing(
    plant: &PlantTree,
    current: Option<&BearingKey>,
    step: i32,
) -> Option<BearingKey> {
    let keys: Vec<&BearingKey> = plant.bearings().map(|b| &b.key).collect();
    let Some(current) = current else {
        return keys.first().map(|k| (*k).clone());
    };
    let at = keys.iter().position(|k| *k == current)?;
    let next = if step > 0 {
        at.checked_add(1)
    } else {
        at.checked_sub(1)
    }?;
    keys.get(next).map(|k| (*k).clone())
}

/// Reads this frame's shortcut keys.
pub fn read(
    ctx: &egui::Context,
    plant: Option<&PlantTree>,
    selected: Option<&BearingKey>,
) -> Vec<Action> {
    if ctx.egui_wants_keyboard_input() {
        return Vec::new();
    }
    let mut actions = Vec::new();
    ctx.input_mut(|i| {
        let alt = egui::Modifiers::ALT;
        for (key, step) in [(egui::Key::ArrowDown, 1), (egui::Key::ArrowUp, -1)] {
            if i.consume_key(alt, key)
                && let Some(next) = plant.and_then(|p| step_bearing(p, selected, step))
            {
                actions.push(Action::SelectBearing(next));
            }
        }
        for (key, step) in [(egui::Key::ArrowRight, 1), (egui::Key::ArrowLeft, -1)] {
            if i.consume_key(alt, key) {
                actions.push(Action::StepMonth(step));
            }
        }
    });
    actions
}
