//! Hostile plant files and databases: duplicate ids, impossible values and duplicate outage names
//! are refused naming the file (and the key or line), and a file that is not `SQLite` is refused and
//! left untouched. Hostile route folders are in `hardening_hostile_route.rs`.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

mod common;

use std::path::Path;

use common::hostile::{PLANT, fixture};
use spallcast_store::{PlantFile, Store, StoreError};

#[test]
fn plant_files_with_duplicate_ids_are_refused_naming_file_and_id() {
    // Point id P1 used twice (the second point block renamed back to P1).
    let dup_point = PLANT.replace(r#"id = "P2""#, r#"id = "P1""#);
    // A second machine with the same id (and its own position and point ids).
    let machine_block = PLANT
        .split("  [[areas.machines]]")
        .nth(1)
        .unwrap()
        .replace("\"P1\"", "\"Q1\"")
        .replace("\"P2\"", "\"Q2\"");
    let dup_machine = format!("{PLANT}\n  [[areas.machines]]{machine_block}");
    let dup_type = PLANT.replace(
        "[[areas]]",
        "[[bearing_types]]\ndesignation = \"HT-1\"\nfactors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }\n\n[[areas]]",
    );
    let dup_area = format!("{PLANT}\n[[areas]]\nname = \"Test area\"\n");
    let dup_position = PLANT.replace(
        "    [[areas.machines.points]]\n    id = \"P1\"",
        "    [[areas.machines.bearings]]\n    position = \"DE\"\n    bearing_type = \"HT-1\"\n    lubrication = \"oil\"\n    installed = \"2024-01-01\"\n    [[areas.machines.points]]\n    id = \"P1\"",
    );
    let texts = [
        (dup_point, "\"P1\""),
        (dup_machine, "\"HT-M1\""),
        (dup_type, "\"HT-1\""),
        (dup_area, "\"Test area\""),
        (dup_position, "\"DE\""),
    ];
    let path = Path::new("/plants/site-a.toml");
    for (text, id) in &texts {
        let err = PlantFile::parse(text, path).expect_err(id);
        let message = err.to_string();
        assert!(message.contains("/plants/site-a.toml"), "{message}");
        assert!(
            message.contains(id),
            "message does not name {id}: {message}"
        );
        assert!(message.contains("twice"), "{message}");
    }
    // Applying a bad plant file to a store changes nothing in it.
    let mut f = fixture();
    let before = f.store.export_plant().unwrap();
    let bad = Path::new(&f.route).join("bad.toml");
    std::fs::write(&bad, &texts[0].0).unwrap();
    let err = f.store.apply_plant_file(&bad).unwrap_err();
    assert!(err.to_string().contains("bad.toml"), "{err}");
    assert_eq!(f.store.export_plant().unwrap(), before);
}

#[test]
fn a_file_that_is_not_sqlite_is_refused_and_left_untouched() {
    let tmp = tempfile::tempdir().unwrap();
    let mut garbage = b"SQLite format 3\0".to_vec(); // the right magic, then noise
    let mut x: u32 = 0x2545_F491;
    for _ in 0..8192 {
        x ^= x << 13;
        x ^= x >> 17;
        x ^= x << 5;
        garbage.push((x & 0xFF) as u8);
    }
    let cases: [(&str, Vec<u8>); 3] = [
        (
            "notes.db",
            "analyst notes, not a database\n".repeat(300).into_bytes(),
        ),
        (
            "image.db",
            b"\x89PNG\r\n\x1a\n"
                .iter()
                .copied()
                .cycle()
                .take(4096)
                .collect(),
        ),
        ("noise.db", garbage),
    ];
    for (name, bytes) in cases {
        let path = tmp.path().join(name);
        std::fs::write(&path, &bytes).unwrap();
        let err = Store::open(&path).unwrap_err();
        assert!(err.to_string().contains(name), "{err}");
        assert!(
            matches!(err, StoreError::NotADatabase { .. }),
            "{name}: {err:?}"
        );
        assert_eq!(std::fs::read(&path).unwrap(), bytes, "{name} was modified");
    }
}

/// Issue 16 item 5: two outages with one name. The second used to replace the first silently.
#[test]
fn two_outages_with_one_name_are_refused_naming_file_line_and_name() {
    let text = format!(
        "{PLANT}\n[[outages]]\nname = \"Spring stop\"\nstart = \"2026-04-01\"\nend = \"2026-04-03\"\n\n\
         [[outages]]\nname = \"Spring stop\"\nstart = \"2026-05-01\"\nend = \"2026-05-02\"\n"
    );
    let line = text
        .lines()
        .enumerate()
        .filter(|(_, l)| l.contains("\"Spring stop\""))
        .nth(1)
        .map(|(i, _)| i + 1)
        .unwrap();
    let err = PlantFile::parse(&text, Path::new("/plants/outages.toml")).unwrap_err();
    let message = err.to_string();
    assert!(message.contains("/plants/outages.toml"), "{message}");
    assert!(message.contains("\"Spring stop\""), "{message}");
    assert!(message.contains("twice"), "{message}");
    assert!(
        message.contains(&format!("line {line}")),
        "no line {line}: {message}"
    );
}

/// Issue 16 item 6: values a plant file must not get through, each refused with the file, the key
/// and the reason.
#[test]
fn impossible_plant_values_are_refused_naming_file_key_and_reason() {
    let geometry_and_factors = "designation = \"HT-1\"\nkind = \"deep-groove ball\"\n\
         rolling_elements = 9\nelement_diameter_mm = 8.0\npitch_diameter_mm = 39.0\ncontact_angle_deg = 0.0\n\
         factors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }";
    let with_type = |geometry: &str| {
        PLANT.replace(
            "designation = \"HT-1\"\nkind = \"deep-groove ball\"\nfactors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }",
            geometry,
        )
    };
    let cases: Vec<(String, &str, &str)> = vec![
        (
            PLANT.replace(
                "    installed = \"2024-01-01\"",
                "    installed = \"2024-01-01\"\n    nominal_rpm = -1480.0",
            ),
            "nominal_rpm",
            "positive",
        ),
        (
            PLANT.replace(
                "    installed = \"2024-01-01\"",
                "    installed = \"2024-01-01\"\n    nominal_rpm = nan",
            ),
            "nominal_rpm",
            "positive",
        ),
        (
            PLANT.replace("nominal_rpm = 1480.0", "nominal_rpm = nan"),
            "nominal_rpm",
            "positive",
        ),
        (PLANT.replace("id = \"HT-M1\"", "id = \"\""), "id", "empty"),
        (PLANT.replace("id = \"P1\"", "id = \"  \""), "id", "empty"),
        (
            PLANT.replace("id = \"P1\"", "id = \"P\\u00001\""),
            "id",
            "control character",
        ),
        (
            PLANT.replace("id = \"P2\"", "id = \"P\\n2\""),
            "id",
            "control character",
        ),
        (
            PLANT.replace("position = \"DE\"", "position = \"\""),
            "position",
            "empty",
        ),
        (
            with_type(
                &geometry_and_factors
                    .replace("contact_angle_deg = 0.0", "contact_angle_deg = 95.0"),
            ),
            "contact_angle_deg",
            "0",
        ),
        (
            with_type(
                &geometry_and_factors
                    .replace("pitch_diameter_mm = 39.0", "pitch_diameter_mm = 6.0"),
            ),
            "pitch_diameter_mm",
            "element_diameter_mm",
        ),
    ];
    // The geometry-and-factors type itself is accepted when its geometry is possible.
    PlantFile::parse(&with_type(geometry_and_factors), Path::new("ok.toml")).unwrap();
    for (text, key, why) in &cases {
        let err = PlantFile::parse(text, Path::new("/plants/values.toml"))
            .expect_err(&format!("accepted a bad {key} ({why})"));
        let message = err.to_string();
        assert!(message.contains("/plants/values.toml"), "{message}");
        assert!(message.contains(key), "does not name {key}: {message}");
        assert!(message.contains(why), "does not say {why:?}: {message}");
    }
}
