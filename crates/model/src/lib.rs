//! Spallcast's shared vocabulary: the plain domain types that every other crate uses, defined once.
//!
//! This is the ground floor of the workspace: it depends on `serde` and `chrono` only, and every other
//! Spallcast crate may depend on it. It holds data and the few formulas that define the data (the
//! kinematic fault factors from bearing geometry, unit conversions), never computation on signals
//! (that is `spallcast-analysis`), storage (`spallcast-store`) or planning (`spallcast-plan`).
//!
//! The crates that first defined these types re-export them under their old paths
//! (`spallcast_analysis::FaultFactors`, `spallcast_analysis::stage::Location`,
//! `spallcast_store::Lubrication`, ...), so either path names the same type.
//!
//! The simulator (`spallcast-simulate`) keeps its own fault and lubrication types on purpose: it is the
//! independent oracle the analysis is graded against, and must not share code with it.
#![forbid(unsafe_code)]
#![warn(missing_docs)]

mod kinematics;
mod plan;
mod plant;
pub mod units;

pub use kinematics::{FaultFactors, FaultFrequencies, FaultKind, Location};
pub use plan::{Outage, OutageInput, PlanStatus};
pub use plant::{Lubrication, MachineGroup, Support};
