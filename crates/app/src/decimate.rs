//! Min/max decimation of long uniform series to screen columns.
//!
//! A spectrum of 32,768 lines drawn into a plot 1,000 pixels wide would put 33 lines in every pixel
//! column. Drawing each column as the vertical span from its smallest to its largest value keeps every
//! peak visible (a single-line tone never disappears between samples) while the plot holds at most two
//! points per column.

/// A series on a uniform grid: sample `i` is at `x0 + i × dx`.
#[derive(Debug, Clone, Copy)]
pub struct UniformSeries<'a> {
    /// Position of the first sample.
    pub x0: f64,
    /// Spacing between samples (must be positive).
    pub dx: f64,
    /// The values.
    pub y: &'a [f32],
}

/// Appends to `out` the points that draw `series` over `x_range` in `columns` screen columns.
///
/// Where the visible part has no more than two samples per column, every sample is emitted. Otherwise
/// each column contributes its minimum and maximum, in the order they occur, so a line through the points
/// covers every value of the column. One sample beyond each end of the range is included so the curve
/// runs to the plot edges. `map_y` transforms values (log scale, stacking offset); it must be monotonic
/// non-decreasing so that the minimum and maximum stay where they were.
pub fn decimate_minmax(
    series: UniformSeries<'_>,
    x_range: (f64, f64),
    columns: usize,
    map_y: impl Fn(f32) -> f64,
    out: &mut Vec<[f64; 2]>,
) {
    let len = series.y.len();
    // Checked before min/max, which would quietly drop a NaN end.
    if !(x_range.0.is_finite() && x_range.1.is_finite()) {
        return;
    }
    let (lo, hi) = (x_range.0.min(x_range.1), x_range.0.max(x_range.1));
    // NaN counts as not positive.
    if len == 0 || series.dx.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) || columns == 0
    {
        return;
    }
    let last = len - 1;
    let index_of = |x: f64| ((x - series.x0) / series.dx).clamp(0.0, last as f64);
    let first_i = (index_of(lo).floor() as usize).saturating_sub(1);
    let last_i = (index_of(hi).ceil() as usize + 1).min(last);
    if first_i > last_i {
        return;
    }
    let x_at = |i: usize| series.x0 + i as f64 * series.dx;
    let count = last_i - first_i + 1;
    if count <= 2 * columns {
        out.extend((first_i..=last_i).map(|i| [x_at(i), map_y(series.y[i])]));
        return;
    }
    out.reserve(2 * columns);
    for c in 0..columns {
        let start = first_i + c * count / columns;
        let end = first_i + (c + 1) * count / columns;
        let Some(chunk) = series.y.get(start..end) else {
            continue;
        };
        let Some(extremes) = min_max(chunk) else {
            continue;
        };
        let x = x_at(start);
        let ((i_min, v_min), (i_max, v_max)) = extremes;
        if i_min <= i_max {
            out.push([x, map_y(v_min)]);
            out.push([x, map_y(v_max)]);
        } else {
            out.push([x, map_y(v_max)]);
            out.push([x, map_y(v_min)]);
        }
    }
}

/// Index and value of the smallest and largest finite values; `None` when there is none.
fn min_max(values: &[f32]) -> Option<((usize, f32), (usize, f32))> {
    let mut best: Option<((usize, f32), (usize, f32))> = None;
    for (i, &v) in values.iter().enumerate() {
        if !v.is_finite() {
            continue;
        }
        best = Some(match best {
            None => ((i, v), (i, v)),
            Some((mn, mx)) => (
                if v < mn.1 { (i, v) } else { mn },
                if v > mx.1 { (i, v) } else { mx },
            ),
        });
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    fn series(y: &[f32]) -> UniformSeries<'_> {
        UniformSeries {
            x0: 0.0,
            dx: 0.5,
            y,
        }
    }

    // Min/max decimation keeps every extreme of each column (common practice, no source).
    #[test]
    fn single_line_peak_survives_decimation() {
        let mut y = vec![0.001_f32; 32_768];
        y[12_345] = 3.0;
        let mut out = Vec::new();
        decimate_minmax(series(&y), (0.0, 16_384.0), 800, f64::from, &mut out);
        assert!(out.len() <= 2 * 800, "{} points", out.len());
        let peak = out.iter().map(|p| p[1]).fold(f64::MIN, f64::max);
        assert!((peak - 3.0).abs() < 1e-9, "peak {peak}");
    }

    #[test]
    fn every_column_spans_its_samples() {
        let y: Vec<f32> = (0..10_000)
            .map(|i| ((i as f32) * 0.37).sin() * (i as f32 / 100.0))
            .collect();
        let mut out = Vec::new();
        decimate_minmax(series(&y), (0.0, 5_000.0), 100, f64::from, &mut out);
        let top = out.iter().map(|p| p[1]).fold(f64::MIN, f64::max);
        let bottom = out.iter().map(|p| p[1]).fold(f64::MAX, f64::min);
        let true_top = y.iter().copied().fold(f32::MIN, f32::max);
        let true_bottom = y.iter().copied().fold(f32::MAX, f32::min);
        assert!((top - f64::from(true_top)).abs() < 1e-6);
        assert!((bottom - f64::from(true_bottom)).abs() < 1e-6);
        // The x positions never go backwards, so the line does not fold over itself.
        assert!(out.windows(2).all(|w| w[1][0] >= w[0][0]));
    }

    #[test]
    fn zoomed_in_emits_raw_samples_with_one_beyond_each_edge() {
        let y: Vec<f32> = (0..1000).map(|i| i as f32).collect();
        let mut out = Vec::new();
        // Samples 200..=210 are inside 100.0..=105.0 (dx = 0.5).
        decimate_minmax(series(&y), (100.0, 105.0), 500, f64::from, &mut out);
        assert_eq!(out.first().map(|p| p[1]), Some(199.0));
        assert_eq!(out.last().map(|p| p[1]), Some(211.0));
        assert_eq!(out.len(), 13);
    }

    #[test]
    fn empty_or_bad_input_emits_nothing() {
        let mut out = Vec::new();
        decimate_minmax(series(&[]), (0.0, 1.0), 10, f64::from, &mut out);
        decimate_minmax(
            UniformSeries {
                x0: 0.0,
                dx: 0.0,
                y: &[1.0],
            },
            (0.0, 1.0),
            10,
            f64::from,
            &mut out,
        );
        decimate_minmax(
            series(&[1.0, 2.0]),
            (f64::NAN, 1.0),
            10,
            f64::from,
            &mut out,
        );
        assert!(out.is_empty());
    }

    #[test]
    fn map_y_is_applied() {
        let y = [1.0_f32, 10.0, 100.0];
        let mut out = Vec::new();
        decimate_minmax(
            series(&y),
            (0.0, 1.0),
            10,
            |v| f64::from(v).log10(),
            &mut out,
        );
        let ys: Vec<f64> = out.iter().map(|p| p[1]).collect();
        assert_eq!(ys, vec![0.0, 1.0, 2.0]);
    }
}
