//! Invented plant files (no real site, brand, person or catalogue data). Each is a TOML file in this
//! crate's `plants/` folder, included as text, so a test can parse it, write it beside a route or edit
//! it with `str::replace`.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test fixtures: a failure here is a broken test"
)]

use std::fmt::Write as _;
use std::path::Path;

use chrono::NaiveDate;
use spallcast_store::{PlantFile, Store};

/// Tallow Creek Water Works as the store's tests know it: two bearing types (one by geometry, one by
/// factors), an intake pump with two bearings (one with a replaced life) and two points, a filter-hall
/// fan, and one outage taking down an area and a machine.
pub const TALLOW_CREEK: &str = include_str!("../plants/tallow_creek.toml");

/// Tallow Creek Water Works as the planner's tests know it: two intake pumps and a backwash blower in
/// two areas, and three outages.
pub const TALLOW_CREEK_OUTAGES: &str = include_str!("../plants/tallow_creek_outages.toml");

/// Test Reach Pumping Station, for the window tests: a lift pump whose drive-end bearing was replaced
/// on 2026-02-01 (`TP-P1-DE-H`, `TP-P1-NDE-H`), an extract fan, and two outages.
pub const TEST_REACH: &str = include_str!("../plants/test_reach.toml");

/// Hardening Test Works for the command-line hardening tests: one pump with two bearings and the four
/// points of [`HARDENING_POINTS`].
pub const HARDENING_WORKS: &str = include_str!("../plants/hardening_works.toml");

/// The points of [`HARDENING_WORKS`].
pub const HARDENING_POINTS: [&str; 4] = ["HC-M1-DE-H", "HC-M1-DE-V", "HC-M1-NDE-H", "HC-M1-NDE-A"];

/// Hardening Test Works for the store's hostile-input tests: one pump, one bearing (fault factors
/// given), points `P1` and `P2`.
pub const HOSTILE_WORKS: &str = include_str!("../plants/hostile_works.toml");

/// Marsh Lane Test Works for the stage runner's store test: one pump bearing position with a replaced
/// life and one point, `FL-P2-PDE-H`.
pub const MARSH_LANE: &str = include_str!("../plants/marsh_lane.toml");

/// Marrow Ridge Pumping Station with `points` points (`PH-P1-DE-0`, `PH-P1-DE-1`, …) on one booster
/// pump's drive end.
pub fn marrow_ridge(points: usize) -> String {
    let mut t = String::from(include_str!("../plants/marrow_ridge.toml"));
    for i in 0..points {
        write!(
            t,
            "    [[areas.machines.points]]\n    id = \"PH-P1-DE-{i}\"\n    bearing = \"DE\"\n    direction = \"H\"\n    sensor = \"accelerometer\"\n"
        )
        .unwrap();
    }
    t
}

/// Parses a date.
pub fn d(s: &str) -> NaiveDate {
    s.parse().unwrap()
}

/// A fresh database at `path` holding [`TALLOW_CREEK_OUTAGES`].
pub fn plant_store(path: &Path) -> Store {
    let mut store = Store::open(path).unwrap();
    let plant = PlantFile::parse(TALLOW_CREEK_OUTAGES, Path::new("plant.toml")).unwrap();
    store.apply_plant(&plant).unwrap();
    store
}
