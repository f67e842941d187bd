//! Taking back a planner's change: a snapshot of the planning tables (outages and their scope, plan
//! entries, bearing lives) before and after a change, and a restore that puts the "before" rows back.
//!
//! A restore only runs when the tables still hold the "after" rows, so an undo never overwrites a
//! change made since by another window or command; it then changes only the rows that differ (a life
//! that a "mark done" closed is reopened in place, the life it started is removed), links every
//! reading of the positions touched to its life again, and marks their stage calls stale so the next
//! command that reads them recomputes them.

use std::collections::BTreeMap;

use rusqlite::types::Value;
use rusqlite::{Connection, params_from_iter};

use crate::Store;
use crate::error::{Result, StoreError};

/// The planning tables, in the order rows are inserted (parents first), with their key columns.
const TABLES: [(&str, &[&str], &[&str]); 5] = [
    (
        "bearing_life",
        &["id"],
        &["position_id", "installed", "removed", "found_condition"],
    ),
    ("outage", &["id"], &["name", "start_date", "end_date"]),
    ("outage_area", &["outage_id", "area_id"], &[]),
    ("outage_machine", &["outage_id", "machine_id"], &[]),
    (
        "plan_entry",
        &["id"],
        &["life_id", "outage_id", "status", "note"],
    ),
];

/// Key values and other values of one row.
type Rows = BTreeMap<Vec<Key>, Vec<Value>>;

/// A key value (integers only: every key of the planning tables is an integer id).
type Key = i64;

/// The rows of the planning tables at one moment (see the module doc). Opaque: taken with
/// [`Store::plan_snapshot`] and given back to [`Store::restore_plan`].
#[derive(Debug, Clone, PartialEq)]
pub struct PlanSnapshot {
    tables: Vec<Rows>,
}

impl PlanSnapshot {
    /// Number of rows held, over all the planning tables.
    #[must_use]
    pub fn rows(&self) -> usize {
        self.tables.iter().map(BTreeMap::len).sum()
    }
}

fn read(conn: &Connection) -> Result<PlanSnapshot> {
    let mut tables = Vec::with_capacity(TABLES.len());
    for (table, keys, cols) in TABLES {
        let all: Vec<&str> = keys.iter().chain(cols.iter()).copied().collect();
        let sql = format!("SELECT {} FROM {table}", all.join(", "));
        let mut stmt = conn.prepare(&sql)?;
        let mut rows = Rows::new();
        let mut q = stmt.query([])?;
        while let Some(r) = q.next()? {
            let mut key = Vec::with_capacity(keys.len());
            for i in 0..keys.len() {
                key.push(r.get::<_, i64>(i)?);
            }
            let mut vals = Vec::with_capacity(cols.len());
            for i in 0..cols.len() {
                vals.push(r.get::<_, Value>(keys.len() + i)?);
            }
            rows.insert(key, vals);
        }
        tables.push(rows);
    }
    Ok(PlanSnapshot { tables })
}

impl Store {
    /// The planning tables as they are now (see [`PlanSnapshot`]).
    ///
    /// # Errors
    /// A database error.
    pub fn plan_snapshot(&self) -> Result<PlanSnapshot> {
        read(&self.conn)
    }

    /// Puts the planning tables back as they were in `before`, provided they still are as in `after`
    /// (the state the change being taken back left). Returns the number of rows changed.
    ///
    /// # Errors
    /// [`StoreError::Invalid`] when the plan was changed since `after` (nothing is changed then); a
    /// database error.
    pub fn restore_plan(&mut self, before: &PlanSnapshot, after: &PlanSnapshot) -> Result<usize> {
        let tx = self
            .conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
        let now = read(&tx)?;
        if now != *after {
            return Err(StoreError::Invalid(
                "the plan has changed since (in this window or another program): nothing was undone"
                    .to_owned(),
            ));
        }
        let mut positions = std::collections::BTreeSet::new();
        let mut changed = 0;
        for (table_rows, (ours, (table, keys, cols))) in
            before.tables.iter().zip(now.tables.iter().zip(TABLES))
        {
            let where_key = key_condition(keys);
            // Rows that differ or are missing: update in place or insert (never delete and insert,
            // which would cascade to the rows that refer to them).
            for (key, vals) in table_rows {
                match ours.get(key) {
                    Some(v) if v == vals => continue,
                    Some(_) => {
                        let set = cols
                            .iter()
                            .enumerate()
                            .map(|(i, c)| format!("{c} = ?{}", keys.len() + i + 1))
                            .collect::<Vec<_>>()
                            .join(", ");
                        let sql = format!("UPDATE {table} SET {set} WHERE {where_key}");
                        tx.execute(&sql, params_from_iter(values(key, vals)))?;
                    }
                    None => {
                        let all: Vec<&str> = keys.iter().chain(cols.iter()).copied().collect();
                        let marks: Vec<String> = (1..=all.len()).map(|i| format!("?{i}")).collect();
                        let sql = format!(
                            "INSERT INTO {table} ({}) VALUES ({})",
                            all.join(", "),
                            marks.join(", ")
                        );
                        tx.execute(&sql, params_from_iter(values(key, vals)))?;
                    }
                }
                changed += 1;
                if table == "bearing_life"
                    && let Some(Value::Integer(p)) = vals.first()
                {
                    positions.insert(*p);
                }
            }
        }
        // Rows added since: removed, children first.
        for (table_rows, (ours, (table, keys, _))) in before
            .tables
            .iter()
            .zip(now.tables.iter().zip(TABLES))
            .rev()
        {
            let where_key = key_condition(keys);
            for (key, vals) in ours {
                if table_rows.contains_key(key) {
                    continue;
                }
                if table == "bearing_life"
                    && let Some(Value::Integer(p)) = vals.first()
                {
                    positions.insert(*p);
                }
                let sql = format!("DELETE FROM {table} WHERE {where_key}");
                tx.execute(
                    &sql,
                    params_from_iter(key.iter().map(|k| Value::Integer(*k))),
                )?;
                changed += 1;
            }
        }
        let stamp = crate::now_text();
        for position in positions {
            crate::plant_db::relink_readings(&tx, position)?;
            tx.execute(
                "INSERT INTO baseline_change (position_id, changed_at) VALUES (?1, ?2)
                 ON CONFLICT (position_id) DO UPDATE SET changed_at = excluded.changed_at",
                rusqlite::params![position, stamp],
            )?;
        }
        tx.commit()?;
        Ok(changed)
    }
}

/// `k1 = ?1 AND k2 = ?2 ...` for a table's key columns.
fn key_condition(keys: &[&str]) -> String {
    keys.iter()
        .enumerate()
        .map(|(i, k)| format!("{k} = ?{}", i + 1))
        .collect::<Vec<_>>()
        .join(" AND ")
}

fn values(key: &[Key], vals: &[Value]) -> Vec<Value> {
    key.iter()
        .map(|k| Value::Integer(*k))
        .chain(vals.iter().cloned())
        .collect()
}
