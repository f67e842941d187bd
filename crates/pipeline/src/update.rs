//! The use cases that bring a plant database up to date, with one error policy for every caller (the
//! command line, the window and the demo plant):
//!
//! - [`bring_up_to_date`], run when a database is opened: readings analysed by an older analyzer
//!   version are analysed again, then stage calls that are missing (an interrupted import), from an
//!   older stage logic, or older than their reading's analysis are assessed again, one transaction per
//!   bearing position. A read-only database is left as it is and the report says so.
//! - [`import_and_assess`]: route folders imported with the store's all-or-nothing-per-reading import,
//!   then [`bring_up_to_date`]. A folder that cannot be imported is an error (readings of earlier
//!   folders stay, each committed). A failed assessment does **not** undo the import: it comes back in
//!   [`ImportOutcome::assessment`] for the caller to show, and the next opening of the database
//!   completes the calls.

use std::path::PathBuf;

use serde::Serialize;
use spallcast_analysis::stage::StageOptions;
use spallcast_store::{ImportSummary, ReadingAnalyzer, Store};

use crate::assess::{CompleteReport, complete_stage_calls};
use crate::error::{PipelineError, Result};

/// Where an update or import stands, for a progress display.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Progress {
    /// Importing folder `folder` of `folders`: `done` of `total` files.
    Importing {
        /// Folder index (0-based).
        folder: usize,
        /// Folders in this import.
        folders: usize,
        /// Files done in this folder.
        done: usize,
        /// Files in this folder.
        total: usize,
    },
    /// Re-analysing readings from an older analysis version: `done` of `total`.
    Reanalysing {
        /// Readings done.
        done: usize,
        /// Readings to re-analyse.
        total: usize,
    },
    /// Assessing bearing positions whose stage calls are missing or stale: `done` of `total`.
    Assessing {
        /// Positions done.
        done: usize,
        /// Positions to assess.
        total: usize,
    },
}

/// What [`bring_up_to_date`] did.
#[derive(Debug, Clone, Copy, Default, Serialize)]
pub struct UpdateReport {
    /// The database is read-only, so nothing was brought up to date.
    pub read_only: bool,
    /// Readings re-analysed (they came from an older analyzer version).
    pub reanalysed: usize,
    /// Stage calls completed.
    pub calls: CompleteReport,
}

/// Re-analyses stale readings and completes missing or stale stage calls (see the module notes).
///
/// # Errors
/// A store error while re-analysing, or any error of the stage assessment, with what was being done.
pub fn bring_up_to_date(
    store: &mut Store,
    analyzer: &dyn ReadingAnalyzer,
    options: &StageOptions,
    progress: &mut dyn FnMut(Progress),
) -> Result<UpdateReport> {
    if store.is_read_only() {
        return Ok(UpdateReport {
            read_only: true,
            ..UpdateReport::default()
        });
    }
    let reanalysed = store
        .reanalyze_stale(analyzer, &mut |done, total| {
            progress(Progress::Reanalysing { done, total });
        })
        .map_err(|e| store.named(e))?;
    let calls = complete_stage_calls(store, options, &mut |done, total| {
        progress(Progress::Assessing { done, total });
    })
    .map_err(|e| match e {
        PipelineError::Stored(source) => PipelineError::Store {
            doing: format!("completing the stage calls in {}", store.path().display()),
            source,
        },
        other => other,
    })?;
    Ok(UpdateReport {
        read_only: false,
        reanalysed,
        calls,
    })
}

/// The result of [`import_and_assess`].
#[derive(Debug)]
pub struct ImportOutcome {
    /// One summary per folder, in order.
    pub summaries: Vec<ImportSummary>,
    /// The assessment after the import: its report, or why it failed (the import stands either way).
    pub assessment: Result<UpdateReport>,
}

/// Imports `folders` in order into `store`, then brings the database up to date (see the module notes
/// for the error policy).
///
/// # Errors
/// When a folder cannot be imported (no manifest, a store error); the error names the folder.
pub fn import_and_assess(
    store: &mut Store,
    folders: &[PathBuf],
    analyzer: &dyn ReadingAnalyzer,
    options: &StageOptions,
    progress: &mut dyn FnMut(Progress),
) -> Result<ImportOutcome> {
    let mut summaries = Vec::with_capacity(folders.len());
    for (i, folder) in folders.iter().enumerate() {
        let summary = store
            .import_route(folder, analyzer, &mut |done, total| {
                progress(Progress::Importing {
                    folder: i,
                    folders: folders.len(),
                    done,
                    total,
                });
            })
            .map_err(PipelineError::Stored)?;
        summaries.push(summary);
    }
    let assessment = bring_up_to_date(store, analyzer, options, progress);
    Ok(ImportOutcome {
        summaries,
        assessment,
    })
}
