//! `spallcast import`: a route folder into a plant database.
use std::io::IsTerminal as _;
use std::path::PathBuf;
use std::process::ExitCode;

use spallcast_analysis::stage::StageOptions;
use spallcast_pipeline::update::{Progress, import_and_assess};
use spallcast_store::{ImportSummary, ReadingAnalyzer, Store};

/// Arguments of `spallcast import`.
#[derive(Debug, clap::Args)]
pub struct ImportArgs {
    /// The route folder (recordings plus route.csv).
    pub dir: PathBuf,
    /// The plant database (created if missing).
    #[arg(long)]
    pub db: PathBuf,
    /// A plant file (TOML) to apply before importing.
    #[arg(long)]
    pub plant: Option<PathBuf>,
    /// Print the summary as JSON on standard output (no progress bar).
    #[arg(long)]
    pub json: bool,
}

/// Runs the import. Exit code 0 when the import ran, even with rejected files; an error when it could
/// not run (no manifest, bad database).
pub fn run(args: &ImportArgs, analyzer: &dyn ReadingAnalyzer) -> anyhow::Result<ExitCode> {
    // Every error of the store names the database already.
    let mut store = Store::open(&args.db)?;
    if let Some(plant) = &args.plant {
        let applied = store.apply_plant_file(plant)?;
        if !args.json {
            eprintln!(
                "plant file {}: {} added, {} updated",
                plant.display(),
                applied.inserted,
                applied.updated
            );
        }
    }
    let bar = if args.json || !std::io::stderr().is_terminal() {
        indicatif::ProgressBar::hidden()
    } else {
        let bar = indicatif::ProgressBar::new(0);
        if let Ok(style) = indicatif::ProgressStyle::with_template(
            "{bar:40} {pos}/{len} files  {elapsed}  eta {eta}",
        ) {
            bar.set_style(style);
        }
        bar
    };
    // Stage calls and forecasts follow the new readings at once, so `bearings`, the window and the
    // planner see them; calls missing after an interrupted earlier run are completed too (a re-import
    // with nothing new still does that). The pipeline's policy: a failed assessment does not undo the
    // import; it is reported and the next command that reads the calls tries again.
    let outcome = import_and_assess(
        &mut store,
        std::slice::from_ref(&args.dir),
        analyzer,
        &StageOptions::default(),
        &mut |p| match p {
            Progress::Importing { done, total, .. } => {
                bar.set_length(total as u64);
                bar.set_position(done as u64);
            }
            other => {
                bar.finish_and_clear();
                crate::refresh::print_progress(other, &analyzer.version(), args.json);
            }
        },
    )?;
    bar.finish_and_clear();
    match &outcome.assessment {
        Ok(report) => {
            crate::refresh::finish(&store, report, args.json);
            if !args.json && report.calls.positions > 0 {
                eprintln!(
                    "stage calls updated: {} readings of {} bearing positions",
                    report.calls.calls_written, report.calls.positions
                );
            }
        }
        Err(err) => {
            eprintln!(
                "spallcast: warning: the stage assessment after the import failed: {}",
                err.full_message()
            );
        }
    }
    let Some(summary) = outcome.summaries.first() else {
        anyhow::bail!("the import of {} returned no summary", args.dir.display());
    };
    if args.json {
        println!("{}", serde_json::to_string_pretty(summary)?);
    } else {
        print_summary(summary);
    }
    Ok(ExitCode::SUCCESS)
}

fn print_summary(s: &ImportSummary) {
    println!(
        "Imported {} ({} rows in route.csv)",
        s.folder.display(),
        s.manifest_rows
    );
    println!("  new readings:        {}", s.new_readings);
    println!("  duplicates skipped:  {}", s.duplicates);
    println!("  files rejected:      {}", s.rejected.len());
    for r in &s.rejected {
        let line = r
            .line
            .map(|l| format!(" (route.csv line {l})"))
            .unwrap_or_default();
        println!("    {}{line}: {}", r.file, r.reason);
    }
    if !s.clipped.is_empty() {
        println!("  imported but flagged clipped: {}", s.clipped.len());
        for f in &s.clipped {
            println!("    {f}");
        }
    }
    if s.finding_changes.is_empty() {
        println!("  no bearing's findings changed since its previous reading");
    } else {
        println!("  findings changed since the previous reading:");
        for c in &s.finding_changes {
            println!(
                "    {} {} ({}): {} -> {}",
                c.machine, c.position, c.point, c.previous, c.current
            );
        }
    }
    println!("  analysis: {}", s.analysis_version);
}
