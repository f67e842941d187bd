//! Outages, replacement plan entries and stage calls (basic CRUD; the planner UI comes later).

use chrono::{DateTime, NaiveDate, Utc};
use rusqlite::{OptionalExtension, params};
use serde::{Deserialize, Serialize};

use crate::Store;
use crate::error::{Result, StoreError};

/// An outage as stored, the values for adding or updating one, and the state of a plan entry: shared
/// vocabulary (`spallcast-model`).
pub use spallcast_model::{Outage, OutageInput, PlanStatus};

/// A bearing life planned into an outage.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlanEntry {
    /// Database id.
    pub id: i64,
    /// The bearing life to be replaced.
    pub life_id: i64,
    /// The outage.
    pub outage_id: i64,
    /// Status.
    pub status: PlanStatus,
    /// Free note.
    pub note: String,
    /// Machine id (tag) of the life's position.
    pub machine: String,
    /// Bearing position name.
    pub position: String,
}

/// A stage call recorded for a reading.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StageCall {
    /// The reading it was made on.
    pub reading_id: i64,
    /// Stage 0 (no defect seen) to 4.
    pub stage: u8,
    /// Version of the stage logic.
    pub version: String,
    /// Evidence as JSON.
    pub evidence: serde_json::Value,
    /// When it was made.
    pub called_at: DateTime<Utc>,
}

/// Replaces the scope rows of an outage; returns true when they changed.
pub(crate) fn set_outage_scope(
    conn: &rusqlite::Connection,
    outage_id: i64,
    areas: &[String],
    machines: &[String],
) -> Result<bool> {
    let mut area_ids = Vec::new();
    for a in areas {
        let id: i64 = conn
            .query_row("SELECT id FROM area WHERE name = ?1", [a], |r| r.get(0))
            .optional()?
            .ok_or_else(|| StoreError::NotFound(format!("no area named {a:?}")))?;
        area_ids.push(id);
    }
    let mut machine_ids = Vec::new();
    for m in machines {
        let id: i64 = conn
            .query_row("SELECT id FROM machine WHERE tag = ?1", [m], |r| r.get(0))
            .optional()?
            .ok_or_else(|| StoreError::NotFound(format!("no machine with id {m:?}")))?;
        machine_ids.push(id);
    }
    area_ids.sort_unstable();
    area_ids.dedup();
    machine_ids.sort_unstable();
    machine_ids.dedup();
    let old_areas = ids(
        conn,
        "SELECT area_id FROM outage_area WHERE outage_id = ?1 ORDER BY area_id",
        outage_id,
    )?;
    let old_machines = ids(
        conn,
        "SELECT machine_id FROM outage_machine WHERE outage_id = ?1 ORDER BY machine_id",
        outage_id,
    )?;
    if old_areas == area_ids && old_machines == machine_ids {
        return Ok(false);
    }
    conn.execute("DELETE FROM outage_area WHERE outage_id = ?1", [outage_id])?;
    conn.execute(
        "DELETE FROM outage_machine WHERE outage_id = ?1",
        [outage_id],
    )?;
    for a in area_ids {
        conn.execute(
            "INSERT INTO outage_area (outage_id, area_id) VALUES (?1, ?2)",
            [outage_id, a],
        )?;
    }
    for m in machine_ids {
        conn.execute(
            "INSERT INTO outage_machine (outage_id, machine_id) VALUES (?1, ?2)",
            [outage_id, m],
        )?;
    }
    Ok(true)
}

fn ids(conn: &rusqlite::Connection, sql: &str, id: i64) -> Result<Vec<i64>> {
    let mut stmt = conn.prepare_cached(sql)?;
    let rows = stmt.query_map([id], |r| r.get(0))?;
    Ok(rows.collect::<Result<Vec<_>, _>>()?)
}

fn check_outage(o: &OutageInput) -> Result<()> {
    if o.name.trim().is_empty() {
        return Err(StoreError::Invalid("an outage needs a name".to_owned()));
    }
    if o.end < o.start {
        return Err(StoreError::Invalid(format!(
            "outage {:?} ends before it starts",
            o.name
        )));
    }
    Ok(())
}

impl Store {
    /// Adds an outage; returns its id.
    pub fn add_outage(&mut self, o: &OutageInput) -> Result<i64> {
        check_outage(o)?;
        let tx = self.conn.transaction()?;
        tx.execute(
            "INSERT INTO outage (name, start_date, end_date) VALUES (?1, ?2, ?3)",
            params![o.name, o.start, o.end],
        )
        .map_err(|e| match e.sqlite_error_code() {
            Some(rusqlite::ErrorCode::ConstraintViolation) => {
                StoreError::Invalid(format!("an outage named {:?} already exists", o.name))
            }
            _ => StoreError::from(e),
        })?;
        let id = tx.last_insert_rowid();
        set_outage_scope(&tx, id, &o.areas, &o.machines)?;
        tx.commit()?;
        Ok(id)
    }

    /// Updates an outage's name, dates and scope.
    pub fn update_outage(&mut self, id: i64, o: &OutageInput) -> Result<()> {
        check_outage(o)?;
        let tx = self.conn.transaction()?;
        let n = tx.execute(
            "UPDATE outage SET name = ?2, start_date = ?3, end_date = ?4 WHERE id = ?1",
            params![id, o.name, o.start, o.end],
        )?;
        if n == 0 {
            return Err(StoreError::NotFound(format!("no outage with id {id}")));
        }
        set_outage_scope(&tx, id, &o.areas, &o.machines)?;
        tx.commit()?;
        Ok(())
    }

    /// Deletes an outage and its plan entries.
    pub fn delete_outage(&mut self, id: i64) -> Result<()> {
        let n = self
            .conn
            .execute("DELETE FROM outage WHERE id = ?1", [id])?;
        if n == 0 {
            return Err(StoreError::NotFound(format!("no outage with id {id}")));
        }
        Ok(())
    }

    /// All outages, by start date.
    pub fn outages(&self) -> Result<Vec<Outage>> {
        let mut stmt = self.conn.prepare(
            "SELECT id, name, start_date, end_date FROM outage ORDER BY start_date, name",
        )?;
        let rows = stmt
            .query_map([], |r| {
                Ok((r.get::<_, i64>(0)?, r.get(1)?, r.get(2)?, r.get(3)?))
            })?
            .collect::<Result<Vec<(i64, String, NaiveDate, NaiveDate)>, _>>()?;
        let mut out = Vec::with_capacity(rows.len());
        for (id, name, start, end) in rows {
            let mut a = self.conn.prepare_cached(
                "SELECT a.name FROM outage_area oa JOIN area a ON a.id = oa.area_id WHERE oa.outage_id = ?1 ORDER BY a.sort_order, a.id",
            )?;
            let areas = a
                .query_map([id], |r| r.get(0))?
                .collect::<Result<Vec<String>, _>>()?;
            let mut m = self.conn.prepare_cached(
                "SELECT m.tag FROM outage_machine om JOIN machine m ON m.id = om.machine_id WHERE om.outage_id = ?1 ORDER BY m.tag",
            )?;
            let machines = m
                .query_map([id], |r| r.get(0))?
                .collect::<Result<Vec<String>, _>>()?;
            out.push(Outage {
                id,
                name,
                start,
                end,
                areas,
                machines,
            });
        }
        Ok(out)
    }

    /// Plans the replacement of a bearing life in an outage (status `planned`); re-planning an entry that
    /// exists updates its note and sets it back to planned. Returns the entry id.
    pub fn plan_life(&mut self, life_id: i64, outage_id: i64, note: &str) -> Result<i64> {
        let open: Option<bool> = self
            .conn
            .query_row(
                "SELECT removed IS NULL FROM bearing_life WHERE id = ?1",
                [life_id],
                |r| r.get(0),
            )
            .optional()?;
        match open {
            None => {
                return Err(StoreError::NotFound(format!(
                    "no bearing life with id {life_id}"
                )));
            }
            Some(false) => {
                return Err(StoreError::Invalid(format!(
                    "bearing life {life_id} has already been replaced"
                )));
            }
            Some(true) => {}
        }
        self.conn
            .query_row("SELECT id FROM outage WHERE id = ?1", [outage_id], |r| {
                r.get::<_, i64>(0)
            })
            .optional()?
            .ok_or_else(|| StoreError::NotFound(format!("no outage with id {outage_id}")))?;
        let id = self.conn.query_row(
            "INSERT INTO plan_entry (life_id, outage_id, status, note) VALUES (?1, ?2, 'planned', ?3)
             ON CONFLICT (life_id, outage_id) DO UPDATE SET status = 'planned', note = excluded.note
             RETURNING id",
            params![life_id, outage_id, note],
            |r| r.get(0),
        )?;
        Ok(id)
    }

    /// Removes a plan entry.
    pub fn unplan(&mut self, entry_id: i64) -> Result<()> {
        if self
            .conn
            .execute("DELETE FROM plan_entry WHERE id = ?1", [entry_id])?
            == 0
        {
            return Err(StoreError::NotFound(format!(
                "no plan entry with id {entry_id}"
            )));
        }
        Ok(())
    }

    /// Sets a plan entry's status to `cancelled` with a note.
    pub fn cancel_plan(&mut self, entry_id: i64, note: &str) -> Result<()> {
        let n = self.conn.execute(
            "UPDATE plan_entry SET status = 'cancelled', note = ?2 WHERE id = ?1",
            params![entry_id, note],
        )?;
        if n == 0 {
            return Err(StoreError::NotFound(format!(
                "no plan entry with id {entry_id}"
            )));
        }
        Ok(())
    }

    /// Marks a plan entry done: closes its bearing life on `replaced_on` with the found condition, starts
    /// a new life on the same position dated `replaced_on`, and moves readings taken on or after that
    /// day to the new life. Returns the new life's id.
    pub fn mark_done(
        &mut self,
        entry_id: i64,
        replaced_on: NaiveDate,
        found_condition: &str,
    ) -> Result<i64> {
        let tx = self
            .conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
        let (life_id, position_id, installed, removed): (i64, i64, NaiveDate, Option<NaiveDate>) =
            tx.query_row(
                "SELECT l.id, l.position_id, l.installed, l.removed FROM plan_entry p
                 JOIN bearing_life l ON l.id = p.life_id WHERE p.id = ?1",
                [entry_id],
                |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?, r.get(3)?)),
            )
            .optional()?
            .ok_or_else(|| StoreError::NotFound(format!("no plan entry with id {entry_id}")))?;
        if removed.is_some() {
            return Err(StoreError::Invalid(format!(
                "bearing life {life_id} has already been replaced"
            )));
        }
        if replaced_on <= installed {
            return Err(StoreError::Invalid(format!(
                "replacement date {replaced_on} is not after the installation date {installed}"
            )));
        }
        tx.execute(
            "UPDATE bearing_life SET removed = ?2, found_condition = ?3 WHERE id = ?1",
            params![life_id, replaced_on, found_condition],
        )?;
        tx.execute(
            "INSERT INTO bearing_life (position_id, installed) VALUES (?1, ?2)",
            params![position_id, replaced_on],
        )?;
        let new_life = tx.last_insert_rowid();
        tx.execute(
            "UPDATE plan_entry SET status = 'done' WHERE id = ?1",
            [entry_id],
        )?;
        crate::plant_db::relink_readings(&tx, position_id)?;
        // Readings after the replacement day now belong to the new life: their calls go stale.
        tx.execute(
            "INSERT INTO baseline_change (position_id, changed_at) VALUES (?1, ?2)
             ON CONFLICT (position_id) DO UPDATE SET changed_at = excluded.changed_at",
            params![position_id, crate::now_text()],
        )?;
        tx.commit()?;
        Ok(new_life)
    }

    /// Plan entries of an outage (all outages when `None`).
    pub fn plan_entries(&self, outage_id: Option<i64>) -> Result<Vec<PlanEntry>> {
        let mut stmt = self.conn.prepare(
            "SELECT p.id, p.life_id, p.outage_id, p.status, p.note, m.tag, bp.position
             FROM plan_entry p JOIN bearing_life l ON l.id = p.life_id
             JOIN bearing_position bp ON bp.id = l.position_id JOIN machine m ON m.id = bp.machine_id
             WHERE ?1 IS NULL OR p.outage_id = ?1 ORDER BY p.outage_id, m.tag, bp.position",
        )?;
        let rows = stmt.query_map([outage_id], |r| {
            Ok(PlanEntry {
                id: r.get(0)?,
                life_id: r.get(1)?,
                outage_id: r.get(2)?,
                status: PlanStatus::parse(&r.get::<_, String>(3)?).unwrap_or(PlanStatus::Planned),
                note: r.get(4)?,
                machine: r.get(5)?,
                position: r.get(6)?,
            })
        })?;
        Ok(rows.collect::<Result<Vec<_>, _>>()?)
    }

    /// Records (or replaces) the stage call of a reading.
    pub fn put_stage_call(
        &mut self,
        reading_id: i64,
        stage: u8,
        version: &str,
        evidence: &serde_json::Value,
    ) -> Result<()> {
        if stage > 4 {
            return Err(StoreError::Invalid(format!(
                "stage {stage} is outside 0..=4"
            )));
        }
        let n = self.conn.execute(
            "INSERT INTO stage_call (reading_id, stage, version, evidence, called_at, position_id, taken_at_utc)
             SELECT r.id, ?2, ?3, ?4, ?5, r.position_id, r.taken_at_utc FROM reading r WHERE r.id = ?1
             ON CONFLICT (reading_id) DO UPDATE SET stage = excluded.stage, version = excluded.version,
                evidence = excluded.evidence, called_at = excluded.called_at",
            params![reading_id, stage, version, serde_json::to_string(evidence)?, crate::now_text()],
        )?;
        if n == 0 {
            return Err(StoreError::Invalid(format!(
                "no reading {reading_id} to record a stage call on"
            )));
        }
        Ok(())
    }

    /// The stage call of a reading, if any.
    pub fn stage_call(&self, reading_id: i64) -> Result<Option<StageCall>> {
        let row = self
            .conn
            .query_row(
                "SELECT reading_id, stage, version, evidence, called_at FROM stage_call WHERE reading_id = ?1",
                [reading_id],
                |r| Ok((r.get::<_, i64>(0)?, r.get::<_, u8>(1)?, r.get::<_, String>(2)?, r.get::<_, String>(3)?, r.get::<_, String>(4)?)),
            )
            .optional()?;
        row.map(stage_call_from_row).transpose()
    }
}

pub(crate) fn stage_call_from_row(row: (i64, u8, String, String, String)) -> Result<StageCall> {
    let (reading_id, stage, version, evidence, called_at) = row;
    Ok(StageCall {
        reading_id,
        stage,
        version,
        evidence: serde_json::from_str(&evidence)?,
        called_at: crate::parse_utc(&called_at)?,
    })
}
