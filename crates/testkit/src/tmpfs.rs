//! A small file system of a test's own: a tmpfs mounted on a folder (as root only), for the tests of
//! read-only and full disks.
#![allow(
    clippy::unwrap_used,
    reason = "test fixtures: a failure here is a broken test"
)]

use std::path::{Path, PathBuf};
use std::process::Command;

/// Whether the test runs as root (only root can mount a tmpfs, and root ignores file permissions).
pub fn is_root() -> bool {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("Uid:"))
                .map(|l| l.split_whitespace().nth(1) == Some("0"))
        })
        .unwrap_or(false)
}

/// A tmpfs of the given size mounted on `dir`, unmounted on drop.
pub struct Tmpfs {
    /// Where it is mounted.
    pub dir: PathBuf,
}

impl Tmpfs {
    /// Mounts a tmpfs of `size` (as `mount -o size=` takes it) on `dir`, creating `dir`; the error
    /// says why it could not (not root, or `mount` failed).
    pub fn mount(dir: &Path, size: &str) -> Result<Tmpfs, String> {
        if !is_root() {
            return Err("not running as root, so no tmpfs can be mounted".to_owned());
        }
        std::fs::create_dir_all(dir).unwrap();
        let out = Command::new("mount")
            .args([
                "-t",
                "tmpfs",
                "-o",
                &format!("size={size},mode=0755"),
                "tmpfs",
            ])
            .arg(dir)
            .output()
            .map_err(|e| format!("cannot run mount: {e}"))?;
        if out.status.success() {
            Ok(Tmpfs {
                dir: dir.to_path_buf(),
            })
        } else {
            Err(format!(
                "mount -t tmpfs failed: {}",
                String::from_utf8_lossy(&out.stderr).trim()
            ))
        }
    }

    /// Remounts it with `options` (e.g. `ro`), failing the test when that fails.
    pub fn remount(&self, options: &str) {
        let out = Command::new("mount")
            .args(["-o", &format!("remount,{options}")])
            .arg(&self.dir)
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "remount {options}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
}

impl Drop for Tmpfs {
    fn drop(&mut self) {
        let _ = Command::new("umount").arg(&self.dir).status();
    }
}

/// Fills the file system holding `dir` with a filler file until a write fails for want of space.
pub fn fill(dir: &Path) {
    use std::io::Write as _;
    let mut f = std::fs::File::create(dir.join("filler")).unwrap();
    let block = [0x55u8; 1024];
    loop {
        match f.write_all(&block).and_then(|()| f.sync_all()) {
            Ok(()) => {}
            Err(e) if e.raw_os_error() == Some(28) => break, // ENOSPC
            Err(e) => panic!("filling the disk: {e}"),
        }
    }
}
