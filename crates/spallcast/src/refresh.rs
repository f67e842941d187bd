//! Bringing a plant database up to date before a command reads it: readings analysed by an older
//! analyzer are re-analysed, and stage calls that are missing (an interrupted import), from an older
//! stage logic, or older than their analysis are re-assessed, one transaction per bearing. A
//! read-only database is read as it is, with a one-line warning.

use std::path::Path;

use anyhow::Context as _;
use spallcast_analysis::stage::StageOptions;
use spallcast_pipeline::assess::{CompleteReport, complete_stage_calls};
use spallcast_store::Store;

/// Opens an existing database for a command that reads it (refusing a file that is not a Spallcast
/// database) and brings it up to date (see [`refresh`]).
pub fn open_and_refresh(db: &Path, quiet: bool) -> anyhow::Result<Store> {
    let mut store = Store::open_existing(db)?;
    refresh(&mut store, quiet)?;
    Ok(store)
}

/// Re-analyses stale readings and completes stale stage calls; progress on standard error unless
/// `quiet`. On a read-only database: nothing, and one warning line.
pub fn refresh(store: &mut Store, quiet: bool) -> anyhow::Result<CompleteReport> {
    if store.is_read_only() {
        eprintln!(
            "spallcast: warning: {} is read-only: results of an older analysis or missing stage calls \
             are not brought up to date in it",
            store.path().display()
        );
        return Ok(CompleteReport::default());
    }
    let analyzer = crate::analyzer::default_analyzer();
    let reanalysed = store
        .reanalyze_stale(analyzer.as_ref(), &mut |done, total| {
            if !quiet && total > 0 && (done == 0 || done == total) {
                eprintln!(
                    "re-analysing readings from an older analysis version ({}): {done}/{total}",
                    analyzer.version()
                );
            }
        })
        .map_err(|e| store.named(e))?;
    let report = complete_stage_calls(store, &StageOptions::default(), &mut |done, total| {
        if !quiet && (done == 0 || done == total) {
            eprintln!("completing stage calls: {done}/{total} bearing positions");
        }
    })
    .with_context(|| format!("completing the stage calls in {}", store.path().display()))?;
    if !quiet && reanalysed > 0 {
        eprintln!("re-analysed {reanalysed} readings");
    }
    Ok(report)
}

/// Prints, on standard error, the stored rows the store had to leave out (each named).
pub fn print_warnings(store: &Store) {
    for w in store.take_warnings() {
        eprintln!("spallcast: warning: {w} (in {})", store.path().display());
    }
}
