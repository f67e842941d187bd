//! `spallcast` with no subcommand opens the window; without a display it must say so, point to the
//! command line, and not spend time creating the demo plant first.

use std::process::Command;

#[test]
fn without_a_display_the_window_command_points_to_the_command_line() {
    let tmp = tempfile::tempdir().expect("a temporary folder");
    let db = tmp.path().join("demo.sqlite");
    let out = Command::new(env!("CARGO_BIN_EXE_spallcast"))
        .env_remove("DISPLAY")
        .env_remove("WAYLAND_DISPLAY")
        .env("SPALLCAST_DB", &db)
        .output()
        .expect("the binary runs");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(!out.status.success(), "{err}");
    assert!(err.contains("no display"), "{err}");
    assert!(err.contains("spallcast --help"), "{err}");
    assert!(
        !db.exists(),
        "the demo database was created although no window can open"
    );
}
