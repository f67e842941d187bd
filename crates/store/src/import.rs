//! Route import: `route.csv` plus recordings into the store, analysed in parallel, written one
//! transaction per chunk of readings. Each reading is still all-or-nothing: its row, waveform, results
//! and log line are in the same transaction, so a crash leaves either all of them or none.

use std::collections::HashMap;
use std::fmt::Write as _;
use std::io::Read as _;
use std::path::{Component, Path, PathBuf};

use chrono::{DateTime, FixedOffset, Utc};
use rayon::prelude::*;
use rusqlite::{OptionalExtension, Transaction, params};
use serde::Serialize;
use sha2::{Digest, Sha256};
use spallcast_formats::{ManifestRow, Units};

use crate::analyzer::{AnalysisInput, AnalysisOutput, FaultFactors, ReadingAnalyzer};
use crate::error::{Result, StoreError};
use crate::queries::factors_from_row;
use crate::{Store, now_text, utc_text};

/// A recording with at least this fraction of its samples on a clipping plateau is imported but flagged
/// `suspect = "clipped"` (0.1 %: a saturated sensor distorts spectra long before it clips often; common
/// practice, no source).
pub const CLIPPED_FRACTION_THRESHOLD: f64 = 0.001;

use spallcast_model::units::{STANDARD_GRAVITY_M_S2 as STANDARD_GRAVITY, rpm_to_hz};
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

/// Hashes, checks for a duplicate, decodes and analyses one row (runs on a worker thread).
fn process(w: &Work, root: &Path, analyzer: &dyn ReadingAnalyzer) -> Outcome {
    let hash = match hash_file(&w.path, root) {
        Ok(h) => h,
        Err(reason) => return Outcome::Rejected(reason),
    };
    if w.known_hashes.contains(&hash) {
        return Outcome::Duplicate;
    }
    match prepare(w, analyzer) {
        Ok(p) => Outcome::Ready(hash, p),
        Err(reason) => Outcome::Rejected(reason),
    }
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

/// True when a manifest path stays inside the folder (relative, no `..`, no root or prefix).
fn stays_inside(file: &str) -> bool {
    let p = Path::new(file);
    !file.is_empty()
        && p.components()
            .all(|c| matches!(c, Component::Normal(_) | Component::CurDir))
}

fn hash_file(path: &Path, root: &Path) -> std::result::Result<String, String> {
    // A symbolic link (or a folder link on the way) must not lead out of the route folder.
    let real = std::fs::canonicalize(path).map_err(|e| format!("cannot read the file: {e}"))?;
    if !real.starts_with(root) {
        return Err(format!(
            "the file resolves to {}, outside the route folder",
            real.display()
        ));
    }
    // Only regular files: a folder, a named pipe or a device would fail or block the reader.
    let meta = std::fs::metadata(&real).map_err(|e| format!("cannot read the file: {e}"))?;
    if !meta.is_file() {
        return Err("not a regular file".to_owned());
    }
    // Streamed, so memory stays one buffer whatever the file's size; capped like the readers.
    let limit = spallcast_formats::MAX_FILE_BYTES;
    let mut file = std::fs::File::open(&real)
        .map_err(|e| format!("cannot read the file: {e}"))?
        .take(limit + 1);
    let mut hasher = Sha256::new();
    let mut buf = vec![0_u8; 1 << 16];
    let mut total: u64 = 0;
    loop {
        let n = match file.read(&mut buf) {
            Ok(0) => break,
            Ok(n) => n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(format!("cannot read the file: {e}")),
        };
        total += n as u64;
        if total > limit {
            return Err(format!(
                "the file is larger than {} MiB, the most a recording may be",
                limit >> 20
            ));
        }
        hasher.update(&buf[..n]);
    }
    if total == 0 {
        return Err("the file is empty".to_owned());
    }
    let digest = hasher.finalize();
    let mut hex = String::with_capacity(64);
    for b in digest {
        let _ = write!(hex, "{b:02x}");
    }
    Ok(hex)
}

/// Decodes, checks, converts to g and analyses one recording.
fn prepare(work: &Work, analyzer: &dyn ReadingAnalyzer) -> std::result::Result<Prepared, String> {
    let row = &work.row;
    let mut rec = spallcast_formats::read_recording(&work.path, row.sample_rate_hz)
        .map_err(|e| e.to_string())?;
    spallcast_formats::validate(&rec, &work.path).map_err(|e| e.to_string())?;
    // Channels are numbered from 1. The channel is taken, not copied: a long recording is held once.
    let index = usize::try_from(row.channel)
        .ok()
        .and_then(|c| c.checked_sub(1))
        .filter(|i| *i < rec.channels.len());
    let Some(index) = index else {
        return Err(format!(
            "channel {} asked for, but the file has {} channel(s)",
            row.channel,
            rec.channels.len()
        ));
    };
    let raw = rec.channels.swap_remove(index);
    let clipped_fraction = spallcast_formats::clipping_fraction(&raw);
    let scale = match row.units {
        Units::G => 1.0,
        Units::MetresPerSecond2 => 1.0 / STANDARD_GRAVITY,
        Units::Millivolts => {
            let Some(s) = row.sensitivity_mv_per_g.or(work.point.sensitivity_mv_per_g) else {
                return Err(format!(
                    "units are mV but no sensitivity is given (route.csv column `sensitivity` or point {}'s \
                     sensitivity_mv_per_g)",
                    row.point
                ));
            };
            1.0 / s
        }
    };
    let mut samples_g = raw;
    if (scale - 1.0).abs() >= f64::EPSILON {
        for x in &mut samples_g {
            *x = (f64::from(*x) * scale) as f32;
        }
    }
    let sample_rate_hz = rec.sample_rate_hz;
    drop(rec);
    if let Some(i) = samples_g.iter().position(|s| !s.is_finite()) {
        return Err(format!("sample {i} is not finite after conversion to g"));
    }
    let input = AnalysisInput {
        samples_g: &samples_g,
        sample_rate_hz,
        shaft_hz: rpm_to_hz(row.rpm),
        factors: work.point.factors,
        iso_group: work.point.iso_group,
        iso_support: work.point.iso_support,
    };
    let mut output = analyzer
        .analyze(&input)
        .map_err(|e| format!("analysis failed: {e}"))?;
    // SQLite has no NaN: an indicator the analyzer could not compute is left out.
    output.scalars.retain(|_, v| v.is_finite());
    Ok(Prepared {
        samples_g,
        sample_rate_hz,
        clipped_fraction,
        output,
    })
}

/// A reading to add directly (tests, benchmarks, demo data); the route import builds these itself.
#[derive(Debug, Clone)]
pub struct NewReading<'a> {
    /// Point database id (see [`Store::point_id`]).
    pub point_id: i64,
    /// When taken, with its offset.
    pub taken_at: DateTime<FixedOffset>,
    /// Shaft speed, Hz.
    pub shaft_hz: f64,
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Units of the source (`g`, `m/s2`, `mV`).
    pub units: &'a str,
    /// Samples in g (may be empty: then no waveform is stored).
    pub samples_g: &'a [f32],
    /// Source file name.
    pub source_file: &'a str,
    /// SHA-256 of the source, hex.
    pub content_sha256: &'a str,
    /// Fraction of samples on a clipping plateau.
    pub clipped_fraction: f64,
}

/// Inserts a reading with its results inside `tx`; `None` when it is a duplicate.
fn insert_reading(
    tx: &Transaction<'_>,
    r: &NewReading<'_>,
    output: &AnalysisOutput,
    version: &str,
    now: &str,
) -> Result<Option<i64>> {
    let utc = utc_text(r.taken_at.with_timezone(&Utc));
    let day = r.taken_at.date_naive();
    let suspect = (r.clipped_fraction >= CLIPPED_FRACTION_THRESHOLD).then_some("clipped");
    // The waveform goes in as a zero-filled blob of its size, then is written in blocks through
    // SQLite's incremental blob I/O: a long recording is never copied whole into bytes.
    let blob_bytes = (!r.samples_g.is_empty()).then(|| r.samples_g.len() as i64 * 4);
    let id: Option<i64> = tx
        .prepare_cached(
            "INSERT INTO reading (point_id, position_id, life_id, taken_at_utc, utc_offset_s, route_day, shaft_hz,
                sample_rate_hz, units, sample_count, source_file, content_sha256, suspect, clipped_fraction,
                imported_at)
             SELECT pt.id, pt.position_id,
                (SELECT l.id FROM bearing_life l WHERE l.position_id = pt.position_id AND l.installed <= ?5
                   AND (l.removed IS NULL OR ?5 < l.removed) ORDER BY l.installed DESC LIMIT 1),
                ?2, ?3, ?5, ?4, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13
             FROM point pt WHERE pt.id = ?1
             ON CONFLICT (content_sha256, point_id, taken_at_utc) DO NOTHING
             RETURNING id",
        )?
        .query_row(
            params![
                r.point_id,
                utc,
                r.taken_at.offset().local_minus_utc(),
                r.shaft_hz,
                day,
                r.sample_rate_hz,
                r.units,
                r.samples_g.len() as i64,
                r.source_file,
                r.content_sha256,
                suspect,
                r.clipped_fraction,
                now
            ],
            |row| row.get(0),
        )
        .optional()?;
    let Some(id) = id else { return Ok(None) };
    if let Some(bytes) = blob_bytes {
        tx.prepare_cached("INSERT INTO waveform (reading_id, samples) VALUES (?1, zeroblob(?2))")?
            .execute(params![id, bytes])?;
        write_waveform_blob(tx, id, r.samples_g)?;
    }
    write_results(tx, id, output, version, now)?;
    Ok(Some(id))
}

/// Writes `samples` (little-endian f32) into the zero-filled waveform blob of reading `id`, in blocks.
fn write_waveform_blob(tx: &Transaction<'_>, id: i64, samples: &[f32]) -> Result<()> {
    use std::io::Write as _;
    let mut blob = tx.blob_open(rusqlite::MAIN_DB, "waveform", "samples", id, false)?;
    let mut bytes = Vec::with_capacity(64 * 1024 * 4);
    for block in samples.chunks(64 * 1024) {
        bytes.clear();
        for s in block {
            bytes.extend_from_slice(&s.to_le_bytes());
        }
        blob.write_all(&bytes).map_err(|e| {
            crate::error::StoreError::Invalid(format!("writing the waveform of reading {id}: {e}"))
        })?;
    }
    Ok(())
}

/// Writes (or replaces) the analysis document and scalars of a reading.
fn write_results(
    tx: &Transaction<'_>,
    id: i64,
    output: &AnalysisOutput,
    version: &str,
    now: &str,
) -> Result<()> {
    tx.prepare_cached(
        "INSERT INTO analysis (reading_id, version, document, analyzed_at, diagnosis) VALUES (?1, ?2, ?3, ?4, ?5)
         ON CONFLICT (reading_id) DO UPDATE SET version = excluded.version, document = excluded.document,
            analyzed_at = excluded.analyzed_at, diagnosis = excluded.diagnosis",
    )?
    .execute(params![id, version, serde_json::to_string(&output.document)?, now, output.diagnosis])?;
    tx.prepare_cached("DELETE FROM reading_scalar WHERE reading_id = ?1")?
        .execute([id])?;
    let mut stmt = tx.prepare_cached(
        "INSERT INTO reading_scalar (reading_id, name, value) VALUES (?1, ?2, ?3)",
    )?;
    for (name, value) in output.scalars.iter().filter(|(_, v)| v.is_finite()) {
        stmt.execute(params![id, name, value])?;
    }
    Ok(())
}

/// The diagnosis label of an analysis output (see [`ImportSummary`] for the rule).
fn diagnosis_label(output: &AnalysisOutput) -> Option<String> {
    if let Some(code) = output.scalars.get("diagnosis_code") {
        return Some(format!("code {code}"));
    }
    output.diagnosis.clone()
}

/// The machine group stored as its number; the plant file admits only 1 and 2 (group 2 otherwise).
fn machine_group(n: u8) -> MachineGroup {
    MachineGroup::from_number(n).unwrap_or(MachineGroup::Medium)
}

/// The support class stored as its word (rigid otherwise).
fn support(word: &str) -> Support {
    Support::parse(word).unwrap_or(Support::Rigid)
}

/// The diagnosis label of the newest reading at `point_id` taken before `before_utc`.
fn previous_label(
    conn: &rusqlite::Connection,
    point_id: i64,
    before_utc: &str,
) -> Result<Option<String>> {
    let row: Option<(Option<f64>, Option<String>)> = conn
        .prepare_cached(
            "SELECT (SELECT value FROM reading_scalar s WHERE s.reading_id = r.id AND s.name = 'diagnosis_code'),
                    (SELECT a.diagnosis FROM analysis a WHERE a.reading_id = r.id)
             FROM reading r WHERE r.point_id = ?1 AND r.taken_at_utc < ?2 ORDER BY r.taken_at_utc DESC LIMIT 1",
        )?
        .query_row(params![point_id, before_utc], |r| Ok((r.get(0)?, r.get(1).ok().flatten())))
        .optional()?;
    Ok(row.and_then(|(code, text)| code.map(|c| format!("code {c}")).or(text)))
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
    /// Database id of a point given its id in the plant file.
    pub fn point_id(&self, tag: &str) -> Result<Option<i64>> {
        Ok(self
            .conn
            .query_row("SELECT id FROM point WHERE tag = ?1", [tag], |r| r.get(0))
            .optional()?)
    }

    /// Adds readings with their analysis results, all in one transaction; returns the new ids (`None` for
    /// duplicates). For tests, benchmarks and demo data: the route import writes one reading per
    /// transaction.
    pub fn add_readings(
        &mut self,
        readings: &[(NewReading<'_>, AnalysisOutput)],
        analysis_version: &str,
    ) -> Result<Vec<Option<i64>>> {
        let now = now_text();
        let tx = self
            .conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
        let mut ids = Vec::with_capacity(readings.len());
        for (r, out) in readings {
            ids.push(insert_reading(&tx, r, out, analysis_version, &now)?);
        }
        tx.commit()?;
        Ok(ids)
    }

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

    /// Writes one processed chunk in one transaction: its new readings with their results, its
    /// duplicates and rejects in the import log. Each reading is complete or absent (a crash loses
    /// the whole chunk, which a re-run imports again). The summary changes only after the commit.
    fn write_chunk(&mut self, run: &mut Run, processed: Vec<(Work, Outcome)>) -> Result<()> {
        let now = now_text();
        let tx = self
            .conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
        let mut new_readings = 0;
        let mut duplicates = 0;
        let mut rejects = Vec::new();
        let mut clipped = Vec::new();
        let mut changes = Vec::new();
        for (w, outcome) in processed {
            let (hash, p) = match outcome {
                Outcome::Rejected(reason) => {
                    log_outcome_tx(&tx, run.run_id, &w.row, "rejected", Some(&reason), None)?;
                    rejects.push(RejectedFile {
                        file: w.row.file.clone(),
                        line: Some(w.row.line),
                        point: Some(w.row.point.clone()),
                        reason,
                    });
                    continue;
                }
                Outcome::Duplicate => {
                    log_outcome_tx(&tx, run.run_id, &w.row, "duplicate", None, None)?;
                    duplicates += 1;
                    continue;
                }
                Outcome::Ready(hash, p) => (hash, p),
            };
            let new = NewReading {
                point_id: w.point.point_id,
                taken_at: w.row.taken_at,
                shaft_hz: rpm_to_hz(w.row.rpm),
                sample_rate_hz: p.sample_rate_hz,
                units: w.row.units.as_str(),
                samples_g: &p.samples_g,
                source_file: &w.row.file,
                content_sha256: &hash,
                clipped_fraction: p.clipped_fraction,
            };
            let Some(id) = insert_reading(&tx, &new, &p.output, &run.version, &now)? else {
                // The same file twice in one manifest, or a reading stored meanwhile by another
                // process: the table's unique key keeps one.
                log_outcome_tx(&tx, run.run_id, &w.row, "duplicate", None, None)?;
                duplicates += 1;
                continue;
            };
            log_outcome_tx(&tx, run.run_id, &w.row, "imported", None, Some(id))?;
            new_readings += 1;
            if p.clipped_fraction >= CLIPPED_FRACTION_THRESHOLD {
                clipped.push(w.row.file.clone());
            }
            let utc = utc_text(w.row.taken_at.with_timezone(&Utc));
            let previous = previous_label(&tx, w.point.point_id, &utc)?;
            if let (Some(previous), Some(current)) = (previous, diagnosis_label(&p.output))
                && previous != current
            {
                changes.push(FindingChange {
                    machine: w.point.machine.clone(),
                    position: w.point.position.clone(),
                    point: w.row.point.clone(),
                    reading_id: id,
                    taken_at: w.row.taken_at,
                    previous,
                    current,
                });
            }
        }
        tx.commit()?;
        run.summary.new_readings += new_readings;
        run.summary.duplicates += duplicates;
        run.summary.rejected.extend(rejects);
        run.summary.clipped.extend(clipped);
        run.summary.finding_changes.extend(changes);
        Ok(())
    }

    /// Content hashes of the readings stored at a point and UTC time.
    fn hashes_at(&self, point_id: i64, utc: &str) -> Result<Vec<String>> {
        let mut stmt = self.conn.prepare_cached(
            "SELECT content_sha256 FROM reading WHERE point_id = ?1 AND taken_at_utc = ?2",
        )?;
        let rows = stmt.query_map(params![point_id, utc], |r| r.get(0))?;
        Ok(rows.collect::<std::result::Result<Vec<_>, _>>()?)
    }

    fn log_rejects(&mut self, run_id: i64, rejects: &[RejectedFile]) -> Result<()> {
        if rejects.is_empty() {
            return Ok(());
        }
        let tx = self.conn.transaction()?;
        {
            let mut stmt = tx.prepare_cached(
                "INSERT INTO import_log (run_id, file, point, outcome, reason) VALUES (?1, ?2, ?3, 'rejected', ?4)",
            )?;
            for r in rejects {
                let file = match r.line {
                    Some(line) if r.file == "route.csv" => format!("route.csv:{line}"),
                    _ => r.file.clone(),
                };
                stmt.execute(params![run_id, file, r.point, r.reason])?;
            }
        }
        tx.commit()?;
        Ok(())
    }

    /// Recomputes the results of every reading analysed by another analyzer version (or not at all),
    /// in parallel chunks, each reading's results replaced in its own transaction. Readings stored
    /// without a waveform are left alone. Returns the number of readings re-analysed;
    /// `progress(done, total)` after each chunk.
    pub fn reanalyze_stale(
        &mut self,
        analyzer: &dyn ReadingAnalyzer,
        progress: &mut dyn FnMut(usize, usize),
    ) -> Result<usize> {
        let version = analyzer.version();
        let ids: Vec<i64> = self
            .conn
            .prepare(
                "SELECT r.id FROM reading r LEFT JOIN analysis a ON a.reading_id = r.id
                 WHERE EXISTS (SELECT 1 FROM waveform w WHERE w.reading_id = r.id)
                   AND a.version IS NOT ?1 ORDER BY r.id",
            )?
            .query_map([&version], |r| r.get(0))?
            .collect::<Result<Vec<_>, _>>()?;
        let total = ids.len();
        let chunk = 2 * rayon::current_num_threads().max(1);
        let mut done = 0;
        let mut failed = 0;
        progress(0, total);
        for batch in ids.chunks(chunk) {
            let mut loaded = Vec::with_capacity(batch.len());
            for &id in batch {
                loaded.push(self.load_for_analysis(id)?);
            }
            let results: Vec<(i64, std::result::Result<AnalysisOutput, String>)> = loaded
                .into_par_iter()
                .map(|(id, samples, ctx)| {
                    let input = AnalysisInput {
                        samples_g: &samples,
                        ..ctx
                    };
                    (id, analyzer.analyze(&input))
                })
                .collect();
            for (id, result) in results {
                match result {
                    Ok(mut out) => {
                        out.scalars.retain(|_, v| v.is_finite());
                        let tx = self
                            .conn
                            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
                        write_results(&tx, id, &out, &version, &now_text())?;
                        tx.commit()?;
                        done += 1;
                    }
                    Err(_) => failed += 1,
                }
            }
            progress(done + failed, total);
        }
        Ok(done)
    }

    fn load_for_analysis(&self, id: i64) -> Result<(i64, Vec<f32>, AnalysisInput<'static>)> {
        let (blob, rate, shaft, group, support, factors) = self
            .conn
            .prepare_cached(
                "SELECT (SELECT w.samples FROM waveform w WHERE w.reading_id = r.id), r.sample_rate_hz,
                        r.shaft_hz, m.iso_group, m.iso_support,
                        bt.ftf, bt.bsf, bt.bpfo, bt.bpfi, bt.rolling_elements, bt.element_diameter_mm,
                        bt.pitch_diameter_mm, bt.contact_angle_deg
                 FROM reading r JOIN bearing_position bp ON bp.id = r.position_id
                 JOIN machine m ON m.id = bp.machine_id JOIN bearing_type bt ON bt.id = bp.bearing_type_id
                 WHERE r.id = ?1",
            )?
            .query_row([id], |r| {
                Ok((
                    r.get::<_, Vec<u8>>(0)?,
                    r.get::<_, f64>(1)?,
                    r.get::<_, f64>(2)?,
                    r.get::<_, u8>(3)?,
                    r.get::<_, String>(4)?,
                    factors_from_row(r, 5)?,
                ))
            })?;
        let ctx = AnalysisInput {
            samples_g: &[],
            sample_rate_hz: rate,
            shaft_hz: shaft,
            factors,
            iso_group: machine_group(group),
            iso_support: self::support(&support),
        };
        Ok((id, crate::queries::decode_waveform(&blob), ctx))
    }
}

fn log_outcome_tx(
    tx: &Transaction<'_>,
    run_id: i64,
    row: &ManifestRow,
    outcome: &str,
    reason: Option<&str>,
    id: Option<i64>,
) -> Result<()> {
    tx.prepare_cached(
        "INSERT INTO import_log (run_id, file, point, outcome, reason, reading_id) VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
    )?
    .execute(params![run_id, row.file, row.point, outcome, reason, id])?;
    Ok(())
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
