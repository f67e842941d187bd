//! Opens the real window under Xvfb (Mesa software OpenGL) on the demo plant and saves a screenshot of
//! each main view, through `tests/window_screenshots.sh`. Skipped with a message where Xvfb is not
//! installed, unless CI=true (then it fails).

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a broken fixture should fail loudly"
)]

use std::path::{Path, PathBuf};
use std::process::Command;

fn xvfb_installed() -> bool {
    std::env::var_os("PATH")
        .is_some_and(|paths| std::env::split_paths(&paths).any(|dir| dir.join("Xvfb").is_file()))
}

#[test]
fn window_screenshots_of_every_main_view() {
    let on_ci = std::env::var("CI").is_ok_and(|v| v == "true");
    if !xvfb_installed() {
        assert!(
            !on_ci,
            "CI=true but Xvfb is not installed (Debian package xvfb); the window test cannot run"
        );
        eprintln!(
            "SKIPPED window_screenshots: Xvfb is not installed (Debian: apt-get install xvfb)"
        );
        return;
    }
    let bin = Path::new(env!("CARGO_BIN_EXE_spallcast"));
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../tests/window_screenshots.sh");
    let out_dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("window-screenshots");
    let _ = std::fs::remove_dir_all(&out_dir);
    std::fs::create_dir_all(&out_dir).unwrap();
    let db = out_dir.join("demo.sqlite");

    // The demo plant, generated and imported by the binary itself.
    let demo = Command::new(bin)
        .args(["demo", "--db"])
        .arg(&db)
        .output()
        .unwrap();
    assert!(
        demo.status.success(),
        "spallcast demo failed: {}",
        String::from_utf8_lossy(&demo.stderr)
    );

    let run = Command::new("bash")
        .arg(&script)
        .arg(&out_dir)
        .arg("--")
        .arg(bin)
        .arg("--db")
        .arg(&db)
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&run.stdout);
    let stderr = String::from_utf8_lossy(&run.stderr);
    if run.status.code() == Some(77) {
        assert!(
            !on_ci,
            "CI=true but the screenshot script skipped: {stderr}"
        );
        eprintln!("SKIPPED window_screenshots: {stderr}");
        return;
    }
    assert!(
        run.status.success(),
        "screenshot script failed:\n{stdout}\n{stderr}"
    );
    for view in ["changes", "spectra", "trend", "waveform", "plan"] {
        let png = out_dir.join(format!("{view}.png"));
        let bytes = std::fs::read(&png).unwrap();
        // PNG signature (ISO/IEC 15948, section 5.2).
        assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "{}", png.display());
        assert!(stdout.contains(&format!("ok {view}:")), "{stdout}");
    }
    eprintln!("{stdout}");
}
