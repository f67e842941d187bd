//! One bearing's spectra from chosen months, overlaid or stacked, with fault-frequency markers.

use eframe::egui;
use egui_plot::{Legend, Line, LineStyle, Plot, PlotPoints, Text, VLine};
use spallcast_analysis::{FaultKind, FaultMarker, MarkerFamily, fault_markers};

use crate::actions::Action;
use crate::cache::{ReadingCache, Slot};
use crate::decimate::{UniformSeries, decimate_minmax};
use crate::model::{
    BearingHistory, BearingKey, ReadingId, ReadingSummary, SharedSpectra, SpectrumKind,
};
use crate::palette;
use crate::settings::{
    AmplitudeScale, FreqAxis, Layout, MarkerSettings, SpectraSettings, UnitPrefs, fault_label,
};

/// Smallest amplitude drawn on the log scale (keeps log10 finite for empty lines).
const LOG_FLOOR: f32 = 1e-9;

/// Most marker labels drawn at once; beyond this only the lines are drawn.
const MAX_MARKER_LABELS: usize = 40;

/// What the last frame drew: for the status line, the tests and the bench.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SpectraFrameSummary {
    /// Readings drawn, oldest first.
    pub drawn: Vec<ReadingId>,
    /// Readings selected whose spectra are still being computed.
    pub waiting: Vec<ReadingId>,
    /// Markers drawn (label, frequency in Hz), in frequency order.
    pub markers: Vec<(String, f64)>,
    /// Plot points drawn in total (after decimation).
    pub plotted_points: usize,
    /// The x range (in the axis unit) the curves were drawn over.
    pub x_range: (f64, f64),
    /// Amplitude axis title drawn.
    pub y_title: String,
    /// Highest amplitude drawn (display unit; log10 of it on the log scale; stacked: with offsets).
    pub y_top: f64,
    /// Top of the amplitude axis shown.
    pub view_top: f64,
}

/// Cursor readout under the plot.
#[derive(Debug, Clone, PartialEq)]
pub struct CursorReadout {
    /// Frequency under the cursor, Hz.
    pub freq_hz: f64,
    /// Order of the newest reading's shaft speed.
    pub order: f64,
    /// Amplitude of the newest spectrum at that line, in the display unit.
    pub amplitude: Option<f32>,
    /// Nearest drawn marker and its distance in Hz.
    pub nearest_marker: Option<(String, f64)>,
}

/// The spectra view of the selected bearing.
#[derive(Debug, Default)]
pub struct SpectraPanel {
    /// The bearing the selection below belongs to.
    bearing: Option<BearingKey>,
    /// Measurement point shown.
    pub point: Option<String>,
    /// Readings overlaid, oldest first.
    pub selected: Vec<ReadingId>,
    /// What the last frame drew.
    pub summary: SpectraFrameSummary,
    /// Cursor readout of the last frame.
    pub cursor: Option<CursorReadout>,
    /// What the plot was last fitted for (kind, axis, full span, point); when it changes (the spectra
    /// arrived, another kind, axis or point was chosen) the plot opens on the defect region again.
    fitted_for: Option<(SpectrumKind, FreqAxis, u64, Option<String>)>,
    /// Upper frequency edge (axis unit) shown; the Fmax field edits it.
    pub fmax: f64,
    /// An x range (axis unit) to apply on the next frame (Fmax edited, "Fit to markers", "Full span").
    pending_x: Option<(f64, f64)>,
    /// Full span (axis unit) of the last frame's spectra.
    full_x: f64,
    /// Highest fault or shaft marker (not sidebands) of the last frame, axis unit.
    markers_x_max: Option<f64>,
    /// Display units (set by the app from the saved choice before each frame).
    pub units: UnitPrefs,
    /// What the plot drew in the last frame (for "Save plot"), and its rectangle on screen (points).
    pub picture: Option<(crate::plot_export::PlotPicture, egui::Rect)>,
}

/// Upper frequency (Hz) a spectrum opens at: up to about 10x the highest fault repetition frequency
/// for the envelope and velocity spectra (their defect tones and first harmonics), the resonance
/// region (a little above the demodulation band) for acceleration; never above `max_hz`. Without
/// bearing factors the envelope and velocity open up to 50x shaft speed, and acceleration without a
/// band at full span (common practice, no source).
pub fn opening_fmax_hz(
    kind: SpectrumKind,
    freqs: Option<&spallcast_analysis::FaultFrequencies>,
    shaft_hz: f64,
    band_hz: Option<(f64, f64)>,
    max_hz: f64,
) -> f64 {
    let highest = freqs.map(|f| {
        FaultKind::ALL
            .iter()
            .map(|k| f.defect_rate_hz(*k))
            .fold(0.0_f64, f64::max)
    });
    let wanted = match kind {
        SpectrumKind::Envelope | SpectrumKind::Velocity => match highest {
            Some(h) if h > 0.0 => 10.5 * h,
            _ if shaft_hz > 0.0 => 50.0 * shaft_hz,
            _ => max_hz,
        },
        SpectrumKind::Acceleration => band_hz.map_or(max_hz, |(_, hi)| 1.5 * hi),
    };
    if wanted.is_finite() && wanted > 0.0 {
        wanted.min(max_hz)
    } else {
        max_hz
    }
}

/// Grid marks for the frequency axis: a 1-2-5 step giving about eight labelled lines across the
/// visible range at any zoom, with four unlabelled lines between them.
#[allow(
    clippy::needless_pass_by_value,
    reason = "egui_plot's grid spacer takes its input by value"
)]
pub fn frequency_grid(input: egui_plot::GridInput) -> Vec<egui_plot::GridMark> {
    let (lo, hi) = input.bounds;
    let span = hi - lo;
    if !(span.is_finite() && span > 0.0) {
        return Vec::new();
    }
    let step = crate::plot_export::nice_step(span, 8);
    let minor = step / 5.0;
    let first = (lo / minor).floor() as i64;
    let last = (hi / minor).ceil() as i64;
    if last - first > 400 {
        return Vec::new();
    }
    (first..=last)
        .map(|i| {
            let value = i as f64 * minor;
            let major = i.rem_euclid(5) == 0;
            egui_plot::GridMark {
                value,
                step_size: if major { step } else { minor },
            }
        })
        .collect()
}

/// The default months of a point: the latest reading, the one before it, and the baseline (first
/// reading of the latest reading's bearing life), oldest first.
pub fn default_selection(history: &BearingHistory, point: &str) -> Vec<ReadingId> {
    let readings: Vec<&ReadingSummary> = history.readings_of(point).collect();
    let Some(&latest) = readings.last() else {
        return Vec::new();
    };
    let life_start = history.life_start_for(latest.taken_at.date_naive());
    let in_life = |r: &&&ReadingSummary| life_start.is_none_or(|d| r.taken_at.date_naive() >= d);
    // The analyst's marked baseline when there is one, else the life's first reading.
    let baseline = readings
        .iter()
        .filter(in_life)
        .find(|r| r.baseline)
        .or_else(|| readings.iter().find(in_life))
        .or(readings.first());
    let mut picked: Vec<&ReadingSummary> = baseline.into_iter().copied().collect();
    if readings.len() >= 2 {
        picked.push(readings[readings.len() - 2]);
    }
    picked.push(latest);
    picked.sort_by_key(|r| r.taken_at);
    let mut ids: Vec<ReadingId> = picked.iter().map(|r| r.id).collect();
    ids.dedup();
    ids
}

impl SpectraPanel {
    /// The readings overlaid for `key` (empty when the overlay belongs to another bearing).
    pub fn overlay_of(&self, key: &BearingKey) -> &[ReadingId] {
        if self.bearing.as_ref() == Some(key) {
            &self.selected
        } else {
            &[]
        }
    }

    /// Resets the month selection when another bearing's history arrives.
    pub fn sync_bearing(&mut self, history: &BearingHistory) {
        if self.bearing.as_ref() == Some(&history.key) {
            return;
        }
        self.bearing = Some(history.key.clone());
        self.point = history.points().into_iter().next();
        self.selected = self
            .point
            .as_deref()
            .map(|p| default_selection(history, p))
            .unwrap_or_default();
        self.summary = SpectraFrameSummary::default();
        self.cursor = None;
    }

    /// Moves the newest overlaid reading to the next (`step` > 0) or previous reading of the shown
    /// point, keeping the others (the month-over-month comparison walks through the life). Returns
    /// false when there is no reading that way.
    pub fn step_month(&mut self, history: &BearingHistory, step: i32) -> bool {
        let Some(point) = self.point.clone() else {
            return false;
        };
        let readings: Vec<&ReadingSummary> = history.readings_of(&point).collect();
        let Some(&newest) = self.selected.last() else {
            return false;
        };
        let Some(at) = readings.iter().position(|r| r.id == newest) else {
            return false;
        };
        let target = if step > 0 {
            at.checked_add(1)
        } else {
            at.checked_sub(1)
        };
        let Some(next) = target.and_then(|i| readings.get(i)).map(|r| r.id) else {
            return false;
        };
        self.selected.pop();
        if !self.selected.contains(&next) {
            self.selected.push(next);
        }
        self.selected
            .sort_by_key(|r| history.reading(*r).map(|s| s.taken_at));
        true
    }

    /// Adds or removes a reading from the overlay, keeping time order.
    pub fn toggle_reading(&mut self, history: &BearingHistory, id: ReadingId) {
        if let Some(i) = self.selected.iter().position(|r| *r == id) {
            self.selected.remove(i);
        } else {
            self.selected.push(id);
            self.selected
                .sort_by_key(|r| history.reading(*r).map(|s| s.taken_at));
        }
    }

    /// Draws the view.
    pub fn ui(
        &mut self,
        ui: &mut egui::Ui,
        settings: &mut SpectraSettings,
        history: &BearingHistory,
        cache: &ReadingCache,
        actions: &mut Vec<Action>,
    ) {
        self.sync_bearing(history);
        controls_ui(ui, settings);
        self.months_ui(ui, history);
        markers_ui(ui, &mut settings.markers, history.factors.is_some());
        self.range_ui(ui, settings.axis, actions);
        let missing: Vec<ReadingId> = self
            .selected
            .iter()
            .copied()
            .filter(|id| !cache.spectra.contains_key(id))
            .collect();
        if !missing.is_empty() {
            actions.push(Action::NeedSpectra(missing));
        }
        let mut failed = Vec::new();
        let mut curves: Vec<(&ReadingSummary, SharedSpectra)> = Vec::new();
        let mut waiting = Vec::new();
        for id in &self.selected {
            match (history.reading(*id), cache.spectra.get(id)) {
                (Some(r), Some(Slot::Ready(s))) => curves.push((r, s.clone())),
                (_, Some(Slot::Failed(e))) => failed.push(e.clone()),
                _ => waiting.push(*id),
            }
        }
        for e in &failed {
            ui.colored_label(ui.visuals().error_fg_color, e);
        }
        if !waiting.is_empty() {
            ui.horizontal(|ui| {
                ui.spinner();
                ui.label(format!("computing {} spectra…", waiting.len()));
            });
        }
        let readout_height = 22.0;
        let plot_height = (ui.available_height() - readout_height).max(120.0);
        self.plot_ui(ui, settings, history, &curves, plot_height);
        self.summary.waiting = waiting;
        self.readout_ui(ui, settings.kind);
    }

    /// Fmax field, "Fit to markers" and "Full span".
    fn range_ui(&mut self, ui: &mut egui::Ui, axis: FreqAxis, actions: &mut Vec<Action>) {
        ui.horizontal_wrapped(|ui| {
            let full = self.full_x;
            let mut fmax = self.fmax;
            let unit = match axis {
                FreqAxis::Hz => " Hz",
                FreqAxis::Cpm => " CPM",
                FreqAxis::Orders => " orders",
            };
            let edit = ui.add_enabled(
                full > 0.0,
                egui::DragValue::new(&mut fmax)
                    .range(0.0..=full.max(1.0))
                    .speed((full / 500.0).max(0.01))
                    .max_decimals(1)
                    .prefix("Fmax ")
                    .suffix(unit),
            );
            if edit.changed() && fmax > 0.0 {
                self.pending_x = Some((0.0, fmax.min(full)));
            }
            let fit = ui
                .add_enabled(
                    self.markers_x_max.is_some(),
                    egui::Button::new("Fit to markers"),
                )
                .on_hover_text("Show 0 Hz to a little past the highest fault marker switched on");
            if fit.clicked()
                && let Some(top) = self.markers_x_max
            {
                self.pending_x = Some((0.0, (top * 1.1).min(full)));
            }
            if ui
                .add_enabled(full > 0.0, egui::Button::new("Full span"))
                .clicked()
            {
                self.pending_x = Some((0.0, full));
            }
            ui.separator();
            if ui
                .add_enabled(
                    self.picture.is_some(),
                    egui::Button::new(crate::plot_export::EXPORT_BUTTON),
                )
                .on_hover_text("The plot as shown (PNG) and drawn again as a vector image (SVG)")
                .clicked()
            {
                actions.push(Action::ExportPlotDialog);
            }
        });
    }

    fn months_ui(&mut self, ui: &mut egui::Ui, history: &BearingHistory) {
        let points = history.points();
        ui.horizontal_wrapped(|ui| {
            ui.label("Point:");
            let current = self.point.clone().unwrap_or_default();
            egui::ComboBox::from_id_salt("spectra-point")
                .selected_text(&current)
                .show_ui(ui, |ui| {
                    for p in &points {
                        if ui.selectable_label(*p == current, p.as_str()).clicked() && *p != current
                        {
                            self.point = Some(p.clone());
                            self.selected = default_selection(history, p);
                        }
                    }
                });
            ui.label("Months:");
            let Some(point) = self.point.clone() else {
                return;
            };
            let days: Vec<(ReadingId, String, Option<u8>)> = history
                .readings_of(&point)
                .map(|r| {
                    let label = if r.baseline {
                        format!("{} (baseline)", r.day_label())
                    } else {
                        r.day_label()
                    };
                    (r.id, label, r.stage)
                })
                .collect();
            for (id, day, stage) in days {
                let mut on = self.selected.contains(&id);
                let response = ui.checkbox(&mut on, day);
                let response = match stage {
                    Some(s) => response.on_hover_text(format!("stage {s} at this reading")),
                    None => response,
                };
                if response.changed() {
                    self.toggle_reading(history, id);
                }
            }
        });
    }

    #[allow(
        clippy::too_many_lines,
        reason = "one plot closure: curves, stacked labels, band and markers share its range"
    )]
    fn plot_ui(
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

    fn readout_ui(&self, ui: &mut egui::Ui, kind: SpectrumKind) {
        let text = match &self.cursor {
            None => "Point at the plot for frequency, order, amplitude and the nearest marker. Scroll to zoom \
                     the frequency axis, drag to pan it, double-click for the full span."
                .to_owned(),
            Some(c) => {
                let unit = self.units.unit(kind);
                let amp = c.amplitude.map_or_else(|| "–".to_owned(), |a| format!("{a:.4} {unit}"));
                let near = c
                    .nearest_marker
                    .as_ref()
                    .map_or_else(String::new, |(label, d)| format!("   nearest marker {label} ({d:+.2} Hz)"));
                format!(
                    "{:.2} Hz   {:.0} CPM   {:.3} orders   {amp}{near}",
                    c.freq_hz,
                    c.freq_hz * 60.0,
                    c.order
                )
            }
        };
        ui.label(egui::RichText::new(text).monospace().small());
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

/// The fault family a marker belongs to (`None` for shaft harmonics).
fn marker_kind(m: &FaultMarker) -> Option<FaultKind> {
    match m.family {
        MarkerFamily::Shaft => None,
        MarkerFamily::Fault(k) | MarkerFamily::Sideband(k) => Some(k),
    }
}

/// Whether the settings show this marker.
pub fn marker_shown(settings: &MarkerSettings, m: &FaultMarker) -> bool {
    match m.family {
        MarkerFamily::Shaft => settings.shaft,
        MarkerFamily::Fault(k) => settings.toggle(k).harmonics,
        MarkerFamily::Sideband(k) => settings.toggle(k).sidebands,
    }
}

fn markers_ui(ui: &mut egui::Ui, m: &mut MarkerSettings, factors_known: bool) {
    ui.horizontal_wrapped(|ui| {
        ui.label("Markers:");
        if !factors_known {
            ui.label(egui::RichText::new("bearing type unknown: no fault frequencies").italics());
            return;
        }
        ui.checkbox(&mut m.shaft, "1x harmonics");
        for kind in FaultKind::ALL {
            let colour = palette::fault_colour(Some(kind));
            let t = m.toggle_mut(kind);
            ui.checkbox(
                &mut t.harmonics,
                egui::RichText::new(fault_label(kind)).color(colour),
            );
            ui.checkbox(&mut t.sidebands, format!("{} sidebands", fault_label(kind)));
            ui.add_space(6.0);
        }
        ui.add(
            egui::DragValue::new(&mut m.harmonic_count)
                .range(1..=20)
                .prefix("harmonics "),
        );
        ui.add(
            egui::DragValue::new(&mut m.sideband_pairs)
                .range(0..=5)
                .prefix("sideband pairs "),
        );
    });
}

/// Spectrum kind, amplitude scale, frequency unit and layout.
fn controls_ui(ui: &mut egui::Ui, settings: &mut SpectraSettings) {
    ui.horizontal_wrapped(|ui| {
        for kind in SpectrumKind::ALL {
            ui.selectable_value(&mut settings.kind, kind, kind.label());
        }
        ui.separator();
        ui.selectable_value(&mut settings.scale, AmplitudeScale::Linear, "Linear");
        ui.selectable_value(&mut settings.scale, AmplitudeScale::Log, "Log");
        ui.separator();
        for axis in [FreqAxis::Hz, FreqAxis::Cpm, FreqAxis::Orders] {
            ui.selectable_value(&mut settings.axis, axis, axis.label());
        }
        ui.separator();
        ui.selectable_value(&mut settings.layout, Layout::Overlay, "Overlaid");
        ui.selectable_value(&mut settings.layout, Layout::Stacked, "Stacked in time");
    });
}

/// The fault-frequency markers switched on, at the newest reading's shaft speed, up to its top line.
fn shown_markers(
    settings: &SpectraSettings,
    history: &BearingHistory,
    newest: Option<&SharedSpectra>,
    ref_shaft_hz: f64,
) -> Vec<FaultMarker> {
    match (history.factors, newest) {
        (Some(f), Some(s)) if ref_shaft_hz > 0.0 => {
            let m = &settings.markers;
            fault_markers(
                &f.at_shaft_hz(ref_shaft_hz),
                m.harmonic_count,
                m.sideband_pairs,
                s.get(settings.kind).max_hz(),
            )
            .into_iter()
            .filter(|mk| marker_shown(m, mk))
            .collect()
        }
        _ => Vec::new(),
    }
}
