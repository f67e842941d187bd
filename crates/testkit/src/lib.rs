//! Shared test fixtures for Spallcast's crates (a dev-dependency only, never published):
//!
//! - [`plants`]: invented plant files (no real site, brand, person or catalogue data), kept as TOML
//!   files in `plants/` beside this crate, and a store holding one;
//! - [`analyzers`]: small deterministic [`spallcast_store::ReadingAnalyzer`]s for import tests;
//! - [`wav`]: synthetic recordings, WAV files written through the formats crate, and hand-written
//!   RIFF/WAVE and dataset-58 bytes whose headers can lie;
//! - [`route`]: route folders (recordings plus `route.csv`);
//! - [`contents`]: what a database holds about its readings, checked for completeness;
//! - [`corpus`]: the committed fuzz corpora and regressions (`fuzz/corpus`, `fuzz/regressions`);
//! - [`tmpfs`]: a small file system of a test's own, for read-only and full-disk tests;
//! - [`plant_values`]: the plant-file values check shared by the `plant_values` fuzz target and the
//!   store's corpus replay test.
//!
//! Helpers panic on failure: a failure here is a broken test, and the test fails loudly.
#![forbid(unsafe_code)]
#![warn(missing_docs)]

pub mod analyzers;
pub mod contents;
pub mod corpus;
pub mod plant_values;
pub mod plants;
pub mod route;
pub mod tmpfs;
pub mod wav;
