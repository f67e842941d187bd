//! Plant file: parse, apply, export, round trip, idempotence and clear errors.
#![allow(
    clippy::unwrap_used,
    clippy::float_cmp,
    reason = "tests: a panic is a failure"
)]
mod common;

use std::path::Path;

use common::PLANT;
use spallcast_store::{PlantFile, Store, StoreError};

fn parse(text: &str) -> PlantFile {
    PlantFile::parse(text, Path::new("plant.toml")).unwrap()
}

#[test]
fn round_trip_parse_apply_export_parse() {
    let dir = tempfile::tempdir().unwrap();
    let mut store = Store::open(&dir.path().join("p.db")).unwrap();
    let plant = parse(PLANT);
    store.apply_plant(&plant).unwrap();
    let exported = store.export_plant().unwrap();
    let path = dir.path().join("exported.toml");
    exported.write(&path).unwrap();
    let reparsed = PlantFile::read(&path).unwrap();
    // Bearing types come back sorted by designation; everything else keeps file order.
    let mut expected = plant.clone();
    expected
        .bearing_types
        .sort_by(|a, b| a.designation.cmp(&b.designation));
    assert_eq!(reparsed, expected);
}

#[test]
fn applying_the_same_file_twice_changes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let mut store = Store::open(&dir.path().join("p.db")).unwrap();
    let plant = parse(PLANT);
    let first = store.apply_plant(&plant).unwrap();
    // site + 2 types + 2 areas + 2 machines + 3 positions + 4 lives + 3 points + 1 outage.
    assert_eq!(first.inserted, 18, "{first:?}");
    let second = store.apply_plant(&plant).unwrap();
    assert!(second.is_unchanged(), "{second:?}");
    let tree = store.plant_tree().unwrap();
    assert_eq!(tree.areas.len(), 2);
    assert_eq!(tree.areas[0].machines[0].bearings.len(), 2);
}

#[test]
fn an_edit_updates_in_place_and_a_later_install_starts_a_new_life() {
    let dir = tempfile::tempdir().unwrap();
    let mut store = Store::open(&dir.path().join("p.db")).unwrap();
    store.apply_plant(&parse(PLANT)).unwrap();
    let edited = PLANT.replace("name = \"Backwash fan\"", "name = \"Backwash fan B\"").replace(
        "installed = \"2025-01-20\"",
        "installed = \"2026-01-05\"\n    history = [ { installed = \"2025-01-20\", removed = \"2026-01-05\", found = \"cage wear\" } ]",
    );
    let sum = store.apply_plant(&parse(&edited)).unwrap();
    assert_eq!(sum.inserted, 1, "the new life");
    assert!(
        sum.updated >= 2,
        "machine name and the closed life: {sum:?}"
    );
    let tree = store.plant_tree().unwrap();
    let fan = &tree.areas[1].machines[0];
    assert_eq!(fan.name, "Backwash fan B");
    let lives = store.lives(fan.bearings[0].position_id).unwrap();
    assert_eq!(lives.len(), 2);
    assert_eq!(lives[0].found_condition.as_deref(), Some("cage wear"));
    assert_eq!(lives[0].removed, Some(lives[1].installed));
    assert_eq!(fan.bearings[0].current_life_id, Some(lives[1].id));
}

#[test]
fn unknown_key_names_the_file_and_the_key() {
    let text = PLANT.replace(
        "lubrication = \"oil\"",
        "lubrication = \"oil\"\n    lubricant_brand = \"x\"",
    );
    let err = PlantFile::parse(&text, Path::new("site/plant.toml")).unwrap_err();
    let msg = err.to_string();
    assert!(matches!(err, StoreError::PlantFile { .. }));
    assert!(msg.contains("site/plant.toml"), "{msg}");
    assert!(msg.contains("lubricant_brand"), "{msg}");
}

#[test]
fn inconsistent_plants_are_refused_with_the_item_named() {
    let cases = [
        (
            PLANT.replace("bearing_type = \"TCR-310\"", "bearing_type = \"NOPE-1\""),
            "NOPE-1",
        ),
        (
            PLANT.replace("bearing = \"PDE\"", "bearing = \"PNDE\""),
            "PNDE",
        ),
        (PLANT.replace("id = \"FH-F1\"", "id = \"IN-P1\""), "IN-P1"),
        (PLANT.replace("iso_group = 1", "iso_group = 3"), "iso_group"),
        (
            PLANT.replace("machines = [\"FH-F1\"]", "machines = [\"XX-9\"]"),
            "XX-9",
        ),
        (
            PLANT.replace("pitch_diameter_mm = 65.0", "pitch_diameter_mm = 5.0"),
            "TCX-209",
        ),
        (
            PLANT.replace("direction = \"A\"", "direction = \"Z\""),
            "direction",
        ),
    ];
    for (text, needle) in cases {
        let err = PlantFile::parse(&text, Path::new("p.toml"))
            .unwrap_err()
            .to_string();
        assert!(
            err.contains(needle) && err.contains("p.toml"),
            "{needle}: {err}"
        );
    }
}

#[test]
fn geometry_gives_fault_factors_in_the_tree() {
    let dir = tempfile::tempdir().unwrap();
    let mut store = Store::open(&dir.path().join("p.db")).unwrap();
    store.apply_plant(&parse(PLANT)).unwrap();
    let tree = store.plant_tree().unwrap();
    let mnde = &tree.areas[0].machines[0].bearings[0];
    let f = mnde.factors.unwrap();
    // n = 9, d/D = 12.7/65: BPFO = 4.5 (1 - 0.19538) = 3.6208 (Randall & Antoni 2011 Eq. 2; computed by hand).
    assert!((f.bpfo - 3.6208).abs() < 1e-3, "{f:?}");
    assert!((f.bpfo + f.bpfi - 9.0).abs() < 1e-12);
    let pde = &tree.areas[0].machines[0].bearings[1];
    assert_eq!(pde.factors.unwrap().bpfo, 5.6);
    assert!((pde.nominal_rpm - 1475.0).abs() < 1e-9);
    assert!(
        (mnde.nominal_rpm - 1480.0).abs() < 1e-9,
        "defaults to the machine's"
    );
}

#[test]
fn outages_come_from_the_plant_file() {
    let dir = tempfile::tempdir().unwrap();
    let mut store = Store::open(&dir.path().join("p.db")).unwrap();
    store.apply_plant(&parse(PLANT)).unwrap();
    let outages = store.outages().unwrap();
    assert_eq!(outages.len(), 1);
    assert_eq!(outages[0].areas, vec!["Intake".to_owned()]);
    assert_eq!(outages[0].machines, vec!["FH-F1".to_owned()]);
}
