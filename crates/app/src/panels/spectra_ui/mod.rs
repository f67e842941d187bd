//! One bearing's spectra from chosen months, overlaid or stacked, with fault-frequency markers.
//!
//! `plot.rs` draws the plot itself (curves, stacking, markers, cursor); `markers.rs` has the marker
//! choice and the display controls.

mod markers;
mod plot;

pub use markers::marker_shown;
use markers::{controls_ui, markers_ui};

use eframe::egui;
use spallcast_analysis::FaultKind;

use crate::actions::Action;
use crate::cache::{ReadingCache, Slot};
use crate::model::{
    BearingHistory, BearingKey, ReadingId, ReadingSummary, SharedSpectra, SpectrumKind,
};
use crate::settings::{FreqAxis, SpectraSettings, UnitPrefs};

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
