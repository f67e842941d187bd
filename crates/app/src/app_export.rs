//! Saving the plot on screen from the window: the file name offered, the SVG written at once and the
//! PNG cut from the window's screenshot when it arrives ([`crate::plot_export`] does the drawing).

use crate::app::SpallcastApp;

impl SpallcastApp {
    /// A file name for the plot on screen: bearing, point and spectrum kind.
    pub(crate) fn plot_file_name(&self) -> Option<String> {
        let (picture, _) = self.spectra.picture.as_ref()?;
        let name: String = picture
            .title
            .chars()
            .map(|c| {
                if c.is_alphanumeric() || c == '-' {
                    c
                } else {
                    '_'
                }
            })
            .collect();
        Some(
            name.split('_')
                .filter(|p| !p.is_empty())
                .collect::<Vec<_>>()
                .join("_"),
        )
    }

    /// Writes the SVG of the plot on screen now and asks the window for the screenshot its PNG is cut
    /// from (saved when it arrives, see [`crate::plot_export::PendingPng`]).
    pub(crate) fn export_plot(&mut self, path: &std::path::Path) {
        let Some((picture, rect)) = self.spectra.picture.clone() else {
            self.set_status("no plot on screen to save".to_owned(), true);
            return;
        };
        let (png, svg) = crate::plot_export::export_paths(path);
        for p in [&png, &svg] {
            if let Err(e) = crate::plot_export::check_target(p) {
                self.set_status(format!("plot not saved: {e}"), true);
                return;
            }
        }
        let text = crate::plot_export::picture_svg(
            &picture,
            f64::from(rect.width().max(320.0)),
            f64::from(rect.height().max(200.0)),
        );
        if let Err(e) = std::fs::write(&svg, text) {
            self.set_status(
                format!("plot not saved: cannot write {}: {e}", svg.display()),
                true,
            );
            return;
        }
        if let Some(dir) = svg.parent() {
            self.state.export_folder = dir.display().to_string();
        }
        let (tx, rx) = std::sync::mpsc::channel();
        let ctx = self.ctx.clone();
        self.ctx.request_screenshot(move |image| {
            let _ = tx.send(image);
            ctx.request_repaint();
        });
        self.pending_png = Some(crate::plot_export::PendingPng {
            png,
            svg,
            rect,
            pixels_per_point: self.ctx.pixels_per_point(),
            image: rx,
        });
        self.set_status("saving the plot…".to_owned(), false);
    }

    /// Saves the PNG of a plot being saved once the window's screenshot is in.
    pub(crate) fn poll_plot_export(&mut self) {
        let Some(outcome) = self
            .pending_png
            .as_ref()
            .and_then(crate::plot_export::PendingPng::poll)
        else {
            return;
        };
        self.pending_png = None;
        match outcome {
            Ok(line) => self.set_status(line, false),
            Err(e) => self.set_status(format!("plot PNG not saved: {e}"), true),
        }
    }
}
