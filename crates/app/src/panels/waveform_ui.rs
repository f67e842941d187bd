//! The time waveform of one reading.

use eframe::egui;
use egui_plot::{Line, Plot, PlotPoints};

use crate::actions::Action;
use crate::cache::{ReadingCache, Slot};
use crate::decimate::{UniformSeries, decimate_minmax};
use crate::model::{BearingHistory, BearingKey, ReadingId};
use crate::palette;

/// The waveform view.
#[derive(Debug, Default)]
pub struct WaveformPanel {
    bearing: Option<BearingKey>,
    /// Reading shown.
    pub reading: Option<ReadingId>,
    /// Points drawn in the last frame (after decimation).
    pub plotted_points: usize,
    /// Display units (set by the app from the saved choice before each frame).
    pub units: crate::settings::UnitPrefs,
}

impl WaveformPanel {
    /// Draws the view.
    pub fn ui(
        &mut self,
        ui: &mut egui::Ui,
        history: &BearingHistory,
        cache: &ReadingCache,
        actions: &mut Vec<Action>,
    ) {
        if self.bearing.as_ref() != Some(&history.key) {
            self.bearing = Some(history.key.clone());
            self.reading = history.readings.last().map(|r| r.id);
        }
        ui.horizontal(|ui| {
            ui.label("Reading:");
            let current = self.reading.and_then(|id| history.reading(id));
            let text =
                current.map_or_else(String::new, |r| format!("{}  {}", r.day_label(), r.point));
            egui::ComboBox::from_id_salt("waveform-reading")
                .selected_text(text)
                .height(400.0)
                .show_ui(ui, |ui| {
                    for r in history.readings.iter().rev() {
                        let label = format!("{}  {}", r.day_label(), r.point);
                        ui.selectable_value(&mut self.reading, Some(r.id), label);
                    }
                });
        });
        let Some(id) = self.reading else {
            ui.label("No readings for this bearing yet.");
            return;
        };
        let wave = match cache.waveforms.get(&id) {
            None => {
                actions.push(Action::NeedWaveform(id));
                None
            }
            Some(Slot::Pending) => None,
            Some(Slot::Failed(e)) => {
                ui.colored_label(ui.visuals().error_fg_color, e);
                return;
            }
            Some(Slot::Ready(w)) => Some(w.clone()),
        };
        let Some(wave) = wave else {
            ui.horizontal(|ui| {
                ui.spinner();
                ui.label("loading samples…");
            });
            return;
        };
        let duration_s = wave.samples_g.len() as f64 / wave.sample_rate_hz;
        ui.label(format!(
            "{} samples at {:.0} Hz ({duration_s:.2} s), shaft {:.1} Hz; one shaft turn is {:.1} ms",
            wave.samples_g.len(),
            wave.sample_rate_hz,
            wave.shaft_hz,
            1000.0 / wave.shaft_hz
        ));
        let mut plotted = 0;
        let factor = self.units.accel_factor();
        Plot::new(("waveform", id))
            .x_axis_label("time, s")
            .y_axis_label(format!("acceleration, {}", self.units.accel_unit()))
            .auto_bounds(egui::Vec2b::new(false, true))
            .default_x_bounds(0.0, duration_s)
            .allow_boxed_zoom(true)
            .show(ui, |pui| {
                let b = pui.plot_bounds();
                let range = if b.min()[0].is_finite() && b.max()[0] > b.min()[0] {
                    (b.min()[0], b.max()[0])
                } else {
                    (0.0, duration_s)
                };
                let columns = pui.transform().frame().width().max(16.0) as usize;
                let mut buf = Vec::with_capacity(2 * columns + 4);
                let series = UniformSeries {
                    x0: 0.0,
                    dx: 1.0 / wave.sample_rate_hz,
                    y: &wave.samples_g,
                };
                decimate_minmax(series, range, columns, |v| f64::from(v) * factor, &mut buf);
                plotted = buf.len();
                pui.line(
                    Line::new("waveform", PlotPoints::new(buf)).color(palette::curve_colour(1, 1)),
                );
            });
        self.plotted_points = plotted;
    }
}
