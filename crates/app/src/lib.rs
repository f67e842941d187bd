//! The Spallcast workstation window (eframe with the glow backend, `egui_plot`).
//!
//! Views are thin: they read view-model types ([`model`]) and push [`actions::Action`]s; the app applies
//! the actions after layout. Everything slow (opening the database, loading a bearing, computing spectra,
//! importing a route folder) runs on named worker threads ([`worker`]) that report through channels and
//! wake the window with `request_repaint`. Spectra are computed once per reading by the analysis crate and
//! cached; plots draw them decimated to screen columns (min/max per column, [`decimate`]).
//!
//! Views: "Since last route" (what changed since the previous route day, what is due, rejected files),
//! "Spectra", "Life trend" and "Waveform" for the selected bearing, and [`settings::View::OutagePlan`],
//! the outage-plan calendar (`plan_view`: outages, bearings needing a slot, plan changes).
//!
//! The window's calls are advisory: a caution line is always shown in the status bar and a notice on
//! first run. Isolate and lock out machines before work; local codes and licensed practice prevail.
#![forbid(unsafe_code)]
#![warn(missing_docs)]

pub mod actions;
mod app;
mod app_export;
mod app_ui;
pub mod assets;
pub mod cache;
pub mod decimate;
pub mod model;
pub mod palette;
pub mod panels;
pub mod path_prompt;
pub mod plan_view;
pub mod plot_export;
mod replies;
mod run;
pub mod screenshot;
pub mod settings;
pub mod shortcuts;
pub mod source;
pub mod store_backend;
pub mod worker;

use std::path::Path;
use std::sync::Arc;

pub use app::{SpallcastApp, StartOptions, StatusMessage};
pub use app_ui::{CAUTION_LINE, NOTICE_BUTTON, NOTICE_TITLE};
pub use run::{SCREENSHOT_ENV, START_VIEW_ENV, check_display, options_from_env, run_window_with};
pub use settings::View;
pub use store_backend::StoreBackend;

/// Opens the Spallcast window on the database at `db_path` (which must exist) and returns when the
/// window is closed.
///
/// Set `SPALLCAST_START_VIEW` (changes, spectra, trend, waveform, plan) to choose the first view and
/// `SPALLCAST_SCREENSHOT=file.png` to save a screenshot once the data has loaded and close.
///
/// # Errors
/// No display (the message points to `spallcast --help` and the command-line subcommands), the window
/// could not be created, or a bad environment value.
pub fn run_window(db_path: &Path) -> anyhow::Result<()> {
    run_window_with(db_path, Arc::new(default_backend()))
}

/// The backend `run_window` uses: the store, the analysis crate, and the pipeline's use cases with its
/// reading analyzer: a route import is followed by the stage assessment (so new readings get their
/// stage calls and forecasts before the window reloads), and a database is brought up to date as it is
/// opened (readings of an older analysis version re-analysed, missing or stale stage calls completed),
/// with progress in the status line.
pub fn default_backend() -> StoreBackend {
    use spallcast_analysis::stage::StageOptions;
    use spallcast_pipeline::update::{Progress, bring_up_to_date, import_and_assess};
    StoreBackend::new(Arc::new(
        |db: &Path, folder: &Path, progress: &mut dyn FnMut(model::ImportProgress)| {
            let mut store = spallcast_store::Store::open(db)?;
            let outcome = import_and_assess(
                &mut store,
                &[folder.to_path_buf()],
                &spallcast_pipeline::SpallcastAnalyzer,
                &StageOptions::default(),
                &mut |p| {
                    if let Progress::Importing { done, total, .. } = p {
                        progress(model::ImportProgress { done, total });
                    }
                },
            )
            .map_err(|e| anyhow::anyhow!(e.full_message()))?;
            let mut summary = outcome
                .summaries
                .first()
                .map(store_backend::summary_view)
                .unwrap_or_default();
            summary.assessment_failed = outcome.assessment.err().map(|e| e.full_message());
            Ok(summary)
        },
    ))
    .with_updater(Arc::new(
        |store: &mut spallcast_store::Store, progress: &mut dyn FnMut(model::UpdateProgress)| {
            bring_up_to_date(
                store,
                &spallcast_pipeline::SpallcastAnalyzer,
                &StageOptions::default(),
                &mut |p| progress(update_progress(p)),
            )
            .map_err(|e| anyhow::anyhow!(e.full_message()))?;
            Ok(())
        },
    ))
}

/// The window's words for a step of bringing a database up to date.
fn update_progress(p: spallcast_pipeline::update::Progress) -> model::UpdateProgress {
    use spallcast_pipeline::update::Progress;
    let (what, done, total) = match p {
        Progress::Importing { done, total, .. } => ("importing", done, total),
        Progress::Reanalysing { done, total } => (
            "re-analysing readings from an older analysis version",
            done,
            total,
        ),
        Progress::Assessing { done, total } => ("completing stage calls", done, total),
    };
    model::UpdateProgress {
        what: what.to_owned(),
        done,
        total,
    }
}
