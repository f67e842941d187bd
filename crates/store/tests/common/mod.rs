//! Shared helpers for the store's integration tests: the fixtures come from `spallcast-testkit`
//! (re-exported under the names these tests use); [`hostile`] holds the hostile-input tests' own
//! fixture.
#![allow(
    dead_code,
    unused_imports,
    reason = "each test binary uses a different part"
)]

pub mod hostile;

pub use spallcast_testkit::analyzers::TestAnalyzer;
/// An invented plant (no real site, person or catalogue data).
pub use spallcast_testkit::plants::TALLOW_CREEK as PLANT;
pub use spallcast_testkit::route::{Row, quiet, write_manifest};
pub use spallcast_testkit::wav::{sine, write_wav};
