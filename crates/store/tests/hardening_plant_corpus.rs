//! Replays the plant-file fuzz corpus and regressions (`fuzz/corpus/plant_file/`,
//! `fuzz/regressions/plant_file/`) through `PlantFile::parse`, as CI unit tests: no panic, every
//! error names the file, and an accepted plant file writes back to TOML that parses again and writes
//! identically. The fuzz target `fuzz/fuzz_targets/plant_file.rs` applies the same checks.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

use std::path::Path;

use spallcast_store::PlantFile;
use spallcast_testkit::corpus::{fuzz_dir, inputs};
use spallcast_testkit::plant_values;

#[test]
fn plant_file_corpus_and_regressions() {
    let path = Path::new("/corpus/plant.toml");
    let (mut ok, mut err) = (0, 0);
    for (source, bytes) in inputs("plant_file") {
        // The fuzz target feeds only UTF-8 text (a plant file is read as a string).
        let Ok(text) = std::str::from_utf8(&bytes) else {
            continue;
        };
        match PlantFile::parse(text, path) {
            Err(e) => {
                let message = e.to_string();
                assert!(
                    message.contains("/corpus/plant.toml"),
                    "input {}: error does not name the file: {message}",
                    source.display()
                );
                err += 1;
            }
            Ok(plant) => {
                let first = plant.to_toml().unwrap();
                let again = PlantFile::parse(&first, path).unwrap_or_else(|e| {
                    panic!(
                        "input {}: exported plant file does not parse: {e}\n{first}",
                        source.display()
                    )
                });
                assert_eq!(
                    first,
                    again.to_toml().unwrap(),
                    "input {}: export not stable",
                    source.display()
                );
                ok += 1;
            }
        }
    }
    println!("plant_file: {ok} accepted, {err} rejected");
    assert!(ok > 0 && err > 0, "accepted {ok}, rejected {err}");
}

/// The demo plant file the project ships parses, and its export reads back equal.
#[test]
fn demo_plant_file_round_trips() {
    let file = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../demo-plant/plant.toml");
    let text = std::fs::read_to_string(&file).unwrap();
    let plant = PlantFile::parse(&text, &file).unwrap();
    let first = plant.to_toml().unwrap();
    let again = PlantFile::parse(&first, &file).unwrap();
    assert_eq!(plant, again);
    assert_eq!(first, again.to_toml().unwrap());
}

/// Replays the plant-values fuzz corpus (`fuzz/corpus/plant_values/`, and any regressions) through the
/// same check the fuzz target applies (issue 16 item 6: accepted values are usable, refused ones name
/// the file).
#[test]
fn plant_values_corpus_and_regressions() {
    let mut replayed = 0;
    for (path, bytes) in inputs("plant_values") {
        if let Err(panic) = std::panic::catch_unwind(|| plant_values::check(&bytes)) {
            let why = panic
                .downcast_ref::<String>()
                .cloned()
                .or_else(|| panic.downcast_ref::<&str>().map(|s| (*s).to_owned()))
                .unwrap_or_default();
            panic!("input {}: {why}", path.display());
        }
        replayed += 1;
    }
    assert!(
        replayed >= 20,
        "expected the committed plant-values corpus, replayed {replayed} inputs"
    );
}

/// The hand-made plant-values regressions (`fuzz/regressions/plant_values/`, one per value issue 16
/// item 6 names): each bad value is refused with the file named, and the otherwise identical `valid`
/// file is accepted, so a refusal is the value's doing.
#[test]
fn each_bad_plant_value_is_refused_and_the_valid_twin_accepted() {
    let dir = fuzz_dir().join("regressions").join("plant_values");
    let mut names = Vec::new();
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        let text = plant_values::plant_text(&std::fs::read(&path).unwrap());
        let result = PlantFile::parse(&text, Path::new(plant_values::PLANT_PATH));
        if name == "valid" {
            assert!(
                result.is_ok(),
                "{name}: {:?}",
                result.err().map(|e| e.to_string())
            );
        } else {
            let err = result
                .err()
                .unwrap_or_else(|| panic!("{name}: accepted:\n{text}"));
            assert!(
                err.to_string().contains(plant_values::PLANT_PATH),
                "{name}: {err}"
            );
        }
        names.push(name);
    }
    names.sort();
    for expected in [
        "valid",
        "nan-rpm",
        "negative-rpm",
        "angle-95",
        "empty-machine-id",
        "duplicate-outage",
    ] {
        assert!(
            names.iter().any(|n| n == expected),
            "regression {expected} missing: {names:?}"
        );
    }
}
