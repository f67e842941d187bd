//! The plain data the planning logic works on: outages, bearing lives with their forecast, plan entries.
//!
//! These structs carry no database handle. The store adapter ([`crate::source`]) fills them; tests and the
//! window may build them by hand.

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

/// A planned plant outage: shared vocabulary (`spallcast-model`), the same type the store returns.
pub use spallcast_model::Outage;

/// One life of a bearing at a machine position (one installed bearing, from fitting to removal).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct BearingLife {
    /// Database id of the life.
    pub life_id: i64,
    /// Machine id in the plant file (e.g. "IN-P1").
    pub machine_id: String,
    /// Machine name (e.g. "Intake pump 1").
    pub machine_name: String,
    /// Area the machine stands in.
    pub area: String,
    /// Bearing position on the machine (e.g. "MNDE").
    pub position: String,
    /// Bearing type designation.
    pub bearing_type: String,
    /// "grease" or "oil".
    pub lubrication: String,
    /// Date this life began.
    pub installed: NaiveDate,
}

impl BearingLife {
    /// A short label: `machine position` (e.g. "IN-P1 MNDE").
    pub fn label(&self) -> String {
        format!("{} {}", self.machine_id, self.position)
    }
}

/// The latest stage call and forecast for a bearing life.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Forecast {
    /// Stage of rolling-element bearing failure, 0 (no sign) to 4.
    pub stage: u8,
    /// The evidence behind the call, in words.
    pub evidence: String,
    /// Replace by this date: the end of the best window (between stage 2 and stage 3).
    pub replace_by: NaiveDate,
    /// From this date the bearing is at risk of failing in service.
    pub risk_from: NaiveDate,
    /// Where the defect is over the bearing's life (the location `spallcast bearings` shows), when
    /// the stored record holds one.
    pub location: Option<LifeLocationCall>,
}

/// A bearing life's fault location with its confidence, as the planner's exports show it.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct LifeLocationCall {
    /// The location ("unclear" is [`spallcast_model::Location::Unknown`]).
    pub location: spallcast_model::Location,
    /// Confidence, whole percent (0–100).
    pub confidence_pct: u8,
}

impl LifeLocationCall {
    /// "outer race (87 %)"; "unclear" when the evidence does not settle it; "none" when no defect
    /// tone was found over the life.
    pub fn label(&self) -> String {
        match self.location {
            spallcast_model::Location::Unknown => "unclear".to_owned(),
            spallcast_model::Location::None => "none".to_owned(),
            l => format!("{} ({} %)", l.name(), self.confidence_pct),
        }
    }
}

/// A bearing life that needs a replacement slot: the life and its forecast.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct BearingNeed {
    /// The bearing life.
    pub life: BearingLife,
    /// Its forecast.
    pub forecast: Forecast,
}

/// State of a planned replacement: shared vocabulary (`spallcast-model`), the same type the store
/// returns.
pub use spallcast_model::PlanStatus;

/// A bearing replacement placed in an outage.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct PlanEntry {
    /// Database id of the entry.
    pub id: i64,
    /// The outage it is planned in.
    pub outage_id: i64,
    /// Planned, done or cancelled.
    pub status: PlanStatus,
    /// Free note from the planner.
    pub note: String,
    /// The bearing life being replaced.
    pub life: BearingLife,
    /// Its forecast when one exists (a life closed by a done replacement may have none).
    pub forecast: Option<Forecast>,
}
