//! Outage planning for Spallcast: which planned outage each failing bearing should be changed in, what
//! is wrong with a chosen slot, and the planner's exports.
//!
//! - [`model`]: plain data (outages, bearing lives, forecasts, plan entries); no database handle.
//! - [`rules`]: the suggestion (the last outage that takes the machine down before the bearing's
//!   replace-by date) and the warnings, said in words.
//! - [`board`]: a snapshot of the plan that the calendar view and the exports read.
//! - [`csv_export`], [`ics`], [`html`]: the replacement list as RFC 4180 CSV (formula cells
//!   neutralised), an RFC 5545 iCalendar file, and a printable HTML report with inline SVG plots.
//! - [`source`]: the adapter that reads a board from the store and writes plan changes back.
//! - [`steps`]: a plan step as the planner takes it (apply changes or undo, read the board again, say
//!   in words what was done).
//! - [`export_to_path`]: writes any of the three formats atomically.
//!
//! Calls are advisory: isolate and lock out a machine before work on it; local codes and licensed
//! practice prevail.
#![forbid(unsafe_code)]
#![warn(missing_docs)]

pub mod atomic;
pub mod board;
pub mod csv_export;
pub mod error;
pub mod html;
pub mod ics;
pub mod model;
pub mod rules;
pub mod source;
pub mod steps;
pub mod svg;

use std::path::Path;

use chrono::{DateTime, Utc};

pub use board::PlanBoard;
pub use error::{PlanError, Result};
pub use html::{BearingImages, ImagesByLife, SAFETY_CAUTION, SpectrumImage, TrendImage};
pub use model::{
    BearingLife, BearingNeed, Forecast, LifeLocationCall, Outage, PlanEntry, PlanStatus,
};
pub use rules::{SlotWarning, fits, need_warnings, next_down, slot_warnings, suggest};

/// The planner's export formats.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ExportFormat {
    /// RFC 4180 CSV, one row per replacement.
    Csv,
    /// RFC 5545 iCalendar, one event per outage.
    Ics,
    /// Printable HTML report with inline SVG plots.
    Html,
}

impl ExportFormat {
    /// The usual file extension.
    pub fn extension(self) -> &'static str {
        match self {
            Self::Csv => "csv",
            Self::Ics => "ics",
            Self::Html => "html",
        }
    }
}

/// What an export needs besides the board.
#[derive(Debug, Clone, Copy)]
pub struct ExportContext<'a> {
    /// Site name for the report header.
    pub site_name: &'a str,
    /// Export time (DTSTAMP, report header).
    pub now: DateTime<Utc>,
    /// Pictures for the HTML report (ignored by CSV and iCalendar).
    pub images: &'a ImagesByLife,
}

/// The bytes of an export.
pub fn export_bytes(
    board: &PlanBoard,
    format: ExportFormat,
    ctx: &ExportContext<'_>,
) -> Result<Vec<u8>> {
    Ok(match format {
        ExportFormat::Csv => csv_export::replacement_csv(board)?,
        ExportFormat::Ics => ics::replacement_ics(board, ctx.now).into_bytes(),
        ExportFormat::Html => {
            html::replacement_html(board, ctx.images, ctx.site_name, ctx.now).into_bytes()
        }
    })
}

/// Writes an export to `path` atomically (see [`atomic::write_atomic`]).
pub fn export_to_path(
    board: &PlanBoard,
    format: ExportFormat,
    ctx: &ExportContext<'_>,
    path: &Path,
) -> Result<()> {
    let bytes = export_bytes(board, format, ctx)?;
    atomic::write_atomic(path, &bytes)
}

/// What [`export_database`] wrote.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ExportSummary {
    /// Outages in the export.
    pub outages: usize,
    /// Replacements planned or done in an outage.
    pub replacements: usize,
    /// Bearings still without a slot.
    pub unplanned: usize,
    /// Size of the file written.
    pub bytes: usize,
}

/// Opens the database at `db` (it must exist), reads the plan as of `today` and writes it to `out` in
/// `format`, atomically. For HTML, spectra are computed from the stored waveforms.
pub fn export_database(
    db: &Path,
    format: ExportFormat,
    out: &Path,
    today: chrono::NaiveDate,
    now: DateTime<Utc>,
) -> Result<ExportSummary> {
    let store = spallcast_store::Store::open_existing(db)?;
    let board = source::load_board(&store, today)?;
    let images = if format == ExportFormat::Html {
        source::load_images(&store, &board)?
    } else {
        ImagesByLife::new()
    };
    let site_name = store.plant_tree()?.site_name;
    let ctx = ExportContext {
        site_name: &site_name,
        now,
        images: &images,
    };
    let bytes = export_bytes(&board, format, &ctx)?;
    atomic::write_atomic(out, &bytes)?;
    Ok(ExportSummary {
        outages: board.outages.len(),
        replacements: board
            .outages
            .iter()
            .map(|o| board.tasks_in(o.id).len())
            .sum(),
        unplanned: board.open_needs().len(),
        bytes: bytes.len(),
    })
}
