//! Planning vocabulary shared by the store, the planner and the window: outages, the values for adding
//! or updating one, and the state of a plan entry.

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

/// A planned plant outage: the stop during which machines are down and bearings can be changed.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Outage {
    /// Database id (any unique number when built by hand).
    pub id: i64,
    /// Name, unique in the plant (e.g. "Spring intake shutdown").
    pub name: String,
    /// First day of the outage.
    pub start: NaiveDate,
    /// Last day of the outage (inclusive).
    pub end: NaiveDate,
    /// Areas taken down, by name.
    pub areas: Vec<String>,
    /// Extra machines taken down, by plant id (e.g. "IN-P1").
    pub machines: Vec<String>,
}

impl Outage {
    /// True when the outage takes the machine down: its area is listed, or the machine itself is.
    pub fn takes_down(&self, machine_id: &str, area: &str) -> bool {
        self.areas.iter().any(|a| a == area) || self.machines.iter().any(|m| m == machine_id)
    }

    /// Length in days, counting both ends.
    pub fn days(&self) -> i64 {
        (self.end - self.start).num_days() + 1
    }
}

/// Values for adding or updating an outage.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct OutageInput {
    /// Unique name.
    pub name: String,
    /// First day.
    pub start: NaiveDate,
    /// Last day.
    pub end: NaiveDate,
    /// Area names.
    pub areas: Vec<String>,
    /// Machine ids (tags).
    pub machines: Vec<String>,
}

/// State of a planned replacement.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PlanStatus {
    /// To be done in the outage.
    Planned,
    /// Done: the life was closed and a new one started.
    Done,
    /// Called off.
    Cancelled,
}

impl PlanStatus {
    /// The word stored in the database and written to exports.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Planned => "planned",
            Self::Done => "done",
            Self::Cancelled => "cancelled",
        }
    }

    /// Parses the stored word.
    pub fn parse(word: &str) -> Option<Self> {
        match word {
            "planned" => Some(Self::Planned),
            "done" => Some(Self::Done),
            "cancelled" => Some(Self::Cancelled),
            _ => None,
        }
    }
}

impl std::fmt::Display for PlanStatus {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn status_words_round_trip_and_outage_days_count_both_ends() {
        for s in [PlanStatus::Planned, PlanStatus::Done, PlanStatus::Cancelled] {
            assert_eq!(PlanStatus::parse(s.as_str()), Some(s));
            assert_eq!(
                serde_json::to_string(&s).unwrap(),
                format!("\"{}\"", s.as_str())
            );
        }
        assert_eq!(PlanStatus::parse("postponed"), None);
        let day = |d: u32| NaiveDate::from_ymd_opt(2027, 3, d).unwrap();
        let o = Outage {
            id: 1,
            name: "Spring stop".into(),
            start: day(6),
            end: day(8),
            areas: vec!["Intake".into()],
            machines: vec!["CT-F2".into()],
        };
        assert_eq!(o.days(), 3);
        assert!(o.takes_down("IN-P1", "Intake"));
        assert!(o.takes_down("CT-F2", "Cooling"));
        assert!(!o.takes_down("CT-F1", "Cooling"));
    }
}
