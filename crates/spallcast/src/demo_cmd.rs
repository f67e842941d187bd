//! `spallcast demo` and the window entry (which creates the demo database on first run).

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::Result;
use spallcast_pipeline::{DemoReport, create_demo_database, default_db_path, ensure_demo_database};

/// Arguments of `spallcast demo`.
#[derive(Debug, clap::Args)]
pub struct DemoArgs {
    /// Database to (re)create; an existing file there is replaced.
    #[arg(long, value_name = "FILE")]
    pub db: Option<PathBuf>,
}

/// Recreates the demo database.
pub fn run(args: &DemoArgs) -> Result<ExitCode> {
    let db = args.db.clone().unwrap_or_else(default_db_path);
    let report = create_demo_database(&db, &mut print_step)?;
    print_report(&report);
    Ok(ExitCode::SUCCESS)
}

/// Opens the window on `db` (default: the demo database, created first if missing).
pub fn open_window(db: Option<PathBuf>) -> Result<ExitCode> {
    // Say so before spending seconds on the demo plant when the window cannot open anyway.
    spallcast_app::check_display()?;
    let db = if let Some(path) = db {
        if !path.exists() {
            anyhow::bail!(
                "no database at {}; create one with `spallcast import DIR --db FILE --plant plant.toml` or `spallcast demo --db FILE`",
                path.display()
            );
        }
        path
    } else {
        let path = default_db_path();
        if let Some(report) = ensure_demo_database(&path, &mut print_step)? {
            print_report(&report);
        }
        path
    };
    spallcast_app::run_window(&db)?;
    Ok(ExitCode::SUCCESS)
}

fn print_step(step: &str, done: usize, total: usize) {
    eprintln!("demo plant: {step} ({done}/{total})");
}

fn print_report(r: &DemoReport) {
    eprintln!(
        "demo plant: {} readings from {} route days in {} (simulated in {:.1} s, imported and analysed in {:.1} s)",
        r.readings,
        r.route_days,
        display(&r.db),
        r.generate_secs,
        r.import_secs
    );
    for rej in &r.rejected {
        eprintln!(
            "demo plant: rejected {} (as intended for the demo's bad sensor): {}",
            rej.file, rej.reason
        );
    }
}

fn display(p: &Path) -> String {
    p.display().to_string()
}
