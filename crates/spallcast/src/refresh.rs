//! Bringing a plant database up to date before a command reads it: readings analysed by an older
//! analyzer are re-analysed, and stage calls that are missing (an interrupted import), from an older
//! stage logic, or older than their analysis are re-assessed, one transaction per bearing. A
//! read-only database is read as it is, with a one-line warning.

use std::path::Path;

use spallcast_analysis::stage::StageOptions;
use spallcast_pipeline::update::{Progress, UpdateReport, bring_up_to_date};
use spallcast_store::Store;

/// Opens an existing database for a command that reads it (refusing a file that is not a Spallcast
/// database) and brings it up to date (see [`refresh`]).
pub fn open_and_refresh(db: &Path, quiet: bool) -> anyhow::Result<Store> {
    let mut store = Store::open_existing(db)?;
    refresh(&mut store, quiet)?;
    Ok(store)
}

/// Re-analyses stale readings and completes stale stage calls (the pipeline's
/// [`bring_up_to_date`]); progress on standard error unless `quiet`. On a read-only database: nothing,
/// and one warning line.
pub fn refresh(store: &mut Store, quiet: bool) -> anyhow::Result<UpdateReport> {
    let analyzer = crate::analyzer::default_analyzer();
    let version = analyzer.version();
    let report = bring_up_to_date(
        store,
        analyzer.as_ref(),
        &StageOptions::default(),
        &mut |p| print_progress(p, &version, quiet),
    )?;
    finish(store, &report, quiet);
    Ok(report)
}

/// The progress lines of an update on standard error (first and last step of each phase).
pub fn print_progress(p: Progress, analyzer_version: &str, quiet: bool) {
    if quiet {
        return;
    }
    match p {
        Progress::Reanalysing { done, total } if total > 0 && (done == 0 || done == total) => {
            eprintln!(
                "re-analysing readings from an older analysis version ({analyzer_version}): {done}/{total}"
            );
        }
        Progress::Assessing { done, total } if done == 0 || done == total => {
            eprintln!("completing stage calls: {done}/{total} bearing positions");
        }
        _ => {}
    }
}

/// The closing lines of an update: the read-only warning, or how many readings were re-analysed.
pub fn finish(store: &Store, report: &UpdateReport, quiet: bool) {
    if report.read_only {
        eprintln!(
            "spallcast: warning: {} is read-only: results of an older analysis or missing stage calls \
             are not brought up to date in it",
            store.path().display()
        );
    } else if !quiet && report.reanalysed > 0 {
        eprintln!("re-analysed {} readings", report.reanalysed);
    }
}

/// Prints, on standard error, the stored rows the store had to leave out (each named).
pub fn print_warnings(store: &Store) {
    for w in store.take_warnings() {
        eprintln!("spallcast: warning: {w} (in {})", store.path().display());
    }
}
