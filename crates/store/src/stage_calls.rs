//! Stage calls written a bearing at a time, and the positions whose calls are missing or stale.

use rusqlite::params;

use crate::Store;
use crate::error::{Result, StoreError};

/// One reading's stage call, ready to store.
#[derive(Debug, Clone)]
pub struct NewStageCall {
    /// The reading.
    pub reading_id: i64,
    /// Stage 0..=4.
    pub stage: u8,
    /// The evidence document.
    pub evidence: serde_json::Value,
}

impl Store {
    /// Records (or replaces) the stage calls of one bearing position's readings in one transaction, so
    /// a crash leaves a position's calls all old or all new.
    pub fn put_stage_calls(&mut self, calls: &[NewStageCall], version: &str) -> Result<()> {
        let now = crate::now_text();
        let tx = self
            .conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
        {
            let mut stmt = tx.prepare_cached(
                "INSERT INTO stage_call (reading_id, stage, version, evidence, called_at, position_id, taken_at_utc)
                 SELECT r.id, ?2, ?3, ?4, ?5, r.position_id, r.taken_at_utc FROM reading r WHERE r.id = ?1
                 ON CONFLICT (reading_id) DO UPDATE SET stage = excluded.stage, version = excluded.version,
                    evidence = excluded.evidence, called_at = excluded.called_at",
            )?;
            for c in calls {
                if c.stage > 4 {
                    return Err(StoreError::Invalid(format!(
                        "stage {} of reading {} is outside 0..=4",
                        c.stage, c.reading_id
                    )));
                }
                let n = stmt.execute(params![
                    c.reading_id,
                    c.stage,
                    version,
                    serde_json::to_string(&c.evidence)?,
                    now
                ])?;
                if n == 0 {
                    return Err(StoreError::Invalid(format!(
                        "no reading {} to record a stage call on",
                        c.reading_id
                    )));
                }
            }
        }
        tx.commit()?;
        Ok(())
    }

    /// Bearing positions with an assessable reading (analysed, not suspect, in a bearing life) whose
    /// stage call is missing, was written by another stage-logic `version`, or is older than the
    /// reading's analysis.
    pub fn positions_with_stale_calls(&self, version: &str) -> Result<Vec<i64>> {
        let mut stmt = self.conn.prepare(
            "SELECT DISTINCT r.position_id FROM reading r JOIN analysis a ON a.reading_id = r.id
             LEFT JOIN stage_call s ON s.reading_id = r.id
             WHERE r.suspect IS NULL AND r.life_id IS NOT NULL
               AND (s.reading_id IS NULL OR s.version IS NOT ?1 OR a.analyzed_at > s.called_at)
             ORDER BY r.position_id",
        )?;
        let rows = stmt.query_map([version], |r| r.get(0))?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }
}
