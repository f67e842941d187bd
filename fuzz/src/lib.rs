//! Shared pieces of the fuzz targets: the readers take paths, so each input is written to a scratch
//! file (in `/dev/shm` when it exists, for speed) and the checks every target applies to a result.
#![forbid(unsafe_code)]

use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use spallcast_formats::{FormatError, Recording};

/// The plant-file values check (the `plant_values` target), from the shared test-support crate.
#[cfg(feature = "plant")]
pub use spallcast_testkit::plant_values;

/// A per-process scratch folder, created once.
fn scratch_dir() -> &'static Path {
    static DIR: OnceLock<PathBuf> = OnceLock::new();
    DIR.get_or_init(|| {
        let base = Path::new("/dev/shm");
        let base = if base.is_dir() {
            base.to_path_buf()
        } else {
            std::env::temp_dir()
        };
        let dir = base.join(format!("spallcast-fuzz-{}", std::process::id()));
        std::fs::create_dir_all(&dir)
            .unwrap_or_else(|e| panic!("cannot create {}: {e}", dir.display()));
        dir
    })
}

/// Writes `data` to the scratch file `name` and returns its path.
pub fn write_input(name: &str, data: &[u8]) -> PathBuf {
    let path = scratch_dir().join(name);
    std::fs::write(&path, data).unwrap_or_else(|e| panic!("cannot write {}: {e}", path.display()));
    path
}

/// Every error a reader returns must name the file it is about.
pub fn assert_names_file(err: &dyn std::fmt::Display, path: &Path) {
    let message = err.to_string();
    let shown = path.display().to_string();
    assert!(
        message.contains(&shown),
        "error does not name the file {shown}: {message}"
    );
}

/// Checks a reader's result: an error names the file; a recording has channels of equal length and a
/// rate that is a positive number; `validate` and `clipping_fraction` then run without panicking.
pub fn check_recording(result: &Result<Recording, FormatError>, path: &Path) {
    match result {
        Err(e) => assert_names_file(e, path),
        Ok(rec) => {
            let n = rec.samples_per_channel();
            assert!(
                rec.channels.iter().all(|c| c.len() == n),
                "ragged channels from a reader"
            );
            assert!(
                rec.sample_rate_hz > 0.0,
                "sample rate {} from a reader",
                rec.sample_rate_hz
            );
            if let Err(e) = spallcast_formats::validate(rec, path) {
                assert_names_file(&e, path);
            }
            for ch in &rec.channels {
                let f = spallcast_formats::clipping_fraction(ch);
                assert!((0.0..=1.0).contains(&f), "clipping fraction {f}");
            }
        }
    }
}
