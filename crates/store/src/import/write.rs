//! Writing to the database: a reading with its waveform, results and log line in one transaction,
//! the diagnosis label compared with the point's previous reading, and the import log.

use chrono::{DateTime, FixedOffset, Utc};
use rusqlite::{OptionalExtension, Transaction, params};
use spallcast_formats::ManifestRow;
use spallcast_model::units::rpm_to_hz;

use super::{CLIPPED_FRACTION_THRESHOLD, FindingChange, Outcome, RejectedFile, Run, Work};
use crate::analyzer::AnalysisOutput;
use crate::error::Result;
use crate::{Store, now_text, utc_text};

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
pub(super) fn insert_reading(
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
pub(super) fn write_waveform_blob(tx: &Transaction<'_>, id: i64, samples: &[f32]) -> Result<()> {
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
pub(super) fn write_results(
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
pub(super) fn diagnosis_label(output: &AnalysisOutput) -> Option<String> {
    if let Some(code) = output.scalars.get("diagnosis_code") {
        return Some(format!("code {code}"));
    }
    output.diagnosis.clone()
}

/// The diagnosis label of the newest reading at `point_id` taken before `before_utc`.
pub(super) fn previous_label(
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

    /// Writes one processed chunk in one transaction: its new readings with their results, its
    /// duplicates and rejects in the import log. Each reading is complete or absent (a crash loses
    /// the whole chunk, which a re-run imports again). The summary changes only after the commit.
    pub(super) fn write_chunk(
        &mut self,
        run: &mut Run,
        processed: Vec<(Work, Outcome)>,
    ) -> Result<()> {
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
    pub(super) fn hashes_at(&self, point_id: i64, utc: &str) -> Result<Vec<String>> {
        let mut stmt = self.conn.prepare_cached(
            "SELECT content_sha256 FROM reading WHERE point_id = ?1 AND taken_at_utc = ?2",
        )?;
        let rows = stmt.query_map(params![point_id, utc], |r| r.get(0))?;
        Ok(rows.collect::<std::result::Result<Vec<_>, _>>()?)
    }

    pub(super) fn log_rejects(&mut self, run_id: i64, rejects: &[RejectedFile]) -> Result<()> {
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
}

pub(super) fn log_outcome_tx(
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
