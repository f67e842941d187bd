//! Replays the plant-file fuzz corpus and regressions (`fuzz/corpus/plant_file/`,
//! `fuzz/regressions/plant_file/`) through `PlantFile::parse`, as CI unit tests: no panic, every
//! error names the file, and an accepted plant file writes back to TOML that parses again and writes
//! identically. The fuzz target `fuzz/fuzz_targets/plant_file.rs` applies the same checks.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

use std::path::{Path, PathBuf};

use spallcast_store::PlantFile;

fn fuzz_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../fuzz")
}

fn inputs() -> Vec<(PathBuf, Vec<u8>)> {
    let mut out = Vec::new();
    for kind in ["corpus", "regressions"] {
        let Ok(entries) = std::fs::read_dir(fuzz_dir().join(kind).join("plant_file")) else {
            continue;
        };
        for entry in entries {
            let path = entry.unwrap().path();
            if path.is_file() {
                let bytes = std::fs::read(&path).unwrap();
                out.push((path, bytes));
            }
        }
    }
    out.sort();
    assert!(
        out.len() >= 3,
        "expected a committed plant-file fuzz corpus, found {} files",
        out.len()
    );
    out
}

#[test]
fn plant_file_corpus_and_regressions() {
    let path = Path::new("/corpus/plant.toml");
    let (mut ok, mut err) = (0, 0);
    for (source, bytes) in inputs() {
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
