//! Atomic file writes: a temporary file in the target's folder, then a rename over the target.

use std::path::Path;

use crate::error::{PlanError, Result};

/// Writes `bytes` to `path` atomically: the data goes to a temporary file in the same folder (so the
/// rename stays on one file system), is flushed to disk, then renamed over `path`. A reader sees the old
/// file or the new one, never half of one. On any failure the temporary file is removed (by
/// `tempfile`'s drop) and `path` is left as it was.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<()> {
    let err = |source: std::io::Error| PlanError::Write {
        path: path.to_path_buf(),
        source,
    };
    spallcast_store::write_file_atomic(path, bytes).map_err(err)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replaces_the_file_and_leaves_no_temporary() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("list.csv");
        std::fs::write(&path, "old").unwrap();
        write_atomic(&path, b"new contents").unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "new contents");
        let names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(names, vec![std::ffi::OsString::from("list.csv")]);
    }

    #[test]
    fn a_failed_rename_removes_the_temporary_and_names_the_file() {
        let dir = tempfile::tempdir().unwrap();
        // The target is a non-empty folder: the rename over it must fail.
        let target = dir.path().join("busy");
        std::fs::create_dir(&target).unwrap();
        std::fs::write(target.join("keep.txt"), "x").unwrap();
        let err = write_atomic(&target, b"data").unwrap_err();
        assert!(err.to_string().contains("busy"), "{err}");
        let names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(
            names,
            vec![std::ffi::OsString::from("busy")],
            "temporary file left behind"
        );
        assert_eq!(
            std::fs::read_to_string(target.join("keep.txt")).unwrap(),
            "x"
        );
    }

    #[test]
    fn a_missing_folder_is_an_error_naming_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("no-such-folder").join("plan.ics");
        let err = write_atomic(&path, b"data").unwrap_err();
        assert!(err.to_string().contains("plan.ics"), "{err}");
    }
}
