//! The committed fuzz corpora and regressions (`fuzz/corpus/<target>/`, `fuzz/regressions/<target>/`),
//! for the tests that replay them through the readers and the plant-file parser.
#![allow(
    clippy::unwrap_used,
    reason = "test fixtures: a failure here is a broken test"
)]

use std::path::{Path, PathBuf};

/// The workspace's `fuzz/` folder.
pub fn fuzz_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../fuzz")
}

/// Every file of `fuzz/corpus/<target>` and `fuzz/regressions/<target>`, sorted by path. Fails when
/// fewer than three are found: the corpus is committed, so an empty one means the test lost its
/// inputs, not that all is well.
pub fn inputs(target: &str) -> Vec<(PathBuf, Vec<u8>)> {
    let mut out = Vec::new();
    for kind in ["corpus", "regressions"] {
        let dir = fuzz_dir().join(kind).join(target);
        let Ok(entries) = std::fs::read_dir(&dir) else {
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
    // The corpus is committed: an empty one means the test lost its inputs, not that all is well.
    assert!(
        out.len() >= 3,
        "expected a committed fuzz corpus for {target} under {}, found {} files",
        fuzz_dir().display(),
        out.len()
    );
    out
}
