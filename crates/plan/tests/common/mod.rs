//! Shared fixtures: an invented plant (no real site, brand or catalogue data).
#![allow(dead_code, reason = "each test binary uses a different part")]
#![allow(
    clippy::unwrap_used,
    reason = "test fixtures: a failure here is a broken test"
)]

use std::path::Path;

use chrono::NaiveDate;
use spallcast_store::{PlantFile, Store};

/// An invented two-area plant with three outages.
pub const PLANT_TOML: &str = r#"
[site]
name = "Tallow Creek Water Works"
timezone_offset = "+01:00"

[[bearing_types]]
designation = "TCX-209"
kind = "deep-groove ball"
rolling_elements = 9
element_diameter_mm = 12.7
pitch_diameter_mm = 65.0
contact_angle_deg = 0.0

[[areas]]
name = "Intake"
  [[areas.machines]]
  id = "IN-P1"
  name = "Intake pump 1"
  kind = "pump"
  nominal_rpm = 1480.0
  iso_group = 2
  iso_support = "rigid"
    [[areas.machines.bearings]]
    position = "MNDE"
    description = "Motor non-drive end"
    bearing_type = "TCX-209"
    lubrication = "grease"
    installed = "2024-02-12"
    [[areas.machines.points]]
    id = "IN-P1-MNDE-H"
    bearing = "MNDE"
    direction = "H"
    sensor = "accelerometer"
    sensitivity_mv_per_g = 100.0
  [[areas.machines]]
  id = "IN-P2"
  name = "Intake pump 2"
  kind = "pump"
  nominal_rpm = 1480.0
  iso_group = 2
  iso_support = "rigid"
    [[areas.machines.bearings]]
    position = "MDE"
    description = "Motor drive end"
    bearing_type = "TCX-209"
    lubrication = "oil"
    installed = "2023-06-01"

[[areas]]
name = "Filters"
  [[areas.machines]]
  id = "FI-B1"
  name = "Backwash blower"
  kind = "fan"
  nominal_rpm = 2960.0
  iso_group = 2
  iso_support = "flexible"
    [[areas.machines.bearings]]
    position = "FDE"
    description = "Fan drive end"
    bearing_type = "TCX-209"
    lubrication = "grease"
    installed = "2025-01-20"

[[outages]]
name = "Winter intake stop"
start = "2027-01-11"
end = "2027-01-13"
areas = ["Intake"]

[[outages]]
name = "Spring intake shutdown"
start = "2027-03-08"
end = "2027-03-12"
areas = ["Intake"]

[[outages]]
name = "Filter hall stop"
start = "2027-04-05"
end = "2027-04-06"
areas = ["Filters"]
"#;

/// Parses a date.
pub fn d(s: &str) -> NaiveDate {
    s.parse().unwrap()
}

/// A fresh database at `path` holding the plant.
pub fn plant_store(path: &Path) -> Store {
    let mut store = Store::open(path).unwrap();
    let plant = PlantFile::parse(PLANT_TOML, Path::new("plant.toml")).unwrap();
    store.apply_plant(&plant).unwrap();
    store
}
