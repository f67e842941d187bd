//! Glue between Spallcast's store, analysis and simulator.
//!
//! - [`SpallcastAnalyzer`]: the real [`ReadingAnalyzer`](spallcast_store::ReadingAnalyzer) handed to the
//!   store's import. It runs the analysis crate's `diagnose` on each reading and returns the stage
//!   indicators as named scalars plus the whole diagnosis as the JSON document.
//! - [`update`]: the use cases that bring a database up to date, with one error policy: re-analysis and
//!   stage-call completion on opening ([`update::bring_up_to_date`]), and route import followed by the
//!   assessment ([`update::import_and_assess`]).
//! - [`error`]: the pipeline's error enum.
//! - [`demo`]: creation of the demo plant database (simulated routes imported through the normal import).
#![forbid(unsafe_code)]
#![warn(missing_docs)]

mod analyzer;
pub mod assess;
pub mod demo;
pub mod error;
pub mod update;

pub use analyzer::{ANALYZER_VERSION, SpallcastAnalyzer};
pub use demo::{DemoReport, create_demo_database, default_db_path, ensure_demo_database};
pub use error::PipelineError;
