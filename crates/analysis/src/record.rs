//! The typed record of one stage assessment, as stored with every reading's stage call.
//!
//! Defined here, once, because it holds the analysis crate's own types ([`StageCall`], [`Forecast`]).
//! The pipeline writes it (serialised with serde) into the store's `stage_call.evidence`; the planner
//! and the window read it back into this type, and a document that is not a record of the current
//! [`STAGE_RECORD_SCHEMA`] is "no record" (the call's stage number still shows). There is no other
//! accepted shape.
//!
//! Schema history: 1 — `{schema_version, point, call, forecast}`. Rows written before the version
//! existed (`{call, forecast, point}`) are rewritten to 1 by store migration 5. Schema 1 later gained
//! the optional `life_location` (absent in rows written before it, read as `None`; the stage-logic
//! version changed with it, so those rows are re-assessed when a database is opened).

use serde::{Deserialize, Serialize};

use crate::forecast::Forecast;
use crate::stage::{LifeLocation, StageCall};

/// The schema version written into every [`StageRecord`]. Raise it when the record's shape changes,
/// and add a store migration that rewrites (or marks stale) the stored rows.
pub const STAGE_RECORD_SCHEMA: u32 = 1;

/// What the stage assessment produced for one reading.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StageRecord {
    /// Always [`STAGE_RECORD_SCHEMA`] when written by this build.
    pub schema_version: u32,
    /// Measurement point (tag) of the reading.
    pub point: String,
    /// The stage call.
    pub call: StageCall,
    /// The forecast as it stood at this reading (`None` when nothing could be projected).
    pub forecast: Option<Forecast>,
    /// The bearing life's location as it stood at this reading: the calls of every point of the
    /// life up to this reading's time accumulated ([`crate::stage::life_location`]).
    #[serde(default)]
    pub life_location: Option<LifeLocation>,
}

impl StageRecord {
    /// A record of the current schema.
    pub fn new(point: impl Into<String>, call: StageCall, forecast: Option<Forecast>) -> Self {
        StageRecord {
            schema_version: STAGE_RECORD_SCHEMA,
            point: point.into(),
            call,
            forecast,
            life_location: None,
        }
    }

    /// The record with the life's location as it stood at this reading.
    #[must_use]
    pub fn with_life_location(mut self, location: LifeLocation) -> Self {
        self.life_location = Some(location);
        self
    }

    /// True when the record is of the schema this build reads.
    pub fn is_current(&self) -> bool {
        self.schema_version == STAGE_RECORD_SCHEMA
    }

    /// The sentences shown beside the call: its evidence, then what the recording cannot show.
    pub fn sentences(&self) -> Vec<String> {
        self.call
            .evidence
            .iter()
            .chain(&self.call.limits)
            .cloned()
            .collect()
    }
}
