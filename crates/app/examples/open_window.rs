//! Opens the Spallcast window on a database: `cargo run -p spallcast-app --example open_window -- FILE`.
//! For testing the window before the `spallcast` binary wires it; honours `SPALLCAST_START_VIEW` and
//! `SPALLCAST_SCREENSHOT`.

use std::path::PathBuf;
use std::process::ExitCode;

fn main() -> ExitCode {
    let Some(db) = std::env::args_os().nth(1).map(PathBuf::from) else {
        eprintln!("usage: open_window DATABASE.sqlite");
        return ExitCode::from(2);
    };
    match spallcast_app::run_window(&db) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("open_window: {e:#}");
            ExitCode::FAILURE
        }
    }
}
