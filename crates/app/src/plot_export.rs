//! Saving the plot on screen: a PNG of its pixels as drawn, and an SVG drawn again from the same data
//! (the decimated curves, the markers and the axis titles of the last frame), for reports that need to
//! scale.
//!
//! The PNG comes from the window's own screenshot, cropped to the plot's rectangle, so it shows exactly
//! what the analyst saw. The SVG is written at once; the PNG when the screenshot arrives (the next
//! frame).

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::mpsc::Receiver;

use eframe::egui;

/// Label of the button that saves the plot.
pub const EXPORT_BUTTON: &str = "Save plot as PNG + SVG…";

/// One curve of a picture: its legend label, colour and points (plot units).
#[derive(Debug, Clone, PartialEq)]
pub struct PictureSeries {
    /// Legend label.
    pub label: String,
    /// Line colour.
    pub colour: egui::Color32,
    /// Points, in x order.
    pub points: Vec<[f64; 2]>,
}

/// What a plot drew in its last frame, in plot units: enough to draw it again as a vector image.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PlotPicture {
    /// Title (bearing, point, kind).
    pub title: String,
    /// Frequency axis title.
    pub x_title: String,
    /// Amplitude axis title.
    pub y_title: String,
    /// Visible x range.
    pub x_range: (f64, f64),
    /// Curves.
    pub series: Vec<PictureSeries>,
    /// Vertical markers: label and x.
    pub markers: Vec<(String, f64)>,
    /// A shaded x band (the demodulation band) and its label.
    pub band: Option<(f64, f64, String)>,
    /// Y values are log10 of the amplitude (tick labels show powers of ten).
    pub log_y: bool,
    /// Months stacked with offsets: no amplitude ticks (each trace has its own zero).
    pub stacked: bool,
}

/// The two files a plot is saved to: `base` with `.png` and with `.svg` (a `.png` or `.svg` the user
/// typed is replaced, any other extension kept as part of the name).
pub fn export_paths(base: &Path) -> (PathBuf, PathBuf) {
    let stem = match base.extension().and_then(|e| e.to_str()) {
        Some(e) if e.eq_ignore_ascii_case("png") || e.eq_ignore_ascii_case("svg") => {
            base.with_extension("")
        }
        _ => base.to_path_buf(),
    };
    let with = |ext: &str| {
        let mut s = stem.clone().into_os_string();
        s.push(".");
        s.push(ext);
        PathBuf::from(s)
    };
    (with("png"), with("svg"))
}

/// Refuses a target that is a folder or an `SQLite` database (a plant database must never be
/// overwritten by a picture), or whose folder does not exist.
///
/// # Errors
/// The reason, naming the file.
pub fn check_target(path: &Path) -> Result<(), String> {
    if path.is_dir() {
        return Err(format!("{} is a folder; give a file name", path.display()));
    }
    if spallcast_store::is_sqlite_file(path) {
        return Err(format!(
            "{} is an SQLite database; choose another name (a plot never overwrites a database)",
            path.display()
        ));
    }
    match path.parent() {
        Some(dir) if !dir.as_os_str().is_empty() && !dir.is_dir() => {
            Err(format!("the folder {} does not exist", dir.display()))
        }
        _ => Ok(()),
    }
}

/// Escapes text for XML.
fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

fn hex(c: egui::Color32) -> String {
    format!("#{:02x}{:02x}{:02x}", c.r(), c.g(), c.b())
}

/// The 1, 2 or 5 × 10^n step that cuts `span` into about `count` parts (at most `count`).
pub fn nice_step(span: f64, count: usize) -> f64 {
    let raw = span / count.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag)
}

/// About `count` round tick values (1, 2 or 5 × 10^n apart) covering `lo..=hi`.
pub fn nice_ticks(lo: f64, hi: f64, count: usize) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite()) || hi <= lo || count == 0 {
        return Vec::new();
    }
    let step = nice_step(hi - lo, count);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|i| i as f64 * step).collect()
}

fn tick_text(v: f64, log: bool) -> String {
    if log {
        return format!("{:.0e}", 10f64.powf(v));
    }
    let a = v.abs();
    if a == 0.0 {
        "0".to_owned()
    } else if !(1e-3..1e5).contains(&a) {
        format!("{v:.1e}")
    } else if a >= 100.0 {
        format!("{v:.0}")
    } else if a >= 1.0 {
        format!("{v:.2}")
            .trim_end_matches('0')
            .trim_end_matches('.')
            .to_owned()
    } else {
        format!("{v:.4}")
            .trim_end_matches('0')
            .trim_end_matches('.')
            .to_owned()
    }
}

/// The picture as a standalone SVG document of `width` × `height` user units.
pub fn picture_svg(p: &PlotPicture, width: f64, height: f64) -> String {
    let (left, right, top, bottom) = (74.0, 16.0, 34.0, 46.0);
    let (pw, ph) = (
        (width - left - right).max(10.0),
        (height - top - bottom).max(10.0),
    );
    let (x0, x1) = if p.x_range.1 > p.x_range.0 {
        p.x_range
    } else {
        (0.0, 1.0)
    };
    let ys = p
        .series
        .iter()
        .flat_map(|s| s.points.iter())
        .filter(|q| q[0] >= x0 && q[0] <= x1 && q[1].is_finite())
        .map(|q| q[1]);
    let (mut y0, mut y1) = ys.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), y| {
        (a.min(y), b.max(y))
    });
    if !p.log_y && !p.stacked {
        y0 = y0.min(0.0);
    }
    if y1.partial_cmp(&y0) != Some(std::cmp::Ordering::Greater) {
        (y0, y1) = (0.0, 1.0);
    }
    y1 += 0.05 * (y1 - y0);
    let sx = |x: f64| left + (x - x0) / (x1 - x0) * pw;
    let sy = |y: f64| top + ph - (y - y0) / (y1 - y0) * ph;
    let mut out = String::new();
    let _ = write!(
        out,
        r##"<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" viewBox="0 0 {width} {height}" font-family="sans-serif" font-size="11">
<title>{}</title>
<rect width="100%" height="100%" fill="#ffffff"/>
<text x="{left}" y="20" font-size="13" font-weight="bold">{}</text>
<defs><clipPath id="plot"><rect x="{left}" y="{top}" width="{pw}" height="{ph}"/></clipPath></defs>
"##,
        esc(&p.title),
        esc(&p.title)
    );
    if let Some((a, b, label)) = &p.band {
        let (a, b) = (sx(a.max(x0)), sx(b.min(x1)));
        if b > a {
            let _ = writeln!(
                out,
                r##"<rect x="{a:.1}" y="{top}" width="{:.1}" height="{ph}" fill="#d9e4ec" opacity="0.6"><title>{}</title></rect>"##,
                b - a,
                esc(label)
            );
        }
    }
    for t in nice_ticks(x0, x1, 8) {
        let x = sx(t);
        let _ = writeln!(
            out,
            r##"<line x1="{x:.1}" y1="{top}" x2="{x:.1}" y2="{:.1}" stroke="#eeeeee"/><text x="{x:.1}" y="{:.1}" text-anchor="middle">{}</text>"##,
            top + ph,
            top + ph + 14.0,
            tick_text(t, false)
        );
    }
    if !p.stacked {
        for t in nice_ticks(y0, y1, 6) {
            let y = sy(t);
            let _ = writeln!(
                out,
                r##"<line x1="{left}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#eeeeee"/><text x="{:.1}" y="{:.1}" text-anchor="end">{}</text>"##,
                left + pw,
                left - 4.0,
                y + 4.0,
                tick_text(t, p.log_y)
            );
        }
    }
    for (label, x) in p.markers.iter().filter(|(_, x)| *x >= x0 && *x <= x1) {
        let x = sx(*x);
        let _ = writeln!(
            out,
            r##"<line x1="{x:.1}" y1="{top}" x2="{x:.1}" y2="{:.1}" stroke="#7a5c8e" stroke-dasharray="4 3"/><text x="{:.1}" y="{:.1}" font-size="9" fill="#7a5c8e" text-anchor="end" transform="rotate(-90 {:.1} {:.1})">{}</text>"##,
            top + ph,
            x - 2.0,
            top + 4.0,
            x - 2.0,
            top + 4.0,
            esc(label)
        );
    }
    for s in &p.series {
        let mut pts = String::new();
        for q in s
            .points
            .iter()
            .filter(|q| q[0] >= x0 && q[0] <= x1 && q[1].is_finite())
        {
            let _ = write!(pts, "{:.1},{:.1} ", sx(q[0]), sy(q[1]));
        }
        let _ = writeln!(
            out,
            r#"<polyline clip-path="url(#plot)" fill="none" stroke="{}" stroke-width="1" points="{}"><title>{}</title></polyline>"#,
            hex(s.colour),
            pts.trim_end(),
            esc(&s.label)
        );
    }
    if !p.series.is_empty() {
        let _ = writeln!(
            out,
            r##"<rect x="{:.1}" y="{:.1}" width="146" height="{:.1}" fill="#ffffff" fill-opacity="0.85" stroke="#cccccc"/>"##,
            left + pw - 154.0,
            top + 2.0,
            14.0 * p.series.len() as f64 + 4.0
        );
    }
    for (i, s) in p.series.iter().enumerate() {
        let y = top + 14.0 + 14.0 * i as f64;
        let x = left + pw - 150.0;
        let _ = writeln!(
            out,
            r#"<line x1="{x:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="{}" stroke-width="2"/><text x="{:.1}" y="{y:.1}">{}</text>"#,
            y - 4.0,
            x + 16.0,
            y - 4.0,
            hex(s.colour),
            x + 20.0,
            esc(&s.label)
        );
    }
    let _ = write!(
        out,
        r##"<rect x="{left}" y="{top}" width="{pw}" height="{ph}" fill="none" stroke="#555555"/>
<text x="{:.1}" y="{:.1}" text-anchor="middle">{}</text>
<text x="14" y="{:.1}" text-anchor="middle" transform="rotate(-90 14 {:.1})">{}</text>
</svg>
"##,
        left + pw / 2.0,
        height - 8.0,
        esc(&p.x_title),
        top + ph / 2.0,
        top + ph / 2.0,
        esc(&p.y_title)
    );
    out
}

/// The part of a screenshot inside `rect` (points), clamped to the image; `None` when nothing is left.
pub fn crop(
    image: &egui::ColorImage,
    rect: egui::Rect,
    pixels_per_point: f32,
) -> Option<egui::ColorImage> {
    let [w, h] = image.size;
    let px = |v: f32, max: usize| ((v * pixels_per_point).round().max(0.0) as usize).min(max);
    let (x0, x1) = (px(rect.min.x, w), px(rect.max.x, w));
    let (y0, y1) = (px(rect.min.y, h), px(rect.max.y, h));
    (x1 > x0 && y1 > y0).then(|| image.region_by_pixels([x0, y0], [x1 - x0, y1 - y0]))
}

/// A plot being saved: the SVG is written, the PNG waits for the window's screenshot.
pub struct PendingPng {
    /// Where the PNG goes.
    pub png: PathBuf,
    /// The SVG already written.
    pub svg: PathBuf,
    /// The plot's rectangle, points.
    pub rect: egui::Rect,
    /// Points to pixels.
    pub pixels_per_point: f32,
    /// The screenshot, when it arrives.
    pub image: Receiver<Arc<egui::ColorImage>>,
}

impl PendingPng {
    /// Saves the PNG once the screenshot is in: `None` while waiting, then the status line.
    pub fn poll(&self) -> Option<Result<String, String>> {
        let image = self.image.try_recv().ok()?;
        let Some(part) = crop(&image, self.rect, self.pixels_per_point) else {
            return Some(Err(format!(
                "the plot is not on screen; wrote only {}",
                self.svg.display()
            )));
        };
        Some(
            crate::screenshot::save_png(&part, &self.png)
                .map(|()| {
                    format!(
                        "saved the plot to {} ({}×{} pixels) and {}",
                        self.png.display(),
                        part.size[0],
                        part.size[1],
                        self.svg.display()
                    )
                })
                .map_err(|e| format!("{e:#}")),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_replace_a_typed_image_extension() {
        assert_eq!(
            export_paths(Path::new("/t/plot.PNG")),
            (PathBuf::from("/t/plot.png"), PathBuf::from("/t/plot.svg"))
        );
        assert_eq!(
            export_paths(Path::new("/t/fan.de")),
            (
                PathBuf::from("/t/fan.de.png"),
                PathBuf::from("/t/fan.de.svg")
            )
        );
    }

    #[test]
    fn ticks_are_round_and_inside_the_range() {
        let t = nice_ticks(0.0, 1000.0, 8);
        assert_eq!(t.first().copied(), Some(0.0));
        assert!(
            t.windows(2).all(|w| ((w[1] - w[0]) - 200.0).abs() < 1e-9),
            "{t:?}"
        );
        assert!(nice_ticks(1.0, 1.0, 5).is_empty());
        assert!(
            nice_ticks(-0.013, 0.021, 6)
                .iter()
                .all(|v| (-0.013..=0.021).contains(v))
        );
    }

    #[test]
    fn crop_is_clamped_to_the_image() {
        let image = egui::ColorImage::filled([100, 50], egui::Color32::WHITE);
        let r = egui::Rect::from_min_max(egui::pos2(10.0, 5.0), egui::pos2(80.0, 200.0));
        assert_eq!(crop(&image, r, 1.0).map(|c| c.size), Some([70, 45]));
        assert_eq!(crop(&image, r, 2.0).map(|c| c.size), Some([80, 40]));
        let off = egui::Rect::from_min_max(egui::pos2(120.0, 0.0), egui::pos2(130.0, 10.0));
        assert!(crop(&image, off, 1.0).is_none());
    }

    #[test]
    fn svg_escapes_text_and_draws_every_curve() {
        let p = PlotPicture {
            title: "FT-P1 <DE> & H".into(),
            x_title: "frequency, Hz".into(),
            y_title: "acceleration, g peak".into(),
            x_range: (0.0, 100.0),
            series: vec![
                PictureSeries {
                    label: "Jan".into(),
                    colour: egui::Color32::RED,
                    points: vec![[0.0, 0.0], [50.0, 1.0], [100.0, 0.5]],
                },
                PictureSeries {
                    label: "Feb".into(),
                    colour: egui::Color32::BLUE,
                    points: vec![[0.0, 0.1], [150.0, 2.0]],
                },
            ],
            markers: vec![("BPFO".into(), 40.0), ("off".into(), 400.0)],
            ..PlotPicture::default()
        };
        let svg = picture_svg(&p, 800.0, 400.0);
        assert!(svg.contains("FT-P1 &lt;DE&gt; &amp; H"));
        assert_eq!(svg.matches("<polyline").count(), 2);
        assert!(svg.contains(">BPFO</text>"));
        assert!(
            !svg.contains(">off</text>"),
            "markers outside the range are left out"
        );
        assert!(svg.trim_end().ends_with("</svg>"));
    }
}
