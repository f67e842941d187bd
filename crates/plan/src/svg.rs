//! Small inline SVG plots for the printable report: a spectrum and a trend.
//!
//! A spectrum can have tens of thousands of lines; drawing each would make the report heavy. The
//! spectrum is decimated to one column per horizontal pixel, and each column keeps its minimum and
//! maximum, so a narrow peak survives (a plain every-n-th sample would drop it).

use std::fmt::Write as _;

/// Plot width in SVG user units (pixels at 100 % zoom).
pub const PLOT_WIDTH: usize = 320;
/// Plot height.
pub const PLOT_HEIGHT: usize = 90;

/// Splits `values` into `columns` consecutive groups (as even as possible) and returns each group's
/// (minimum, maximum). Returns fewer columns when there are fewer values; NaN values are skipped.
pub fn decimate_min_max(values: &[f64], columns: usize) -> Vec<(f64, f64)> {
    let columns = columns.min(values.len());
    let mut out = Vec::with_capacity(columns);
    for c in 0..columns {
        let lo = c * values.len() / columns;
        let hi = (c + 1) * values.len() / columns;
        let (mut min, mut max) = (f64::INFINITY, f64::NEG_INFINITY);
        for &v in values.get(lo..hi).unwrap_or(&[]) {
            if v.is_finite() {
                min = min.min(v);
                max = max.max(v);
            }
        }
        if min <= max {
            out.push((min, max));
        } else {
            out.push((0.0, 0.0));
        }
    }
    out
}

/// An amplitude spectrum as an inline SVG: amplitude (linear, from 0) against frequency. `title` is
/// shown as the accessible title; the labels give the frequency span and the largest amplitude.
pub fn spectrum_svg(freq_hz: &[f64], amplitude: &[f64], units: &str, title: &str) -> String {
    let n = freq_hz.len().min(amplitude.len());
    let cols = decimate_min_max(amplitude.get(..n).unwrap_or(&[]), PLOT_WIDTH);
    let peak = cols.iter().map(|c| c.1).fold(0.0_f64, f64::max);
    let f_max = freq_hz
        .get(..n)
        .and_then(<[f64]>::last)
        .copied()
        .unwrap_or(0.0);
    let (w, h) = (PLOT_WIDTH as f64, PLOT_HEIGHT as f64);
    let plot_h = h - 14.0;
    let y = |v: f64| {
        if peak > 0.0 {
            plot_h - v / peak * (plot_h - 2.0)
        } else {
            plot_h
        }
    };
    let mut points = String::new();
    let step = if cols.is_empty() {
        0.0
    } else {
        w / cols.len() as f64
    };
    for (i, (lo, hi)) in cols.iter().enumerate() {
        let x = (i as f64 + 0.5) * step;
        let _ = write!(points, "{x:.1},{:.1} {x:.1},{:.1} ", y(*hi), y(*lo));
    }
    let mut svg = open_svg(title);
    let _ = write!(
        svg,
        r##"<polyline fill="none" stroke="#2b4c7e" stroke-width="1" points="{}"/>"##,
        points.trim_end()
    );
    let _ = write!(
        svg,
        r##"<line x1="0" y1="{plot_h}" x2="{w}" y2="{plot_h}" stroke="#888" stroke-width="0.5"/><text x="2" y="{}" font-size="9">0 Hz</text><text x="{}" y="{}" font-size="9" text-anchor="end">{} Hz</text><text x="{}" y="9" font-size="9" text-anchor="end">peak {} {}</text></svg>"##,
        h - 3.0,
        w - 2.0,
        h - 3.0,
        fmt_number(f_max),
        w - 2.0,
        fmt_number(peak),
        escape(units),
    );
    svg
}

/// A trend (value against time, in days) as an inline SVG polyline with a dot per point.
pub fn trend_svg(points: &[(chrono::NaiveDate, f64)], units: &str, title: &str) -> String {
    let (w, h) = (PLOT_WIDTH as f64, PLOT_HEIGHT as f64);
    let plot_h = h - 14.0;
    let finite: Vec<(chrono::NaiveDate, f64)> =
        points.iter().copied().filter(|p| p.1.is_finite()).collect();
    let mut svg = open_svg(title);
    let (Some(first), Some(last)) = (finite.first(), finite.last()) else {
        let _ = write!(
            svg,
            r#"<text x="4" y="40" font-size="10">no trend data</text></svg>"#
        );
        return svg;
    };
    let span_days = (last.0 - first.0).num_days().max(1) as f64;
    let top = finite.iter().map(|p| p.1).fold(0.0_f64, f64::max);
    let x = |d: chrono::NaiveDate| 4.0 + (d - first.0).num_days() as f64 / span_days * (w - 8.0);
    let y = |v: f64| {
        if top > 0.0 {
            plot_h - v / top * (plot_h - 4.0)
        } else {
            plot_h
        }
    };
    let mut line = String::new();
    let mut dots = String::new();
    for &(d, v) in &finite {
        let _ = write!(line, "{:.1},{:.1} ", x(d), y(v));
        let _ = write!(
            dots,
            r##"<circle cx="{:.1}" cy="{:.1}" r="1.6" fill="#7a3b69"/>"##,
            x(d),
            y(v)
        );
    }
    let _ = write!(
        svg,
        r##"<polyline fill="none" stroke="#7a3b69" stroke-width="1" points="{}"/>{dots}<line x1="0" y1="{plot_h}" x2="{w}" y2="{plot_h}" stroke="#888" stroke-width="0.5"/><text x="2" y="{}" font-size="9">{}</text><text x="{}" y="{}" font-size="9" text-anchor="end">{}</text><text x="{}" y="9" font-size="9" text-anchor="end">latest {} {}</text></svg>"##,
        line.trim_end(),
        h - 3.0,
        first.0,
        w - 2.0,
        h - 3.0,
        last.0,
        w - 2.0,
        fmt_number(last.1),
        escape(units),
    );
    svg
}

fn open_svg(title: &str) -> String {
    format!(
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{PLOT_WIDTH}" height="{PLOT_HEIGHT}" viewBox="0 0 {PLOT_WIDTH} {PLOT_HEIGHT}" role="img"><title>{}</title>"#,
        escape(title)
    )
}

/// Three significant figures, plain notation where it reads well.
pub(crate) fn fmt_number(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return "0".to_owned();
    }
    let mag = v.abs().log10().floor() as i32;
    if (-3..5).contains(&mag) {
        let decimals = (2 - mag).max(0) as usize;
        format!("{v:.decimals$}")
    } else {
        format!("{v:.2e}")
    }
}

/// Escapes text for HTML and SVG content and attribute values.
pub(crate) fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn min_max_decimation_keeps_a_one_bin_peak() {
        let mut v = vec![0.01; 100_000];
        v[54_321] = 5.0;
        v[777] = -1.0;
        let cols = decimate_min_max(&v, 320);
        assert_eq!(cols.len(), 320);
        let top = cols.iter().map(|c| c.1).fold(f64::MIN, f64::max);
        let bottom = cols.iter().map(|c| c.0).fold(f64::MAX, f64::min);
        assert!((top - 5.0).abs() < f64::EPSILON);
        assert!((bottom + 1.0).abs() < f64::EPSILON);
        // The peak is in the column that holds index 54 321.
        let col = 54_321 * 320 / 100_000;
        assert!((cols[col].1 - 5.0).abs() < f64::EPSILON);
        // Fewer values than columns: one column per value.
        assert_eq!(
            decimate_min_max(&[1.0, 2.0, 3.0], 320),
            vec![(1.0, 1.0), (2.0, 2.0), (3.0, 3.0)]
        );
        assert!(decimate_min_max(&[], 320).is_empty());
    }

    #[test]
    fn spectrum_svg_stays_small_and_shows_the_peak() {
        let n = 65_536;
        let f: Vec<f64> = (0..n).map(|i| i as f64 * 0.5).collect();
        let mut a = vec![0.001; n];
        a[1234] = 0.25;
        let svg = spectrum_svg(&f, &a, "g", "IN-P1 <MNDE>");
        // Two points per column at most: well under 16 kB whatever the spectrum length.
        assert!(svg.len() < 16_000, "{} bytes", svg.len());
        assert!(svg.contains("peak 0.250 g"), "{svg}");
        assert!(
            svg.contains("32767 Hz") || svg.contains("32768 Hz") || svg.contains("3.28e4"),
            "{svg}"
        );
        assert!(svg.contains("IN-P1 &lt;MNDE&gt;"));
        assert_eq!(svg.matches("<svg").count(), 1);
        assert!(svg.ends_with("</svg>"));
    }

    #[test]
    fn trend_svg_draws_each_point_and_handles_no_data() {
        let d = |s: &str| s.parse::<chrono::NaiveDate>().unwrap();
        let pts = vec![
            (d("2026-01-10"), 1.0),
            (d("2026-02-10"), 1.5),
            (d("2026-03-10"), f64::NAN),
            (d("2026-04-10"), 3.0),
        ];
        let svg = trend_svg(&pts, "mm/s", "trend");
        assert_eq!(svg.matches("<circle").count(), 3);
        assert!(svg.contains("latest 3.00 mm/s"), "{svg}");
        assert!(svg.contains("2026-01-10") && svg.contains("2026-04-10"));
        assert!(trend_svg(&[], "g", "t").contains("no trend data"));
    }
}
