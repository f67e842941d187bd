//! A typed path, for when the desktop has no file-chooser service.
//!
//! The native dialogs go through the desktop's portal service (xdg-desktop-portal) on the session bus.
//! Where neither runs (a bare X server, a remote session), the dialog cannot appear and returns at
//! once as if cancelled; the window then asks for the path itself, says why, and offers the recent
//! databases and route folders.

use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use eframe::egui;

use crate::actions::Action;

/// Set to any value to skip the native dialogs (tests, or a desktop whose portal misbehaves).
pub const NO_FILE_DIALOG_ENV: &str = "SPALLCAST_NO_FILE_DIALOG";

/// The label of the path field.
pub const PATH_FIELD_LABEL: &str = "Type the path:";

/// How many recent paths of each kind are kept.
pub const RECENT_KEPT: usize = 8;

/// A dialog that comes back faster than this without a choice did not open (nobody cancels that fast).
const DIALOG_FAILED_WITHIN: Duration = Duration::from_millis(400);

/// What the typed path is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PathPurpose {
    /// A database file to open.
    OpenDatabase,
    /// A route folder to import.
    ImportFolder,
    /// A file to save the plot to (a PNG and an SVG of that name).
    ExportPlot,
}

impl PathPurpose {
    /// Window title.
    pub fn title(self) -> &'static str {
        match self {
            Self::OpenDatabase => "Open a database by path",
            Self::ImportFolder => "Import a route folder by path",
            Self::ExportPlot => "Save the plot by path",
        }
    }

    /// The button that acts on the path.
    pub fn button(self) -> &'static str {
        match self {
            Self::OpenDatabase => "Open this database",
            Self::ImportFolder => "Import this folder",
            Self::ExportPlot => "Save PNG and SVG",
        }
    }
}

/// The open prompt.
#[derive(Debug, Clone)]
pub struct PathPrompt {
    /// What the path is for.
    pub purpose: PathPurpose,
    /// Why the prompt is shown (no dialog service, or the dialog did not open).
    pub reason: String,
    /// The path typed so far.
    pub text: String,
    /// Why the last path was refused, if it was.
    pub error: Option<String>,
}

/// Why no native dialog can be shown here, if that is known before trying.
pub fn dialog_unavailable(turned_off: bool) -> Option<String> {
    if turned_off {
        return Some("File dialogs are turned off for this window.".to_owned());
    }
    if std::env::var_os(NO_FILE_DIALOG_ENV).is_some() {
        return Some(format!(
            "File dialogs are turned off ({NO_FILE_DIALOG_ENV} is set)."
        ));
    }
    if std::env::var_os("DBUS_SESSION_BUS_ADDRESS").is_none() {
        return Some(
            "This desktop has no session bus, so no file-chooser service (xdg-desktop-portal) can \
             show a dialog."
                .to_owned(),
        );
    }
    None
}

/// What asking for a path gave.
#[derive(Debug, Clone)]
pub enum Asked {
    /// The dialog's choice.
    Chosen(PathBuf),
    /// The dialog cannot run here or did not open: show this prompt.
    Prompt(PathPrompt),
    /// The user cancelled the dialog.
    Cancelled,
}

/// Runs a native dialog; returns its choice, or the prompt to show instead when it cannot run or came
/// back at once without a choice.
pub fn ask(
    purpose: PathPurpose,
    start_text: &str,
    turned_off: bool,
    dialog: impl FnOnce() -> Option<PathBuf>,
) -> Asked {
    let prompt = |reason: String| PathPrompt {
        purpose,
        reason,
        text: start_text.to_owned(),
        error: None,
    };
    if let Some(reason) = dialog_unavailable(turned_off) {
        return Asked::Prompt(prompt(reason));
    }
    let started = Instant::now();
    match dialog() {
        Some(path) => Asked::Chosen(path),
        None if started.elapsed() < DIALOG_FAILED_WITHIN => Asked::Prompt(prompt(
            "The file dialog did not open (the desktop's file-chooser service, xdg-desktop-portal, \
             did not answer)."
                .to_owned(),
        )),
        None => Asked::Cancelled,
    }
}

/// Puts `path` first in `recent`, without duplicates, keeping [`RECENT_KEPT`].
pub fn remember(recent: &mut Vec<String>, path: &Path) {
    let text = path.display().to_string();
    recent.retain(|p| p != &text);
    recent.insert(0, text);
    recent.truncate(RECENT_KEPT);
}

/// Checks a typed path before it is used: a database must be a file, a route folder a folder with a
/// `route.csv`.
pub fn check(purpose: PathPurpose, text: &str) -> Result<PathBuf, String> {
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err("type a path first".to_owned());
    }
    let path = PathBuf::from(trimmed);
    match purpose {
        PathPurpose::OpenDatabase if path.is_dir() => Err(format!(
            "{} is a folder; give the database file",
            path.display()
        )),
        PathPurpose::OpenDatabase if !path.exists() => {
            Err(format!("{} does not exist", path.display()))
        }
        PathPurpose::ImportFolder if !path.is_dir() => {
            Err(format!("{} is not a folder", path.display()))
        }
        PathPurpose::ImportFolder if !path.join("route.csv").is_file() => Err(format!(
            "{} has no route.csv (the route manifest)",
            path.display()
        )),
        PathPurpose::ExportPlot => {
            let (png, svg) = crate::plot_export::export_paths(&path);
            crate::plot_export::check_target(&path)?;
            crate::plot_export::check_target(&png)?;
            crate::plot_export::check_target(&svg)?;
            Ok(path)
        }
        _ => Ok(path),
    }
}

/// Draws the prompt; returns the action to take and whether the prompt stays open.
pub fn prompt_ui(
    ctx: &egui::Context,
    prompt: &mut PathPrompt,
    recent: &[String],
) -> (Option<Action>, bool) {
    let mut action = None;
    let mut keep = true;
    egui::Window::new(prompt.purpose.title())
        .pivot(egui::Align2::CENTER_CENTER)
        .default_pos(ctx.content_rect().center())
        .collapsible(false)
        .resizable(true)
        .default_width(520.0)
        .show(ctx, |ui| {
            if !prompt.reason.is_empty() {
                ui.label(&prompt.reason);
            }
            let label = ui.label(PATH_FIELD_LABEL);
            let field = ui
                .add(
                    egui::TextEdit::singleline(&mut prompt.text)
                        .desired_width(f32::INFINITY)
                        .hint_text("/path/to/…"),
                )
                .labelled_by(label.id);
            let entered = field.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
            if let Some(e) = &prompt.error {
                ui.colored_label(crate::plan_view::WARNING_TEXT, e);
            }
            if !recent.is_empty() {
                ui.separator();
                ui.label("Recent:");
                for r in recent {
                    if ui.small_button(r).clicked() {
                        prompt.text.clone_from(r);
                    }
                }
            }
            ui.separator();
            ui.horizontal(|ui| {
                if ui.button(prompt.purpose.button()).clicked() || entered {
                    match check(prompt.purpose, &prompt.text) {
                        Ok(path) => {
                            action = Some(match prompt.purpose {
                                PathPurpose::OpenDatabase => Action::OpenDatabase(path),
                                PathPurpose::ImportFolder => Action::ImportFolder(path),
                                PathPurpose::ExportPlot => Action::ExportPlot(path),
                            });
                            keep = false;
                        }
                        Err(e) => prompt.error = Some(e),
                    }
                }
                if ui.button("Cancel").clicked() {
                    keep = false;
                }
            });
        });
    (action, keep)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn recent_paths_are_deduplicated_newest_first_and_capped() {
        let mut recent = Vec::new();
        for i in 0..12 {
            remember(&mut recent, Path::new(&format!("/d/{i}")));
        }
        remember(&mut recent, Path::new("/d/5"));
        assert_eq!(recent.len(), RECENT_KEPT);
        assert_eq!(recent[0], "/d/5");
        assert_eq!(recent.iter().filter(|p| *p == "/d/5").count(), 1);
    }

    #[test]
    fn typed_paths_are_checked_for_what_they_are_for() {
        let dir = tempfile::tempdir().unwrap();
        assert!(check(PathPurpose::OpenDatabase, " ").is_err());
        let e = check(PathPurpose::OpenDatabase, &dir.path().display().to_string()).unwrap_err();
        assert!(e.contains("is a folder"), "{e}");
        let e = check(PathPurpose::ImportFolder, &dir.path().display().to_string()).unwrap_err();
        assert!(e.contains("no route.csv"), "{e}");
        std::fs::write(dir.path().join("route.csv"), "x").unwrap();
        assert!(check(PathPurpose::ImportFolder, &dir.path().display().to_string()).is_ok());
        let db = dir.path().join("p.sqlite");
        assert!(check(PathPurpose::OpenDatabase, &db.display().to_string()).is_err());
        std::fs::write(&db, "").unwrap();
        assert!(check(PathPurpose::OpenDatabase, &db.display().to_string()).is_ok());
    }

    #[test]
    fn a_dialog_that_returns_at_once_without_a_choice_becomes_a_prompt() {
        let Asked::Prompt(prompt) = ask(PathPurpose::OpenDatabase, "", false, || None) else {
            panic!("a dialog that came back at once must turn into the typed-path prompt");
        };
        assert!(!prompt.reason.is_empty(), "the prompt says why");
        let Asked::Prompt(prompt) = ask(PathPurpose::ImportFolder, "/r", true, || {
            panic!("the dialog must not run when turned off")
        }) else {
            panic!("turned off: the prompt");
        };
        assert_eq!(prompt.text, "/r");
    }
}
