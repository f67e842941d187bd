//! Glue between Spallcast's store, analysis and simulator.
//!
//! - [`SpallcastAnalyzer`]: the real [`ReadingAnalyzer`](spallcast_store::ReadingAnalyzer) handed to the
//!   store's import. It runs the analysis crate's `diagnose` on each reading and returns the stage
//!   indicators as named scalars plus the whole diagnosis as the JSON document.
//! - [`demo`]: creation of the demo plant database (simulated routes imported through the normal import).
#![forbid(unsafe_code)]
#![warn(missing_docs)]

mod analyzer;
pub mod assess;
pub mod demo;

pub use analyzer::{ANALYZER_VERSION, SpallcastAnalyzer};
pub use demo::{DemoReport, create_demo_database, default_db_path, ensure_demo_database};
