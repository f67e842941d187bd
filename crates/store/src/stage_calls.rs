//! Stage calls written a bearing at a time, and the positions whose calls are missing or stale.

use chrono::{DateTime, Utc};
use rusqlite::params;

use crate::Store;
use crate::error::{Result, StoreError};
use crate::planning::{StageCall, stage_call_from_row};

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

/// The latest stage call of one measurement point on its bearing's newest life.
#[derive(Debug, Clone, PartialEq)]
pub struct PointCall {
    /// Bearing position id.
    pub position_id: i64,
    /// The newest life of that position (the call's reading belongs to it).
    pub life_id: i64,
    /// Point id (tag).
    pub point: String,
    /// When the call's reading was taken.
    pub taken_at: DateTime<Utc>,
    /// The call.
    pub call: StageCall,
}

impl Store {
    /// The latest stage call of every point on the newest life of every bearing position, by
    /// position then point id. A position whose newest life has no called reading (a bearing just
    /// replaced) has no rows: its old life's calls are not its calls.
    pub fn latest_point_calls(&self) -> Result<Vec<PointCall>> {
        self.latest_point_calls_where(None)
    }

    /// [`Store::latest_point_calls`] of one bearing position.
    pub fn latest_point_calls_of(&self, position_id: i64) -> Result<Vec<PointCall>> {
        self.latest_point_calls_where(Some(position_id))
    }

    fn latest_point_calls_where(&self, position: Option<i64>) -> Result<Vec<PointCall>> {
        let mut stmt = self.conn.prepare_cached(
            "WITH newest AS (
                 SELECT bp.id AS position_id,
                        (SELECT l.id FROM bearing_life l WHERE l.position_id = bp.id
                         ORDER BY l.installed DESC, l.id DESC LIMIT 1) AS life_id
                 FROM bearing_position bp WHERE ?1 IS NULL OR bp.id = ?1),
             ranked AS (
                 SELECT r.position_id, r.life_id, p.tag, r.id AS reading_id, r.taken_at_utc,
                        ROW_NUMBER() OVER (PARTITION BY r.life_id, r.point_id
                                           ORDER BY r.taken_at_utc DESC, r.id DESC) AS n
                 FROM reading r
                 JOIN stage_call s ON s.reading_id = r.id
                 JOIN point p ON p.id = r.point_id
                 JOIN newest ON newest.position_id = r.position_id AND newest.life_id = r.life_id)
             SELECT ranked.position_id, ranked.life_id, ranked.tag, ranked.taken_at_utc,
                    s.reading_id, s.stage, s.version, s.evidence, s.called_at
             FROM ranked JOIN stage_call s ON s.reading_id = ranked.reading_id
             WHERE ranked.n = 1
             ORDER BY ranked.position_id, ranked.tag",
        )?;
        let mut rows = stmt.query([position])?;
        let mut out = Vec::new();
        while let Some(r) = rows.next()? {
            let taken: String = r.get(3)?;
            let taken_at = match crate::parse_utc(&taken) {
                Ok(t) => t,
                Err(e) => {
                    let id: i64 = r.get(4)?;
                    self.skip_row(format!("stage call of reading {id} left out: {e}"));
                    continue;
                }
            };
            out.push(PointCall {
                position_id: r.get(0)?,
                life_id: r.get(1)?,
                point: r.get(2)?,
                taken_at,
                call: stage_call_from_row((r.get(4)?, r.get(5)?, r.get(6)?, r.get(7)?, r.get(8)?))?,
            });
        }
        Ok(out)
    }

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
    /// reading's analysis or than the last change of the position's baseline marks.
    pub fn positions_with_stale_calls(&self, version: &str) -> Result<Vec<i64>> {
        let mut stmt = self.conn.prepare(
            "SELECT DISTINCT r.position_id FROM reading r JOIN analysis a ON a.reading_id = r.id
             LEFT JOIN stage_call s ON s.reading_id = r.id
             LEFT JOIN baseline_change b ON b.position_id = r.position_id
             WHERE r.suspect IS NULL AND r.life_id IS NOT NULL
               AND (s.reading_id IS NULL OR s.version IS NOT ?1 OR a.analyzed_at > s.called_at
                    OR b.changed_at >= s.called_at)
             ORDER BY r.position_id",
        )?;
        let rows = stmt.query_map([version], |r| r.get(0))?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }
}
