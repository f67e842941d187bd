//! `spallcast plan`: the replacement plan from the command line.
//!
//! `spallcast plan export --db FILE --format csv|ics|html --out PATH [--today YYYY-MM-DD]` writes the
//! replacement list (CSV, RFC 4180 with formula cells neutralised), the outage calendar (iCalendar,
//! RFC 5545) or the printable HTML report. The file is written atomically.

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::Context as _;
use chrono::NaiveDate;
use spallcast_plan::ExportFormat;

/// Arguments of `spallcast plan`.
#[derive(Debug, clap::Args)]
pub struct PlanArgs {
    /// What to do.
    #[command(subcommand)]
    pub command: PlanCommand,
}

/// Subcommands of `spallcast plan`.
#[derive(Debug, clap::Subcommand)]
pub enum PlanCommand {
    /// Write the replacement plan for the maintenance planner (CSV, iCalendar or HTML report).
    Export(ExportArgs),
}

/// Arguments of `spallcast plan export`.
#[derive(Debug, clap::Args)]
pub struct ExportArgs {
    /// The plant database (must exist).
    #[arg(long, value_name = "FILE")]
    pub db: PathBuf,
    /// Output format.
    #[arg(long, value_enum)]
    pub format: FormatArg,
    /// File to write (replaced atomically if it exists). Never the database itself or its -wal/-shm
    /// files; another database file only with --overwrite.
    #[arg(long, value_name = "PATH")]
    pub out: PathBuf,
    /// Allow --out to replace another database file (never the one exported from).
    #[arg(long)]
    pub overwrite: bool,
    /// The day to plan from (default: today, local time).
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub today: Option<NaiveDate>,
}

/// Export format on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FormatArg {
    /// RFC 4180 CSV, one row per replacement (cells that would start a formula get an apostrophe).
    Csv,
    /// RFC 5545 iCalendar, one all-day event per outage listing its replacements.
    Ics,
    /// Printable HTML report with spectra and trends.
    Html,
}

impl From<FormatArg> for ExportFormat {
    fn from(f: FormatArg) -> Self {
        match f {
            FormatArg::Csv => ExportFormat::Csv,
            FormatArg::Ics => ExportFormat::Ics,
            FormatArg::Html => ExportFormat::Html,
        }
    }
}

/// Runs `spallcast plan ...`.
///
/// # Errors
/// The database cannot be opened or read, or the output cannot be written; the message names the file.
pub fn run(args: &PlanArgs) -> anyhow::Result<ExitCode> {
    match &args.command {
        PlanCommand::Export(e) => export(e),
    }
}

fn export(args: &ExportArgs) -> anyhow::Result<ExitCode> {
    let today = args
        .today
        .unwrap_or_else(|| chrono::Local::now().date_naive());
    let format = ExportFormat::from(args.format);
    refuse_to_overwrite_a_database(&args.out, &args.db, args.overwrite)?;
    let summary =
        spallcast_plan::export_database(&args.db, format, &args.out, today, chrono::Utc::now())
            .with_context(|| format!("plan export from {}", args.db.display()))?;
    println!(
        "wrote {} ({} bytes): {} outages, {} replacements planned, {} bearings without a slot",
        args.out.display(),
        summary.bytes,
        summary.outages,
        summary.replacements,
        summary.unplanned
    );
    Ok(ExitCode::SUCCESS)
}

/// Refuses an output path that is the database `db` (or its `-wal`, `-shm` or `-journal` file), or,
/// unless `overwrite`, any existing file that is an `SQLite` database.
pub fn refuse_to_overwrite_a_database(
    out: &Path,
    db: &Path,
    overwrite: bool,
) -> anyhow::Result<()> {
    let canonical = |p: &Path| -> Option<PathBuf> {
        let dir = match p.parent() {
            Some(d) if !d.as_os_str().is_empty() => d,
            _ => Path::new("."),
        };
        Some(std::fs::canonicalize(dir).ok()?.join(p.file_name()?))
    };
    if let (Some(o), Some(d)) = (canonical(out), canonical(db)) {
        let companions = ["", "-wal", "-shm", "-journal"].map(|suffix| {
            let mut name = d.as_os_str().to_os_string();
            name.push(suffix);
            PathBuf::from(name)
        });
        let same_file = std::fs::canonicalize(out)
            .ok()
            .zip(std::fs::canonicalize(db).ok())
            .is_some_and(|(a, b)| a == b);
        if same_file || companions.contains(&o) {
            anyhow::bail!(
                "refusing to write the export to {}: it is the database {} being exported, or one of its \
                 files (--overwrite never allows that); choose another --out",
                out.display(),
                db.display()
            );
        }
    }
    if !overwrite && spallcast_store::is_sqlite_file(out) {
        anyhow::bail!(
            "refusing to write the export over {}: it is an SQLite database; choose another --out, or pass \
             --overwrite to replace it",
            out.display()
        );
    }
    Ok(())
}

#[cfg(test)]
mod tests;
