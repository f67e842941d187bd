//! Opening the real window.

use std::path::{Path, PathBuf};
use std::sync::Arc;

use anyhow::Context as _;
use eframe::egui;

use crate::app::{SpallcastApp, StartOptions};
use crate::settings::View;
use crate::source::Backend;

/// Environment variable naming the first view: `changes`, `spectra`, `trend`, `waveform` or `plan`.
pub const START_VIEW_ENV: &str = "SPALLCAST_START_VIEW";

/// Environment variable naming a PNG file: the window saves a screenshot there once loaded, then closes.
pub const SCREENSHOT_ENV: &str = "SPALLCAST_SCREENSHOT";

/// Where to look when the window cannot open.
const CLI_HINT: &str = "the command-line subcommands work without a display; see `spallcast --help` \
                        (for example `spallcast diagnose`, `spallcast import`)";

/// Opens the Spallcast window on `db_path` with the given backend, and returns when it is closed.
///
/// Reads [`START_VIEW_ENV`] and [`SCREENSHOT_ENV`].
///
/// # Errors
/// No display (on Linux: neither `DISPLAY` nor `WAYLAND_DISPLAY` set), the window or its OpenGL context
/// could not be created, or a bad value in one of the environment variables. The message points to the
/// command-line subcommands.
pub fn run_window_with(db_path: &Path, backend: Arc<dyn Backend>) -> anyhow::Result<()> {
    check_display()?;
    let options = options_from_env(db_path)?;
    let screenshot = options.screenshot.is_some();
    let mut viewport = egui::ViewportBuilder::default()
        .with_title("Spallcast")
        .with_inner_size(window_size_from_env().unwrap_or([1400.0, 900.0]))
        .with_min_inner_size([900.0, 600.0]);
    if let Some(icon) = crate::assets::app_icon() {
        viewport = viewport.with_icon(std::sync::Arc::new(icon));
    }
    let native = eframe::NativeOptions {
        viewport,
        renderer: eframe::Renderer::Glow,
        persist_window: !screenshot,
        ..Default::default()
    };
    eframe::run_native(
        "Spallcast",
        native,
        Box::new(move |cc| Ok(Box::new(SpallcastApp::new(cc, backend, options)))),
    )
    .map_err(|e| anyhow::anyhow!("could not open the Spallcast window ({e}); {CLI_HINT}"))
}

/// The start options for `db_path` from the environment.
pub fn options_from_env(db_path: &Path) -> anyhow::Result<StartOptions> {
    let start_view = match std::env::var(START_VIEW_ENV) {
        Ok(name) if !name.trim().is_empty() => Some(View::from_name(&name).with_context(|| {
            format!("{START_VIEW_ENV}={name:?} is not a view; use changes, spectra, trend, waveform or plan")
        })?),
        _ => None,
    };
    let screenshot = std::env::var_os(SCREENSHOT_ENV)
        .filter(|v| !v.is_empty())
        .map(PathBuf::from);
    Ok(StartOptions {
        db_path: Some(db_path.to_path_buf()),
        start_view,
        cautions_acknowledged: screenshot.is_some(),
        screenshot,
        today: None,
        no_file_dialog: std::env::var_os(crate::path_prompt::NO_FILE_DIALOG_ENV).is_some(),
    })
}

/// Fails early with a clear message where no display server is reachable.
///
/// # Errors
/// On Linux and the BSDs, when neither `DISPLAY` nor `WAYLAND_DISPLAY` is set.
pub fn check_display() -> anyhow::Result<()> {
    if cfg!(all(unix, not(target_os = "macos"))) {
        let set = |name: &str| std::env::var_os(name).is_some_and(|v| !v.is_empty());
        if !set("DISPLAY") && !set("WAYLAND_DISPLAY") {
            anyhow::bail!(
                "no display: the Spallcast window needs X11 or Wayland, and neither DISPLAY nor WAYLAND_DISPLAY \
                 is set; {CLI_HINT}"
            );
        }
    }
    Ok(())
}

/// `SPALLCAST_WINDOW_SIZE=WIDTHxHEIGHT` (e.g. `1280x720`): the window's first inner size, used by
/// `tests/window_screenshots.sh`; absent or unreadable means 1400x900.
fn window_size_from_env() -> Option<[f32; 2]> {
    let text = std::env::var("SPALLCAST_WINDOW_SIZE").ok()?;
    let (w, h) = text.trim().split_once('x')?;
    let (w, h): (f32, f32) = (w.parse().ok()?, h.parse().ok()?);
    (w >= 640.0 && h >= 480.0 && w <= 8000.0 && h <= 8000.0).then_some([w, h])
}
