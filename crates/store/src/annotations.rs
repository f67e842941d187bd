//! The analyst's own records on a bearing: notes (observations, lubrication and maintenance events)
//! and the readings marked as a life's baseline.

use chrono::NaiveDate;
use rusqlite::{OptionalExtension as _, params};
use serde::Serialize;

use crate::Store;
use crate::error::{Result, StoreError};

/// Longest note text, characters.
pub const NOTE_MAX_CHARS: usize = 2000;

/// What a note records.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum NoteKind {
    /// Something seen, heard or measured on the machine.
    Observation,
    /// Grease or oil added or changed.
    Lubrication,
    /// Work done on the machine (alignment, balancing, a seal, a coupling).
    Maintenance,
}

impl NoteKind {
    /// Every kind, in display order.
    pub const ALL: [NoteKind; 3] = [
        NoteKind::Observation,
        NoteKind::Lubrication,
        NoteKind::Maintenance,
    ];

    /// The stored (and command-line) name.
    pub fn as_str(self) -> &'static str {
        match self {
            NoteKind::Observation => "observation",
            NoteKind::Lubrication => "lubrication",
            NoteKind::Maintenance => "maintenance",
        }
    }

    /// Parses a stored or typed name.
    pub fn parse(text: &str) -> Option<NoteKind> {
        NoteKind::ALL
            .into_iter()
            .find(|k| k.as_str().eq_ignore_ascii_case(text.trim()))
    }
}

impl std::fmt::Display for NoteKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// A note to store.
#[derive(Debug, Clone, PartialEq)]
pub struct NewNote {
    /// The bearing position.
    pub position_id: i64,
    /// A reading of that position it is about, if any.
    pub reading_id: Option<i64>,
    /// The day it refers to.
    pub on_day: NaiveDate,
    /// What it records.
    pub kind: NoteKind,
    /// The text (1 to [`NOTE_MAX_CHARS`] characters, no control characters except line breaks).
    pub text: String,
}

/// A stored note.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Note {
    /// Note id.
    pub id: i64,
    /// The bearing position.
    pub position_id: i64,
    /// The reading it is about, if any.
    pub reading_id: Option<i64>,
    /// The day it refers to.
    pub on_day: NaiveDate,
    /// What it records.
    pub kind: NoteKind,
    /// The text.
    pub text: String,
}

impl Store {
    /// Stores a note; returns its id. The text is trimmed; an empty or over-long text, control
    /// characters, or a reading of another position are refused.
    pub fn add_note(&mut self, note: &NewNote) -> Result<i64> {
        let text = note.text.trim();
        if text.is_empty() {
            return Err(StoreError::Invalid("a note needs a text".into()));
        }
        if text.chars().count() > NOTE_MAX_CHARS {
            return Err(StoreError::Invalid(format!(
                "a note holds at most {NOTE_MAX_CHARS} characters"
            )));
        }
        if text.chars().any(|c| c.is_control() && c != '\n') {
            return Err(StoreError::Invalid(
                "a note may not hold control characters (other than line breaks)".into(),
            ));
        }
        let known: Option<i64> = self
            .conn
            .query_row(
                "SELECT id FROM bearing_position WHERE id = ?1",
                [note.position_id],
                |r| r.get(0),
            )
            .optional()?;
        if known.is_none() {
            return Err(StoreError::NotFound(format!(
                "no bearing position {}",
                note.position_id
            )));
        }
        if let Some(reading) = note.reading_id {
            let position: Option<i64> = self
                .conn
                .query_row(
                    "SELECT position_id FROM reading WHERE id = ?1",
                    [reading],
                    |r| r.get(0),
                )
                .optional()?;
            if position != Some(note.position_id) {
                return Err(StoreError::Invalid(format!(
                    "reading {reading} is not a reading of this bearing"
                )));
            }
        }
        self.conn.execute(
            "INSERT INTO note (position_id, reading_id, on_day, kind, text, created_at)
             VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
            params![
                note.position_id,
                note.reading_id,
                note.on_day,
                note.kind.as_str(),
                text,
                crate::now_text()
            ],
        )?;
        Ok(self.conn.last_insert_rowid())
    }

    /// Notes of one bearing position, oldest day first.
    pub fn notes(&self, position_id: i64) -> Result<Vec<Note>> {
        let mut stmt = self.conn.prepare_cached(
            "SELECT id, position_id, reading_id, on_day, kind, text FROM note
             WHERE position_id = ?1 ORDER BY on_day, id",
        )?;
        let rows = stmt.query_map([position_id], |r| {
            Ok((
                r.get::<_, i64>(0)?,
                r.get::<_, i64>(1)?,
                r.get::<_, Option<i64>>(2)?,
                r.get::<_, NaiveDate>(3)?,
                r.get::<_, String>(4)?,
                r.get::<_, String>(5)?,
            ))
        })?;
        let mut out = Vec::new();
        for row in rows {
            let (id, position_id, reading_id, on_day, kind, text) = row?;
            // A kind this build does not know (a newer build wrote it) reads as an observation.
            let kind = NoteKind::parse(&kind).unwrap_or(NoteKind::Observation);
            out.push(Note {
                id,
                position_id,
                reading_id,
                on_day,
                kind,
                text,
            });
        }
        Ok(out)
    }

    /// Deletes a note.
    pub fn delete_note(&mut self, id: i64) -> Result<()> {
        let n = self.conn.execute("DELETE FROM note WHERE id = ?1", [id])?;
        if n == 0 {
            return Err(StoreError::NotFound(format!("no note {id}")));
        }
        Ok(())
    }

    /// Makes `reading_ids` the baseline of their bearing life (replacing any earlier marks on that
    /// life); an empty list clears the marks of `position_id`'s lives. The readings must all be of
    /// one life of `position_id`. The position's stage calls go stale (they are recomputed by the next
    /// command that reads them).
    pub fn set_baseline(&mut self, position_id: i64, reading_ids: &[i64]) -> Result<()> {
        let tx = self
            .conn
            .transaction_with_behavior(rusqlite::TransactionBehavior::Immediate)?;
        let mut life: Option<Option<i64>> = None;
        for id in reading_ids {
            let row: Option<(i64, Option<i64>)> = tx
                .query_row(
                    "SELECT position_id, life_id FROM reading WHERE id = ?1",
                    [id],
                    |r| Ok((r.get(0)?, r.get(1)?)),
                )
                .optional()?;
            let Some((position, life_id)) = row else {
                return Err(StoreError::NotFound(format!("no reading with id {id}")));
            };
            if position != position_id {
                return Err(StoreError::Invalid(format!(
                    "reading {id} is not a reading of this bearing"
                )));
            }
            if life_id.is_none() {
                return Err(StoreError::Invalid(format!(
                    "reading {id} is in no bearing life"
                )));
            }
            match life {
                None => life = Some(life_id),
                Some(l) if l != life_id => {
                    return Err(StoreError::Invalid(
                        "a baseline is one life's readings: these readings span two lives".into(),
                    ));
                }
                Some(_) => {}
            }
        }
        let now = crate::now_text();
        match life.flatten() {
            Some(life_id) => {
                tx.execute(
                    "DELETE FROM baseline_mark WHERE reading_id IN (SELECT id FROM reading WHERE life_id = ?1)",
                    [life_id],
                )?;
                for id in reading_ids {
                    tx.execute(
                        "INSERT OR REPLACE INTO baseline_mark (reading_id, marked_at) VALUES (?1, ?2)",
                        params![id, now],
                    )?;
                }
            }
            None => {
                tx.execute(
                    "DELETE FROM baseline_mark WHERE reading_id IN (SELECT id FROM reading WHERE position_id = ?1)",
                    [position_id],
                )?;
            }
        }
        tx.execute(
            "INSERT INTO baseline_change (position_id, changed_at) VALUES (?1, ?2)
             ON CONFLICT (position_id) DO UPDATE SET changed_at = excluded.changed_at",
            params![position_id, now],
        )?;
        tx.commit()?;
        Ok(())
    }
}
