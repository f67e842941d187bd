//! Self-screenshots for scripted checks: with `SPALLCAST_SCREENSHOT=file.png` the window waits until its
//! data has loaded and settled, saves what it shows to a PNG and closes.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::mpsc::{self, Receiver};
use std::time::{Duration, Instant};

use anyhow::Context as _;
use eframe::egui;

/// Frames to wait after the data has settled, so plots have their final bounds.
const SETTLE_FRAMES: u32 = 8;

/// Longest wait for data before taking the screenshot anyway.
const MAX_WAIT: Duration = Duration::from_secs(90);

/// Where the plan is.
enum Phase {
    /// Waiting for the data to settle; counts idle frames.
    Waiting { idle_frames: u32 },
    /// Screenshot asked for; the image arrives on the channel.
    Requested(Receiver<Arc<egui::ColorImage>>),
    /// Saved (or failed); the window is closing.
    Done,
}

/// One pending self-screenshot.
pub struct ScreenshotPlan {
    path: PathBuf,
    started: Instant,
    phase: Phase,
    /// The outcome, for the log: `Ok(path)` or the error.
    pub outcome: Option<Result<PathBuf, String>>,
}

impl ScreenshotPlan {
    /// A plan to save to `path`.
    pub fn new(path: PathBuf) -> Self {
        Self {
            path,
            started: Instant::now(),
            phase: Phase::Waiting { idle_frames: 0 },
            outcome: None,
        }
    }

    /// Called once per frame with whether the app still has work in flight.
    pub fn tick(&mut self, ctx: &egui::Context, busy: bool) {
        match &mut self.phase {
            Phase::Waiting { idle_frames } => {
                *idle_frames = if busy { 0 } else { *idle_frames + 1 };
                let timed_out = self.started.elapsed() > MAX_WAIT;
                if *idle_frames >= SETTLE_FRAMES || timed_out {
                    let (tx, rx) = mpsc::channel();
                    let repaint = ctx.clone();
                    ctx.request_screenshot(move |image| {
                        let _ = tx.send(image);
                        repaint.request_repaint();
                    });
                    self.phase = Phase::Requested(rx);
                }
                ctx.request_repaint();
            }
            Phase::Requested(rx) => {
                if let Ok(image) = rx.try_recv() {
                    let result = save_png(&image, &self.path)
                        .map(|()| self.path.clone())
                        .map_err(|e| format!("{e:#}"));
                    // Scripts read this line to tell a drawn window from a blank one.
                    match &result {
                        Ok(p) => eprintln!(
                            "spallcast: screenshot saved to {} ({}x{}, {} distinct colours)",
                            p.display(),
                            image.size[0],
                            image.size[1],
                            distinct_colours(&image)
                        ),
                        Err(e) => eprintln!("spallcast: screenshot failed: {e}"),
                    }
                    self.outcome = Some(result);
                    self.phase = Phase::Done;
                    ctx.send_viewport_cmd(egui::ViewportCommand::Close);
                } else {
                    ctx.request_repaint_after(Duration::from_millis(20));
                }
            }
            Phase::Done => {}
        }
    }
}

/// Number of distinct pixel colours (1 for a blank image).
pub fn distinct_colours(image: &egui::ColorImage) -> usize {
    let mut seen: std::collections::HashSet<egui::Color32> = std::collections::HashSet::new();
    for p in &image.pixels {
        seen.insert(*p);
    }
    seen.len()
}

/// Writes an image as an 8-bit RGBA PNG.
pub fn save_png(image: &egui::ColorImage, path: &Path) -> anyhow::Result<()> {
    let [w, h] = image.size;
    let file =
        std::fs::File::create(path).with_context(|| format!("cannot create {}", path.display()))?;
    let mut encoder = png::Encoder::new(
        std::io::BufWriter::new(file),
        u32::try_from(w)?,
        u32::try_from(h)?,
    );
    encoder.set_color(png::ColorType::Rgba);
    encoder.set_depth(png::BitDepth::Eight);
    let mut writer = encoder
        .write_header()
        .with_context(|| format!("cannot write {}", path.display()))?;
    let bytes: Vec<u8> = image
        .pixels
        .iter()
        .flat_map(eframe::egui::Color32::to_srgba_unmultiplied)
        .collect();
    writer
        .write_image_data(&bytes)
        .with_context(|| format!("cannot write {}", path.display()))?;
    writer
        .finish()
        .with_context(|| format!("cannot finish {}", path.display()))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn png_round_trip_and_colour_count() {
        let mut image = egui::ColorImage::filled([4, 3], egui::Color32::from_rgb(10, 20, 30));
        assert_eq!(distinct_colours(&image), 1);
        image.pixels[5] = egui::Color32::from_rgb(200, 100, 0);
        assert_eq!(distinct_colours(&image), 2);
        let dir = std::env::temp_dir().join(format!("spallcast-png-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("t.png");
        save_png(&image, &path).unwrap();
        let decoder =
            png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&path).unwrap()));
        let mut reader = decoder.read_info().unwrap();
        let mut buf = vec![0; reader.output_buffer_size().unwrap()];
        let info = reader.next_frame(&mut buf).unwrap();
        assert_eq!((info.width, info.height), (4, 3));
        assert_eq!(&buf[5 * 4..5 * 4 + 4], &[200, 100, 0, 255]);
        assert_eq!(&buf[0..4], &[10, 20, 30, 255]);
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
