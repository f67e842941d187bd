//! The demo plant database: the invented site of `demo-plant/`, its 18 route days simulated by
//! `spallcast-simulate` with its dates moved so the last route day falls in the week before the day the
//! database is built, imported through the ordinary route import.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::time::Instant;

use spallcast_simulate::{PLANT_TOML, SCENARIO_TOML, dated_demo, generate_demo_routes_from_str};
use spallcast_store::{PlantFile, RejectedFile, Store};

use crate::SpallcastAnalyzer;
use crate::error::{Doing as _, PipelineError, Result};
use crate::update::{Progress, import_and_assess};

/// What [`create_demo_database`] did.
#[derive(Debug, Clone)]
pub struct DemoReport {
    /// The database written.
    pub db: PathBuf,
    /// The simulator's truth (one row per recording), kept beside the database for tests; the stage
    /// logic never reads it.
    pub truth_csv: PathBuf,
    /// Route days imported.
    pub route_days: usize,
    /// Readings imported.
    pub readings: usize,
    /// Files the import rejected, with reasons (the demo has one bad sensor recording on purpose).
    pub rejected: Vec<RejectedFile>,
    /// Seconds spent simulating the recordings.
    pub generate_secs: f64,
    /// Seconds spent importing and analysing them.
    pub import_secs: f64,
}

/// Where the window keeps the demo database when no `--db` is given: `$SPALLCAST_DB` if set, else
/// `$XDG_DATA_HOME/spallcast/demo-plant.sqlite`, else `$HOME/.local/share/spallcast/demo-plant.sqlite`,
/// else `spallcast-demo-plant.sqlite` in the working folder.
pub fn default_db_path() -> PathBuf {
    if let Some(p) = std::env::var_os("SPALLCAST_DB").filter(|p| !p.is_empty()) {
        return PathBuf::from(p);
    }
    let base = std::env::var_os("XDG_DATA_HOME")
        .filter(|p| !p.is_empty())
        .map(PathBuf::from)
        .or_else(|| {
            std::env::var_os("HOME")
                .filter(|p| !p.is_empty())
                .map(|h| PathBuf::from(h).join(".local/share"))
        });
    match base {
        Some(b) => b.join("spallcast").join("demo-plant.sqlite"),
        None => PathBuf::from("spallcast-demo-plant.sqlite"),
    }
}

/// Creates the demo database at `db` unless a file is already there. Returns the report when it
/// created one.
pub fn ensure_demo_database(
    db: &Path,
    progress: &mut dyn FnMut(&str, usize, usize),
) -> Result<Option<DemoReport>> {
    if db.exists() {
        return Ok(None);
    }
    create_demo_database(db, progress).map(Some)
}

/// (Re)creates the demo database at `db`: simulates the route days into a temporary folder, applies the
/// demo plant file and imports every day in date order. The database is built under a temporary name
/// beside `db` and renamed into place when complete, so an interrupted run never leaves a partial demo
/// database behind. `progress(step, done, total)` reports each step.
pub fn create_demo_database(
    db: &Path,
    progress: &mut dyn FnMut(&str, usize, usize),
) -> Result<DemoReport> {
    if let Some(parent) = db.parent().filter(|p| !p.as_os_str().is_empty()) {
        std::fs::create_dir_all(parent)
            .doing(|| format!("cannot create the folder {}", parent.display()))?;
    }
    let partial = sibling(db, ".partial");
    remove_db_files(&partial)?;

    let started = Instant::now();
    progress("simulating route days", 0, 1);
    let routes = tempfile::tempdir()
        .doing(|| "cannot create a temporary folder for the demo routes".to_owned())?;
    // Dated relative to today: the last route day falls in the week before, the outages ahead.
    let today = chrono::Local::now().date_naive();
    let dated = dated_demo(PLANT_TOML, SCENARIO_TOML, today)
        .doing(|| "dating the demo plant relative to today failed".to_owned())?;
    let demo =
        generate_demo_routes_from_str(&dated.plant_toml, &dated.scenario_toml, routes.path())
            .doing(|| "simulating the demo plant's route days failed".to_owned())?;
    progress("simulating route days", 1, 1);
    let generate_secs = started.elapsed().as_secs_f64();

    let started = Instant::now();
    let plant = PlantFile::parse(&dated.plant_toml, Path::new("demo-plant/plant.toml"))
        .doing(|| "the demo plant file is invalid".to_owned())?;
    let mut readings = 0;
    let mut rejected = Vec::new();
    {
        let mut store = Store::open(&partial)?;
        store.apply_plant(&plant)?;
        let total = demo.route_dirs.len();
        let mut last_folder = None;
        let mut assessing = false;
        let outcome = import_and_assess(
            &mut store,
            &demo.route_dirs,
            &SpallcastAnalyzer,
            &spallcast_analysis::stage::StageOptions::default(),
            &mut |p| match p {
                Progress::Importing { folder, .. } if last_folder != Some(folder) => {
                    last_folder = Some(folder);
                    progress("importing route days", folder, total);
                }
                Progress::Assessing { done: 0, .. } if !assessing => {
                    assessing = true;
                    progress("importing route days", total, total);
                    progress("assessing stages", 0, 1);
                }
                _ => {}
            },
        )?;
        if !assessing {
            progress("importing route days", total, total);
            progress("assessing stages", 0, 1);
        }
        for summary in outcome.summaries {
            readings += summary.new_readings;
            rejected.extend(summary.rejected);
        }
        // A demo database is complete or not made: a failed assessment fails it.
        outcome.assessment.map_err(|e| PipelineError::Context {
            doing: "assessing the demo plant's bearing stages failed".to_owned(),
            source: Box::new(e),
        })?;
        store.mark_demo()?;
        progress("assessing stages", 1, 1);
    }
    let import_secs = started.elapsed().as_secs_f64();

    remove_db_files(db)?;
    std::fs::rename(&partial, db).doing(|| {
        format!(
            "cannot move the new demo database into place: {}",
            db.display()
        )
    })?;
    let truth_csv = sibling(db, ".truth.csv");
    std::fs::write(&truth_csv, truth_table(&demo.truth))
        .doing(|| format!("cannot write the simulator truth: {}", truth_csv.display()))?;
    Ok(DemoReport {
        db: db.to_path_buf(),
        truth_csv,
        route_days: demo.route_dirs.len(),
        readings,
        rejected,
        generate_secs,
        import_secs,
    })
}

fn sibling(db: &Path, suffix: &str) -> PathBuf {
    let mut name = db.as_os_str().to_owned();
    name.push(suffix);
    PathBuf::from(name)
}

/// Removes a database file and its WAL/SHM companions if present.
fn remove_db_files(db: &Path) -> Result<()> {
    for suffix in ["", "-wal", "-shm"] {
        let p = sibling(db, suffix);
        match std::fs::remove_file(&p) {
            Ok(()) => {}
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => {}
            Err(e) => return Err(e).doing(|| format!("cannot remove {}", p.display())),
        }
    }
    Ok(())
}

fn truth_table(rows: &[spallcast_simulate::TruthRow]) -> String {
    let mut out = String::from("date,file,point,machine,bearing,stage,fault,severity\n");
    for r in rows {
        let fault = r.fault.map_or_else(String::new, |f| format!("{f:?}"));
        let _ = writeln!(
            out,
            "{},{},{},{},{},{},{},{:.3}",
            r.date,
            r.file,
            r.point,
            r.machine,
            r.bearing,
            r.stage.get(),
            fault,
            r.severity
        );
    }
    out
}
