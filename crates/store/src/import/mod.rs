//! Route import: `route.csv` plus recordings into the store, analysed in parallel, written one
//! transaction per chunk of readings. Each reading is still all-or-nothing: its row, waveform, results
//! and log line are in the same transaction, so a crash leaves either all of them or none.
//!
//! `files.rs` reads the recordings safely (worker threads), `write.rs` writes the readings and the log,
//! `reanalyze.rs` recomputes stale results.

mod files;
mod reanalyze;
mod write;

use files::{process, stays_inside};
pub use write::NewReading;

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use chrono::{DateTime, FixedOffset, Utc};
use rayon::prelude::*;
use rusqlite::params;
use serde::Serialize;
use spallcast_formats::ManifestRow;

use crate::analyzer::{AnalysisOutput, FaultFactors, ReadingAnalyzer};
use crate::error::{Result, StoreError};
use crate::queries::factors_from_row;
use crate::{Store, now_text, utc_text};

/// A recording with at least this fraction of its samples on a clipping plateau is imported but flagged
/// `suspect = "clipped"` (0.1 %: a saturated sensor distorts spectra long before it clips often; common
/// practice, no source).
pub const CLIPPED_FRACTION_THRESHOLD: f64 = 0.001;

use spallcast_model::units::STANDARD_GRAVITY_M_S2 as STANDARD_GRAVITY;
use spallcast_model::{MachineGroup, Support};

/// The outcome of importing one route folder.
///
/// **Finding changes.** A bearing is listed when one of its points' readings in this import has a
/// diagnosis different from that same point's previous reading (the newest one taken before it).
/// The diagnosis of a reading is its scalar `diagnosis_code` when the analyzer gives one, else the
/// analyzer's [`diagnosis`](crate::AnalysisOutput::diagnosis) label (stored in its own column,
/// `analysis.diagnosis`); readings with neither, or with no previous reading, are not compared.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImportSummary {
    /// The route folder.
    pub folder: PathBuf,
    /// Id of the import run in `import_run` / `import_log`.
    pub run_id: i64,
    /// Rows in route.csv.
    pub manifest_rows: usize,
    /// Readings added.
    pub new_readings: usize,
    /// Readings already in the database (same file content, point and time), skipped.
    pub duplicates: usize,
    /// Files rejected, with reasons.
    pub rejected: Vec<RejectedFile>,
    /// Files imported but flagged `suspect = clipped`.
    pub clipped: Vec<String>,
    /// Bearings whose findings changed since their previous reading.
    pub finding_changes: Vec<FindingChange>,
    /// Analyzer version used.
    pub analysis_version: String,
}

/// A file (or manifest row) that was not imported.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct RejectedFile {
    /// File as named in route.csv (`route.csv` for a row that could not be read).
    pub file: String,
    /// Line of route.csv.
    pub line: Option<usize>,
    /// Point id given on the row, if any.
    pub point: Option<String>,
    /// Why.
    pub reason: String,
}

/// A bearing whose diagnosis changed since the previous reading at the same point.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FindingChange {
    /// Machine id.
    pub machine: String,
    /// Bearing position.
    pub position: String,
    /// Point id.
    pub point: String,
    /// The new reading.
    pub reading_id: i64,
    /// When it was taken.
    pub taken_at: DateTime<FixedOffset>,
    /// Diagnosis of the previous reading.
    pub previous: String,
    /// Diagnosis now.
    pub current: String,
}

/// What the store knows about a point, for import and analysis.
#[derive(Debug, Clone)]
struct PointCtx {
    point_id: i64,
    machine: String,
    position: String,
    sensitivity_mv_per_g: Option<f64>,
    factors: Option<FaultFactors>,
    iso_group: MachineGroup,
    iso_support: Support,
    /// When the position's first recorded bearing life began.
    first_installed: Option<chrono::NaiveDate>,
}

/// One manifest row that passed the cheap checks.
struct Work {
    row: ManifestRow,
    path: PathBuf,
    point: PointCtx,
    /// Content hashes of readings already stored at this point and time (almost always none): a file
    /// whose hash is among them is a duplicate and is not decoded.
    known_hashes: Vec<String>,
}

/// What the workers made of one manifest row.
enum Outcome {
    Rejected(String),
    Duplicate,
    Ready(String, Prepared),
}

/// A decoded, analysed reading ready to write.
struct Prepared {
    samples_g: Vec<f32>,
    sample_rate_hz: f64,
    clipped_fraction: f64,
    output: AnalysisOutput,
}

fn load_points(conn: &rusqlite::Connection) -> Result<HashMap<String, PointCtx>> {
    let mut stmt = conn.prepare(
        "SELECT pt.tag, pt.id, bp.id, m.tag, bp.position, pt.sensitivity_mv_per_g, m.iso_group, m.iso_support,
                bt.ftf, bt.bsf, bt.bpfo, bt.bpfi, bt.rolling_elements, bt.element_diameter_mm, bt.pitch_diameter_mm,
                bt.contact_angle_deg,
                (SELECT min(l.installed) FROM bearing_life l WHERE l.position_id = bp.id)
         FROM point pt JOIN bearing_position bp ON bp.id = pt.position_id JOIN machine m ON m.id = bp.machine_id
         JOIN bearing_type bt ON bt.id = bp.bearing_type_id",
    )?;
    let mut out = HashMap::new();
    let mut rows = stmt.query([])?;
    while let Some(r) = rows.next()? {
        out.insert(
            r.get::<_, String>(0)?,
            PointCtx {
                point_id: r.get(1)?,
                machine: r.get(3)?,
                position: r.get(4)?,
                sensitivity_mv_per_g: r.get(5)?,
                iso_group: machine_group(r.get(6)?),
                iso_support: support(&r.get::<_, String>(7)?),
                factors: factors_from_row(r, 8)?,
                first_installed: r.get(16)?,
            },
        );
    }
    Ok(out)
}

/// Why a row is refused when it was taken (local date) before its bearing position's first life
/// began: no life holds it, so it would never be assessed.
fn before_install(point: &PointCtx, row: &ManifestRow) -> Option<String> {
    let installed = point.first_installed?;
    let day = row.taken_at.date_naive();
    (day < installed).then(|| {
        format!(
            "taken {day} (local date), before the bearing {} {} was installed ({installed}): no bearing \
             life to assess it in; correct taken_at or the plant file's installed date",
            point.machine, point.position
        )
    })
}

/// The machine group stored as its number; the plant file admits only 1 and 2 (group 2 otherwise).
fn machine_group(n: u8) -> MachineGroup {
    MachineGroup::from_number(n).unwrap_or(MachineGroup::Medium)
}

/// The support class stored as its word (rigid otherwise).
fn support(word: &str) -> Support {
    Support::parse(word).unwrap_or(Support::Rigid)
}

#[allow(
    clippy::struct_field_names,
    reason = "run_id is the id of the import run"
)]
struct Run {
    root: PathBuf,
    version: String,
    run_id: i64,
    summary: ImportSummary,
}

impl Store {
    /// Imports a route folder (`route.csv` plus recordings).
    ///
    /// Rows are processed in chunks of about twice the number of worker threads: files are hashed and
    /// checked for duplicates, then decoded, converted to g and analysed in parallel (rayon), then the
    /// chunk's readings are written with their results in one transaction (a reading is never stored
    /// without its results). Bad rows and files are rejected with
    /// a reason (and logged in `import_log`); the rest import. `progress(done, total)` is called after
    /// each chunk with counts of manifest rows.
    ///
    /// Errors only when the import cannot run: no folder, no or unreadable `route.csv`, a database error.
    pub fn import_route(
        &mut self,
        dir: &Path,
        analyzer: &dyn ReadingAnalyzer,
        progress: &mut dyn FnMut(usize, usize),
    ) -> Result<ImportSummary> {
        self.import_route_unnamed(dir, analyzer, progress)
            .map_err(|e| self.named(e))
    }

    fn import_route_unnamed(
        &mut self,
        dir: &Path,
        analyzer: &dyn ReadingAnalyzer,
        progress: &mut dyn FnMut(usize, usize),
    ) -> Result<ImportSummary> {
        if !dir.is_dir() {
            return Err(StoreError::Route {
                path: dir.to_path_buf(),
                message: "not a folder".to_owned(),
            });
        }
        let manifest = dir.join("route.csv");
        if !manifest.is_file() {
            return Err(StoreError::Route {
                path: dir.to_path_buf(),
                message: "no route.csv in the folder".to_owned(),
            });
        }
        let rows = spallcast_formats::read_manifest(&manifest).map_err(|e| StoreError::Route {
            path: manifest.clone(),
            message: e.to_string(),
        })?;
        let points = load_points(&self.conn)?;
        let version = analyzer.version();
        let run_id: i64 = self.conn.query_row(
            "INSERT INTO import_run (folder, started_at) VALUES (?1, ?2) RETURNING id",
            params![dir.display().to_string(), now_text()],
            |r| r.get(0),
        )?;
        let root = std::fs::canonicalize(dir).map_err(|source| StoreError::Io {
            path: dir.to_path_buf(),
            source,
        })?;
        let mut run = Run {
            root,
            version: version.clone(),
            run_id,
            summary: ImportSummary {
                folder: dir.to_path_buf(),
                run_id,
                manifest_rows: rows.len(),
                new_readings: 0,
                duplicates: 0,
                rejected: Vec::new(),
                clipped: Vec::new(),
                finding_changes: Vec::new(),
                analysis_version: version,
            },
        };
        let total = rows.len();
        let mut work = Vec::new();
        for row in rows {
            match row {
                Err(e) => {
                    let line = match &e {
                        spallcast_formats::FormatError::ManifestRow { line, .. } => {
                            usize::try_from(*line).ok()
                        }
                        _ => None,
                    };
                    run.summary.rejected.push(RejectedFile {
                        file: "route.csv".to_owned(),
                        line,
                        point: None,
                        reason: e.to_string(),
                    });
                }
                Ok(row) => {
                    let reject = |reason: String, row: &ManifestRow| RejectedFile {
                        file: row.file.clone(),
                        line: Some(row.line),
                        point: Some(row.point.clone()),
                        reason,
                    };
                    if !stays_inside(&row.file) {
                        run.summary.rejected.push(reject(
                            "the file path leaves the route folder".to_owned(),
                            &row,
                        ));
                    } else if let Some(reason) =
                        points.get(&row.point).and_then(|p| before_install(p, &row))
                    {
                        run.summary.rejected.push(reject(reason, &row));
                    } else if let Some(point) = points.get(&row.point) {
                        let known_hashes = self.hashes_at(
                            point.point_id,
                            &utc_text(row.taken_at.with_timezone(&Utc)),
                        )?;
                        work.push(Work {
                            path: dir.join(&row.file),
                            point: point.clone(),
                            row,
                            known_hashes,
                        });
                    } else {
                        let reason =
                            format!("unknown point {:?} (not in the plant file)", row.point);
                        run.summary.rejected.push(reject(reason, &row));
                    }
                }
            }
        }
        let early_rejects = run.summary.rejected.clone();
        self.log_rejects(run_id, &early_rejects)?;
        let mut done = total - work.len();
        progress(done, total);
        // Two stages overlap: the worker pool hashes, decodes and analyses chunk k + 1 while this
        // thread writes chunk k. One chunk waits in the channel at most, so memory stays a few chunks
        // of recordings whatever the route's size. Order is kept, so results do not depend on timing.
        let chunk = 4 * rayon::current_num_threads().max(1);
        // Each chunk is its own right-sized vector (splitting off the tail instead left every chunk with
        // the capacity of the whole remaining list: memory grew with the square of the rows).
        let mut chunks = Vec::with_capacity(work.len().div_ceil(chunk));
        let mut rest = work.into_iter();
        loop {
            let batch: Vec<Work> = rest.by_ref().take(chunk).collect();
            if batch.is_empty() {
                break;
            }
            chunks.push(batch);
        }
        let root = run.root.clone();
        std::thread::scope(|scope| -> Result<()> {
            let (sender, receiver) = std::sync::mpsc::sync_channel::<Vec<(Work, Outcome)>>(1);
            let root = &root;
            scope.spawn(move || {
                for batch in chunks {
                    let processed: Vec<(Work, Outcome)> = batch
                        .into_par_iter()
                        .map(|w| {
                            let outcome = process(&w, root, analyzer);
                            (w, outcome)
                        })
                        .collect();
                    // The writer stopped (database error): stop too.
                    if sender.send(processed).is_err() {
                        break;
                    }
                }
            });
            for processed in receiver {
                done += processed.len();
                self.write_chunk(&mut run, processed)?;
                progress(done, total);
            }
            Ok(())
        })?;
        self.conn.execute(
            "UPDATE import_run SET finished_at = ?2, new_readings = ?3, duplicates = ?4, rejected = ?5 WHERE id = ?1",
            params![
                run_id,
                now_text(),
                run.summary.new_readings as i64,
                run.summary.duplicates as i64,
                run.summary.rejected.len() as i64
            ],
        )?;
        Ok(run.summary)
    }
}

/// Creates (or opens) the database at `db`, applies the plant file, then imports each route folder in
/// order. `progress(done, total)` counts route folders. For the demo command and scripted set-ups.
pub fn create_and_import(
    db: &Path,
    plant_file: &Path,
    route_dirs: &[PathBuf],
    analyzer: &dyn ReadingAnalyzer,
    progress: &mut dyn FnMut(usize, usize),
) -> Result<(crate::ApplySummary, Vec<ImportSummary>)> {
    let mut store = Store::open(db)?;
    let applied = store.apply_plant_file(plant_file)?;
    let mut out = Vec::with_capacity(route_dirs.len());
    progress(0, route_dirs.len());
    for (i, dir) in route_dirs.iter().enumerate() {
        out.push(store.import_route(dir, analyzer, &mut |_, _| {})?);
        progress(i + 1, route_dirs.len());
    }
    Ok((applied, out))
}
