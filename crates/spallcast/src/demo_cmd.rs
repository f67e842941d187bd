//! `spallcast demo` and the window entry (which creates the demo database on first run).

use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context as _, Result};
use spallcast_pipeline::{DemoReport, create_demo_database, default_db_path, ensure_demo_database};

/// Arguments of `spallcast demo`.
#[derive(Debug, clap::Args)]
pub struct DemoArgs {
    /// Database to (re)create. An existing demo database there is replaced (a copy is kept beside it
    /// as `<file>.before-demo.bak`); any other file only with --replace.
    #[arg(long, value_name = "FILE")]
    pub db: Option<PathBuf>,
    /// Replace the file at --db even when it is not a demo database (a copy is kept first).
    #[arg(long)]
    pub replace: bool,
}

/// Recreates the demo database.
pub fn run(args: &DemoArgs) -> Result<ExitCode> {
    let db = args.db.clone().unwrap_or_else(default_db_path);
    if db.exists() {
        if !args.replace && !spallcast_store::is_demo_database(&db) {
            anyhow::bail!(
                "{} exists and is not a demo database: refusing to replace it. Give another --db, or pass \
                 --replace to replace it (a copy is kept beside it first)",
                db.display()
            );
        }
        keep_a_copy(&db)?;
    }
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

/// Copies `db` to `<db>.before-demo.bak` (a consistent `SQLite` copy, or the bytes of another file).
fn keep_a_copy(db: &Path) -> Result<()> {
    let mut name = db.as_os_str().to_os_string();
    name.push(".before-demo.bak");
    let backup = PathBuf::from(name);
    if backup.exists() {
        std::fs::remove_file(&backup)
            .with_context(|| format!("cannot replace the old backup {}", backup.display()))?;
    }
    if spallcast_store::copy_database(db, &backup).is_err() {
        std::fs::copy(db, &backup)
            .with_context(|| format!("cannot back up {} to {}", db.display(), backup.display()))?;
    }
    eprintln!(
        "demo plant: kept a copy of the previous {} as {}",
        db.display(),
        backup.display()
    );
    Ok(())
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
