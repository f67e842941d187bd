//! Deterministic bearing-vibration simulator and demo-route generator for Spallcast.
//!
//! [`simulate`] synthesises one acceleration reading (in g) of a machine with a rolling-element
//! bearing in a given [`Condition`]: machine background (1x, 2x, noise-excited structural modes,
//! sensor noise) plus, for a defect, a train of impacts at the defect frequency that ring the
//! bearing and ultrasonic resonances, shaped stage by stage after the four-stage model.
//! [`Progression`] maps days since fault onset, lubrication and speed to a stage and severity.
//! [`generate_demo_routes`] turns the invented demo plant (`demo-plant/`) into 18 monthly route
//! folders that Spallcast imports; [`dated_demo`] first moves its dates so the last route day falls in
//! the week before the day the demo is built.
//!
//! Conventions: frequencies in Hz, acceleration in g, bearing factors in orders of shaft speed
//! with BSF in the 1x ball-spin convention; a rolling-element defect strikes at 2×BSF.
//!
//! Independent oracle: the simulator keeps its own `FaultKind`, `Lubrication` and factor types and
//! does not use `spallcast-model` or the analysis crate. The analysis is graded against it, so the two
//! must not share code (a shared bug would pass unseen).
//!
//! Everything is deterministic from the seed: the same inputs give the same bytes.
#![forbid(unsafe_code)]
#![warn(missing_docs)]

mod corpus;
mod demo;
mod error;
mod history;
mod model;
mod progression;
mod signal;

pub use corpus::{CorpusExtras, CorpusReading, hard_corpus};
pub use demo::{
    BAD_RECORDING_SAMPLES, DatedDemo, DemoSummary, PLANT_TOML, SCENARIO_TOML, TruthRow, dated_demo,
    demo_dir_default, demo_truth_from_str, generate_demo_routes, generate_demo_routes_from_str,
    shift_dates,
};
pub use error::SimError;
pub use history::{HardMachine, hard_machine};
pub use model::{
    BearingFactors, Condition, FaultKind, Lubrication, MachineParams, Resonance, Stage,
    StructuralMode,
};
pub use progression::{GREASE_STAGE_DAYS, OIL_LIFE_FACTOR, Progression, REFERENCE_RPM};
pub use signal::{BANDWIDTH_FRACTION, simulate};
