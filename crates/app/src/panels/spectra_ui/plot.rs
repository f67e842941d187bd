//! The spectra plot: curves overlaid or stacked, the fault-frequency markers and the cursor readout's
//! data.

use eframe::egui;
use egui_plot::{Legend, Line, LineStyle, Plot, PlotPoints, Text, VLine};
use spallcast_analysis::{FaultMarker, MarkerFamily};

use super::markers::{marker_kind, shown_markers};
use super::{
    CursorReadout, LOG_FLOOR, MAX_MARKER_LABELS, SpectraPanel, frequency_grid, opening_fmax_hz,
};
use crate::decimate::{UniformSeries, decimate_minmax};
use crate::model::{BearingHistory, ReadingSummary, SharedSpectra, SpectrumKind};
use crate::palette;
use crate::settings::{AmplitudeScale, FreqAxis, Layout, SpectraSettings};

impl SpectraPanel {
    #[allow(
        clippy::too_many_lines,
        reason = "one plot closure: curves, stacked labels, band and markers share its range"
    )]
    pub(super) fn plot_ui(
        &mut self,
        ui: &mut egui::Ui,
        settings: &SpectraSettings,
        history: &BearingHistory,
        curves: &[(&ReadingSummary, SharedSpectra)],
        height: f32,
    ) {
        let kind = settings.kind;
        let axis = settings.axis;
        let newest = curves.last();
        let ref_shaft_hz = newest.map_or(0.0, |(r, _)| r.shaft_hz());
        let max_x = curves
            .iter()
            .map(|(r, s)| axis.from_hz(s.get(kind).max_hz(), r.shaft_hz()))
            .filter(|x| x.is_finite())
            .fold(0.0_f64, f64::max);
        let markers = shown_markers(settings, history, newest.map(|(_, s)| s), ref_shaft_hz);
        let factor = self.units.factor(kind);
        let step = stack_step(settings, curves, factor);
        let scale = settings.scale;
        let count = curves.len();
        let mut plotted = 0;
        let mut data_top = f64::MIN;
        let mut view_top = f64::NAN;
        let mut x_range = (0.0, 0.0);
        let full_x = if max_x > 0.0 { max_x } else { 1.0 };
        // Scrolling zooms the frequency axis about the pointer and dragging pans it; the amplitude
        // axis always fits the data in view, so neither can move it off the curves.
        let plot = Plot::new(("spectra-plot", kind, axis, scale, settings.layout))
            .height(height)
            .legend(Legend::default().follow_insertion_order(true))
            .x_axis_label(axis.title())
            .y_axis_label(self.units.axis_title(kind))
            .auto_bounds(egui::Vec2b::new(false, true))
            .default_x_bounds(0.0, full_x)
            .allow_zoom(egui::Vec2b::new(true, false))
            .allow_scroll(false)
            .allow_drag(egui::Vec2b::new(true, false))
            .allow_boxed_zoom(false)
            .x_grid_spacer(frequency_grid);
        let plot = match (scale, settings.layout) {
            (AmplitudeScale::Log, Layout::Overlay) => {
                plot.y_axis_formatter(|mark, _| format!("{:.0e}", 10f64.powf(mark.value)))
            }
            (_, Layout::Stacked) => plot.show_axes(egui::Vec2b::new(true, false)),
            _ => plot,
        };
        let marker_xs: Vec<(f64, &FaultMarker)> = markers
            .iter()
            .map(|m| (axis.from_hz(m.freq_hz, ref_shaft_hz), m))
            .collect();
        // The plot keeps its bounds between frames: open it on the defect region when the spectra
        // arrive (the first frames have none) or the kind, axis or point changes; zoom and pan are
        // kept otherwise.
        let fit_key = (kind, axis, max_x.to_bits(), self.point.clone());
        let refit = max_x > 0.0 && self.fitted_for.as_ref() != Some(&fit_key);
        if refit {
            let open_x = opening_x(kind, axis, history, newest, max_x);
            self.pending_x = Some((0.0, if open_x > 0.0 { open_x } else { max_x }));
        }
        let pending = self.pending_x.take();
        let zoom_steps = ui.input(|i| i.smooth_scroll_delta.y);
        let band_x = newest
            .and_then(|(_, s)| s.envelope_band_hz)
            .filter(|_| kind == SpectrumKind::Acceleration)
            .map(|(lo, hi)| {
                (
                    axis.from_hz(lo, ref_shaft_hz),
                    axis.from_hz(hi, ref_shaft_hz),
                )
            });
        let mut picture = crate::plot_export::PlotPicture {
            title: format!(
                "{} {} {}, {}",
                history.key.machine_id,
                history.key.position,
                self.point.as_deref().unwrap_or(""),
                kind.label().to_lowercase()
            ),
            x_title: axis.title().to_owned(),
            y_title: self.units.axis_title(kind),
            log_y: scale == AmplitudeScale::Log,
            stacked: settings.layout == Layout::Stacked,
            markers: marker_xs
                .iter()
                .map(|(x, m)| (m.label.clone(), *x))
                .collect(),
            band: band_x.map(|(a, b)| (a, b, "demodulation band".to_owned())),
            ..Default::default()
        };
        let response = plot.show(ui, |pui| {
            if let Some((a, b)) = pending {
                pui.set_plot_bounds_x(a..=b);
            } else if zoom_steps != 0.0 && pui.response().hovered() {
                let factor = (zoom_steps / 200.0).exp();
                pui.zoom_bounds_around_hovered(egui::Vec2::new(factor, 1.0));
            }
            let bounds = pui.plot_bounds();
            let (mut x0, mut x1) = (bounds.min()[0], bounds.max()[0]);
            // Never show negative frequencies nor run past the top line.
            if x0.is_finite() && x1.is_finite() && x1 > x0 && (x0 < 0.0 || x1 > full_x * 1.02) {
                let width = (x1 - x0).min(full_x);
                x0 = x0.max(0.0).min(full_x - width);
                x1 = x0 + width;
                pui.set_plot_bounds_x(x0..=x1);
            }
            let range = if let Some((a, b)) = pending {
                (a, b)
            } else if x0.is_finite() && x1.is_finite() && x1 > x0 {
                (x0, x1)
            } else {
                (0.0, max_x)
            };
            x_range = range;
            let columns = pui.transform().frame().width().max(16.0) as usize;
            for (i, (reading, spectra)) in curves.iter().enumerate() {
                let spectrum = spectra.get(kind);
                let offset = step * i as f64;
                let series = UniformSeries {
                    x0: 0.0,
                    dx: axis.from_hz(spectrum.df_hz, reading.shaft_hz()),
                    y: &spectrum.amplitude,
                };
                let mut buf = Vec::with_capacity(2 * columns + 4);
                match scale {
                    AmplitudeScale::Linear => {
                        decimate_minmax(
                            series,
                            range,
                            columns,
                            |v| f64::from(v) * factor + offset,
                            &mut buf,
                        );
                    }
                    AmplitudeScale::Log => {
                        decimate_minmax(
                            series,
                            range,
                            columns,
                            |v| (f64::from(v.max(LOG_FLOOR)) * factor).log10() + offset,
                            &mut buf,
                        );
                    }
                }
                plotted += buf.len();
                data_top = buf.iter().map(|p| p[1]).fold(data_top, f64::max);
                let newest_curve = i + 1 == count;
                let colour = palette::curve_colour(i, count);
                if step > 0.0 {
                    // Stacked: name each trace at its left end.
                    pui.text(
                        Text::new(
                            "",
                            egui_plot::PlotPoint::new(
                                range.0 + 0.01 * (range.1 - range.0),
                                offset + 0.35 * step,
                            ),
                            reading.legend_label(),
                        )
                        .color(colour)
                        .anchor(egui::Align2::LEFT_BOTTOM),
                    );
                }
                picture.series.push(crate::plot_export::PictureSeries {
                    label: reading.legend_label(),
                    colour,
                    points: buf.clone(),
                });
                pui.line(
                    Line::new(reading.legend_label(), PlotPoints::new(buf))
                        .color(colour)
                        .width(if newest_curve { 1.8 } else { 1.1 }),
                );
            }
            if let Some((lo, hi)) = band_x {
                for x in [lo, hi] {
                    pui.vline(
                        VLine::new("demodulation band", x)
                            .color(palette::DEMOD_BAND)
                            .style(LineStyle::dashed_loose())
                            .width(1.4),
                    );
                }
            }
            draw_markers(pui, &marker_xs, range, data_top);
            view_top = pui.plot_bounds().max()[1];
            pui.pointer_coordinate()
        });
        self.summary.drawn = curves.iter().map(|(r, _)| r.id).collect();
        self.summary.markers = markers
            .iter()
            .map(|m| (m.label.clone(), m.freq_hz))
            .collect();
        self.summary.plotted_points = plotted;
        self.summary.x_range = x_range;
        self.summary.y_title = self.units.axis_title(kind);
        self.summary.y_top = data_top;
        self.summary.view_top = view_top;
        picture.x_range = x_range;
        self.picture = (!curves.is_empty()).then_some((picture, response.response.rect));
        if refit {
            self.fitted_for = Some(fit_key);
        }
        self.fmax = x_range.1;
        self.full_x = max_x;
        self.markers_x_max = marker_xs
            .iter()
            .filter(|(_, m)| m.sideband == 0)
            .map(|(x, _)| *x)
            .filter(|x| x.is_finite() && *x <= max_x)
            .reduce(f64::max);
        self.cursor = response.inner.and_then(|p| {
            let (_, spectra) = newest?;
            let freq_hz = axis.to_hz(p.x, ref_shaft_hz);
            if !(freq_hz.is_finite() && freq_hz >= 0.0) {
                return None;
            }
            let nearest = marker_xs
                .iter()
                .min_by(|a, b| (a.0 - p.x).abs().total_cmp(&(b.0 - p.x).abs()))
                .map(|(_, m)| (m.label.clone(), freq_hz - m.freq_hz));
            Some(CursorReadout {
                freq_hz,
                order: freq_hz / ref_shaft_hz,
                amplitude: spectra
                    .get(kind)
                    .amplitude_at(freq_hz)
                    .map(|a| (f64::from(a) * factor) as f32),
                nearest_marker: nearest,
            })
        });
    }
}

/// The x (axis unit) the plot opens at for the newest reading: [`opening_fmax_hz`] in the axis unit.
fn opening_x(
    kind: SpectrumKind,
    axis: FreqAxis,
    history: &BearingHistory,
    newest: Option<&(&ReadingSummary, SharedSpectra)>,
    max_x: f64,
) -> f64 {
    let ref_shaft_hz = newest.map_or(0.0, |(r, _)| r.shaft_hz());
    let band = newest.and_then(|(_, s)| s.envelope_band_hz);
    let freqs = history
        .factors
        .filter(|_| ref_shaft_hz > 0.0)
        .map(|f| f.at_shaft_hz(ref_shaft_hz));
    let max_hz = axis.to_hz(max_x, ref_shaft_hz);
    let open_hz = opening_fmax_hz(kind, freqs.as_ref(), ref_shaft_hz, band, max_hz);
    axis.from_hz(open_hz, ref_shaft_hz).min(max_x)
}

/// Marker lines in `range`, with labels hanging from the top of the view (so they stay in sight at
/// any zoom) unless there are too many.
fn draw_markers(
    pui: &mut egui_plot::PlotUi<'_>,
    marker_xs: &[(f64, &FaultMarker)],
    range: (f64, f64),
    data_top: f64,
) {
    let visible: Vec<&(f64, &FaultMarker)> = marker_xs
        .iter()
        .filter(|(x, _)| *x >= range.0 && *x <= range.1)
        .collect();
    for (x, m) in &visible {
        let colour = palette::fault_colour(marker_kind(m));
        let line = VLine::new("", *x).color(colour.gamma_multiply(0.8));
        let line = if matches!(m.family, MarkerFamily::Sideband(_)) {
            line.style(LineStyle::dashed_dense()).width(0.8)
        } else {
            line.width(1.2)
        };
        pui.vline(line);
    }
    // Labels hang from the top of the curves in view, so they stay in sight at any zoom. (Not from
    // the top of the view: the amplitude axis fits everything drawn, labels included, so each frame
    // would lift it a margin higher.)
    let label_y = data_top;
    if label_y.is_finite() && label_y > f64::MIN && visible.len() <= MAX_MARKER_LABELS {
        for (x, m) in visible.iter().filter(|(_, m)| m.sideband == 0) {
            let colour = palette::fault_colour(marker_kind(m));
            pui.text(
                Text::new("", egui_plot::PlotPoint::new(*x, label_y), m.label.clone())
                    .color(colour)
                    .anchor(egui::Align2::LEFT_TOP),
            );
        }
    }
}

/// Vertical offset between stacked months: a little above the largest peak (linear) or two decades (log).
fn stack_step(
    settings: &SpectraSettings,
    curves: &[(&ReadingSummary, SharedSpectra)],
    factor: f64,
) -> f64 {
    if settings.layout == Layout::Overlay {
        return 0.0;
    }
    match settings.scale {
        AmplitudeScale::Log => 2.0,
        AmplitudeScale::Linear => {
            let peak = curves
                .iter()
                .flat_map(|(_, s)| s.get(settings.kind).amplitude.iter().copied())
                .filter(|v| v.is_finite())
                .fold(0.0_f32, f32::max);
            f64::from(peak) * factor * 0.6
        }
    }
}
