//! One bearing's life: stage indicators in dB over the life's first reading, the stage reached at each
//! reading, replacements, the forecast, and overall velocity against the ISO 20816-3 zone lines.

use chrono::{DateTime, NaiveDate};
use eframe::egui;
use egui_plot::{
    Corner, HLine, HoverPosition, Legend, Line, LineStyle, Plot, PlotPoint, PlotPoints, Points,
    Span, Text, VLine,
};
use spallcast_analysis::indicators::zone_boundaries_mm_s;
use spallcast_analysis::stage::rules::{DAMAGE_STAGE3_DB, DAMAGE_STAGE4_DB};
use spallcast_analysis::stage::{db_over, keys};

use crate::model::{BearingHistory, BearingKey, ReadingSummary};
use crate::palette;

/// The stage indicators the trend offers, with their labels, in display order: the analysis crate's
/// table ([`keys::TRENDED`]), so a new indicator does not touch the window.
pub const INDICATORS: [(&str, &str); keys::TRENDED.len()] = keys::TRENDED;

/// Indicators drawn when the user has not chosen.
pub const DEFAULT_INDICATORS: [&str; 4] = [
    keys::HIGH_BAND_RMS_G,
    keys::RESONANCE_BAND_RMS_G,
    keys::ACCEL_RMS_G,
    keys::KURTOSIS,
];

/// Overall velocity scalar names (one set of names since store migration 5).
const VELOCITY_KEYS: [&str; 1] = [keys::VELOCITY_RMS_MM_S];

/// Seconds per day, for the date axis.
const DAY_S: f64 = 86_400.0;

/// Width of both plots' value axes, so their time axes line up.
const Y_AXIS_WIDTH: f32 = 56.0;

/// Legend name of the damage index series (the quantity the forecast projects).
pub const DAMAGE_SERIES: &str = "damage index (forecast basis)";

/// What the last frame drew.
#[allow(
    clippy::struct_excessive_bools,
    reason = "a record of independent things drawn, read by tests; not a state machine"
)]
#[derive(Debug, Clone, Default, PartialEq)]
pub struct TrendFrameSummary {
    /// Indicator names drawn.
    pub indicators: Vec<String>,
    /// Readings with a stage numeral drawn.
    pub staged_readings: usize,
    /// Replacement lines drawn.
    pub replacements: usize,
    /// Whether the ISO zone lines were drawn.
    pub zone_lines: bool,
    /// Whether a forecast was drawn.
    pub forecast: bool,
    /// Whether the forecast's projection of the damage index was drawn (a line to the stage-3 and
    /// stage-4 levels).
    pub projection: bool,
    /// Line segments drawn per indicator (one per bearing life with readings: never joined across a
    /// replacement).
    pub segments: Vec<(String, usize)>,
    /// Colour of each indicator drawn (fixed per indicator, whatever else is chosen).
    pub colours: Vec<(String, egui::Color32)>,
    /// Whether "replace now" was drawn instead of an interval (stage 4).
    pub replace_now: bool,
    /// The analyst's notes drawn (dated lines with their kind).
    pub notes: usize,
}

/// The life-trend view.
#[derive(Debug, Default)]
pub struct TrendPanel {
    bearing: Option<BearingKey>,
    /// Point shown.
    pub point: Option<String>,
    /// What the last frame drew.
    pub summary: TrendFrameSummary,
    /// Display units (set by the app from the saved choice before each frame).
    pub units: crate::settings::UnitPrefs,
    /// Whether the "how right were we" plot is shown under the trend.
    pub show_track_record: bool,
    /// What that plot drew in the last frame (`None` while hidden).
    pub track: Option<super::track_record_ui::TrackFrameSummary>,
}

pub(crate) fn day_of(r: &ReadingSummary) -> f64 {
    r.taken_at.timestamp() as f64 / DAY_S
}

pub(crate) fn date_x(d: NaiveDate) -> f64 {
    d.and_hms_opt(0, 0, 0)
        .map_or(0.0, |t| t.and_utc().timestamp() as f64 / DAY_S)
}

pub(crate) fn date_label(x: f64) -> String {
    DateTime::from_timestamp((x * DAY_S) as i64, 0)
        .map_or_else(String::new, |t| t.format("%Y-%m-%d").to_string())
}

/// A plot of the life trend's family: dates on the x axis, linked to the other plots of the view, the
/// value axis the same width in each so their time axes line up.
pub(crate) fn date_plot(
    id: impl egui::AsIdSalt,
    height: f32,
    link: egui::Id,
    legend: Corner,
) -> Plot<'static> {
    Plot::new(id)
        .height(height)
        .legend(Legend::default().position(legend))
        .link_axis(link, egui::Vec2b::new(true, false))
        .y_axis_min_width(Y_AXIS_WIDTH)
        .x_axis_formatter(|m, _| date_label(m.value))
}

/// Hover text: the series name, the date and the value.
fn hover_label(hover: &HoverPosition<'_>, unit: &str) -> String {
    match hover {
        HoverPosition::NearDataPoint {
            plot_name,
            position,
            ..
        } => format!(
            "{plot_name}\n{}  {:.2} {unit}",
            date_label(position.x),
            position.y
        ),
        HoverPosition::Elsewhere { position } => {
            format!("{}  {:.2} {unit}", date_label(position.x), position.y)
        }
    }
}

/// dB of `key` over the first reading of each life that has it; one segment per bearing life (a line
/// is never joined across a replacement), one point per reading.
pub fn db_series(
    history: &BearingHistory,
    readings: &[&ReadingSummary],
    key: &str,
) -> Vec<Vec<[f64; 2]>> {
    let mut out: Vec<Vec<[f64; 2]>> = Vec::new();
    let mut base: Option<(Option<NaiveDate>, f64)> = None;
    for r in readings {
        let Some(v) = r.scalars.get(key).copied() else {
            continue;
        };
        let life = history.life_start_for(r.taken_at.date_naive());
        if base.is_none_or(|(l, _)| l != life) {
            base = Some((life, v));
            out.push(Vec::new());
        }
        if let (Some(db), Some(seg)) = (db_over(Some(v), base.map(|(_, b)| b)), out.last_mut()) {
            seg.push([day_of(r), db]);
        }
    }
    out.retain(|s| !s.is_empty());
    out
}

/// `value` of each reading (those that have one), one segment per bearing life: a line is never
/// joined across a replacement.
pub fn life_segments(
    history: &BearingHistory,
    readings: &[&ReadingSummary],
    value: impl Fn(&ReadingSummary) -> Option<f64>,
) -> Vec<Vec<[f64; 2]>> {
    let mut out: Vec<Vec<[f64; 2]>> = Vec::new();
    let mut life_of_last = None;
    for r in readings {
        let Some(v) = value(r) else { continue };
        let life = history.life_start_for(r.taken_at.date_naive());
        if out.is_empty() || life_of_last != Some(life) {
            out.push(Vec::new());
            life_of_last = Some(life);
        }
        if let Some(seg) = out.last_mut() {
            seg.push([day_of(r), v]);
        }
    }
    out
}

/// The damage index of each reading's call, one segment per bearing life.
pub fn damage_series(history: &BearingHistory, readings: &[&ReadingSummary]) -> Vec<Vec<[f64; 2]>> {
    life_segments(history, readings, |r| r.damage_db)
}

/// The fixed colour of an indicator: by its place in [`INDICATORS`], so choosing another indicator
/// never recolours the ones shown.
pub fn indicator_colour(key: &str) -> egui::Color32 {
    let i = INDICATORS.iter().position(|(k, _)| *k == key).unwrap_or(0);
    palette::TREND_COLOURS[i % palette::TREND_COLOURS.len()]
}

impl TrendPanel {
    /// The point chooser, the indicator checkboxes and the "how right were we" toggle.
    fn controls(
        &mut self,
        ui: &mut egui::Ui,
        chosen: &mut Vec<String>,
        points: &[String],
        present: &[(&str, &str)],
    ) {
        ui.horizontal_wrapped(|ui| {
            ui.label("Point:");
            let current = self.point.clone().unwrap_or_default();
            egui::ComboBox::from_id_salt("trend-point")
                .selected_text(&current)
                .show_ui(ui, |ui| {
                    for p in points {
                        if ui.selectable_label(*p == current, p.as_str()).clicked() {
                            self.point = Some(p.clone());
                        }
                    }
                });
            ui.label("Indicators:");
            for (key, label) in present {
                let mut on = chosen.iter().any(|c| c == key);
                if ui.checkbox(&mut on, *label).changed() {
                    if on {
                        chosen.push((*key).to_owned());
                    } else {
                        chosen.retain(|c| c != key);
                    }
                }
            }
        });
        ui.checkbox(
            &mut self.show_track_record,
            super::track_record_ui::TOGGLE_LABEL,
        );
    }

    /// Draws the view.
    pub fn ui(&mut self, ui: &mut egui::Ui, chosen: &mut Vec<String>, history: &BearingHistory) {
        if self.bearing.as_ref() != Some(&history.key) {
            self.bearing = Some(history.key.clone());
            self.point = history.points().into_iter().next();
        }
        let points = history.points();
        let present: Vec<(&str, &str)> = INDICATORS
            .iter()
            .copied()
            .filter(|(k, _)| history.readings.iter().any(|r| r.scalars.contains_key(*k)))
            .collect();
        if chosen.is_empty() {
            chosen.extend(DEFAULT_INDICATORS.iter().map(|k| (*k).to_owned()));
        }
        self.controls(ui, chosen, &points, &present);
        if present.is_empty() {
            ui.label("These readings carry no stage indicators (they were analysed without the stage scalars).");
        }
        if history.stage_call.is_none() {
            ui.label(egui::RichText::new("no stage call stored: indicators only").italics());
        }
        let Some(point) = self.point.clone() else {
            ui.label("No readings for this bearing yet.");
            return;
        };
        let readings: Vec<&ReadingSummary> = history.readings_of(&point).collect();
        let link = egui::Id::unique("trend-x-link");
        let share = if self.show_track_record { 0.45 } else { 0.6 };
        let height = ((ui.available_height() - 8.0) * share).max(140.0);
        let mut summary = TrendFrameSummary::default();
        // The forecast rests on the current life's newest reading at this point.
        let current_life = history.lives_started.last().copied();
        let last_damage = readings
            .iter()
            .rev()
            .filter(|r| history.life_start_for(r.taken_at.date_naive()) == current_life)
            .find_map(|r| Some([day_of(r), r.damage_db?]));
        let late = history.stage_call.as_ref().is_some_and(|c| c.stage >= 4);
        // Newest readings are on the right: the legend sits top left, over the oldest.
        date_plot(("trend-db", &history.key), height, link, Corner::LeftTop)
            .y_axis_label("dB over the life's first reading")
            .label_formatter(|hover| Some(hover_label(hover, "dB")))
            .show(ui, |pui| {
                let mut top = 0.0_f64;
                for (key, label) in present
                    .iter()
                    .filter(|(k, _)| chosen.iter().any(|c| c == k))
                {
                    let segments = db_series(history, &readings, key);
                    let colour = indicator_colour(key);
                    for seg in &segments {
                        top = seg.iter().map(|p| p[1]).fold(top, f64::max);
                        pui.points(
                            Points::new("", PlotPoints::new(seg.clone()))
                                .color(colour)
                                .radius(2.5),
                        );
                        pui.line(
                            Line::new(*label, PlotPoints::new(seg.clone()))
                                .color(colour)
                                .width(1.5),
                        );
                    }
                    summary.indicators.push((*key).to_owned());
                    summary.segments.push(((*key).to_owned(), segments.len()));
                    summary.colours.push(((*key).to_owned(), colour));
                }
                let damage = damage_series(history, &readings);
                if !damage.is_empty() {
                    for seg in &damage {
                        top = seg.iter().map(|p| p[1]).fold(top, f64::max);
                        pui.line(
                            Line::new(DAMAGE_SERIES, PlotPoints::new(seg.clone()))
                                .color(palette::FORECAST)
                                .width(2.0),
                        );
                    }
                    for (name, level) in [
                        (
                            "stage-3 level of the damage index (replace by)",
                            DAMAGE_STAGE3_DB.value,
                        ),
                        (
                            "stage-4 level of the damage index (risk from)",
                            DAMAGE_STAGE4_DB.value,
                        ),
                    ] {
                        pui.hline(
                            HLine::new(name, level)
                                .color(palette::FORECAST.gamma_multiply(0.6))
                                .style(LineStyle::dotted_loose()),
                        );
                    }
                    top = top.max(DAMAGE_STAGE4_DB.value);
                }
                for r in &readings {
                    if let Some(stage) = r.stage {
                        let text = egui::RichText::new(palette::stage_text(Some(stage))).strong();
                        pui.text(
                            Text::new("", PlotPoint::new(day_of(r), top + 4.0), text)
                                .color(palette::stage_colour(Some(stage))),
                        );
                        summary.staged_readings += 1;
                    }
                }
                draw_events(
                    pui,
                    history,
                    &readings,
                    top,
                    late,
                    last_damage,
                    &mut summary,
                );
            });
        let track_height = self
            .show_track_record
            .then(|| ((ui.available_height() - 8.0) * 0.55).max(120.0));
        summary.zone_lines = velocity_ui(
            ui,
            history,
            &readings,
            link,
            self.units,
            track_height.map(|h| h + 60.0),
        );
        self.track =
            track_height.map(|h| super::track_record_ui::ui(ui, history, &readings, link, h));
        self.summary = summary;
    }
}

/// Replacements, notes, and the forecast (interval, replace-by line and the damage-index projection,
/// or "replace now" at stage 4), drawn over the indicator plot whose highest value is `top`.
#[allow(
    clippy::too_many_arguments,
    reason = "the plot's shared values; a struct would only rename them"
)]
fn draw_events(
    pui: &mut egui_plot::PlotUi<'_>,
    history: &BearingHistory,
    readings: &[&ReadingSummary],
    top: f64,
    late: bool,
    last_damage: Option<[f64; 2]>,
    summary: &mut TrendFrameSummary,
) {
    for d in history.lives_started.iter().skip(1) {
        pui.vline(
            VLine::new("replacement", date_x(*d))
                .color(palette::REPLACEMENT_LINE)
                .width(1.5),
        );
        summary.replacements += 1;
    }
    for n in &history.notes {
        pui.vline(
            VLine::new("notes", date_x(n.on_day))
                .color(palette::NOTE_LINE)
                .style(LineStyle::dotted_dense())
                .width(1.0),
        );
        let short: String = n.text.chars().take(28).collect();
        pui.text(
            Text::new(
                "",
                PlotPoint::new(date_x(n.on_day), top + 2.0),
                egui::RichText::new(format!("{}: {short}", n.kind)).small(),
            )
            .color(palette::NOTE_LINE),
        );
        summary.notes += 1;
    }
    if late {
        // Stage 4: no interval to wait through.
        if let Some(r) = readings.last() {
            pui.text(
                Text::new(
                    "",
                    PlotPoint::new(day_of(r), top + 8.0),
                    egui::RichText::new("replace now").strong(),
                )
                .color(palette::stage_colour(Some(4))),
            );
            summary.replace_now = true;
        }
    } else if let Some(f) = &history.forecast {
        pui.span(
            Span::new("forecast interval", date_x(f.earliest)..=date_x(f.latest))
                .fill(palette::FORECAST.gamma_multiply(0.15)),
        );
        pui.vline(
            VLine::new(format!("replace by {}", f.replace_by), date_x(f.replace_by))
                .color(palette::FORECAST)
                .style(LineStyle::dashed_loose())
                .width(2.0),
        );
        summary.forecast = true;
        // The projection: from the newest damage index to the stage-3 level on the
        // replace-by date, then to the stage-4 level on the risk date.
        if let Some(start) = last_damage {
            let mut line = vec![start];
            let rb = [date_x(f.replace_by), DAMAGE_STAGE3_DB.value];
            if rb[0] > start[0] && start[1] < DAMAGE_STAGE3_DB.value {
                line.push(rb);
            }
            if let Some(risk) = f.risk_from {
                let rf = [date_x(risk), DAMAGE_STAGE4_DB.value];
                if line.last().is_some_and(|p| rf[0] > p[0]) {
                    line.push(rf);
                }
            }
            if line.len() >= 2 {
                pui.line(
                    Line::new("projection", PlotPoints::new(line))
                        .color(palette::FORECAST)
                        .style(LineStyle::dashed_dense())
                        .width(2.0),
                );
                summary.projection = true;
            }
        }
    }
}

/// Overall velocity (mm/s or in/s) with the ISO 20816-3 zone boundaries of the machine's group and
/// support.
fn velocity_ui(
    ui: &mut egui::Ui,
    history: &BearingHistory,
    readings: &[&ReadingSummary],
    link: egui::Id,
    units: crate::settings::UnitPrefs,
    leave: Option<f32>,
) -> bool {
    let Some(key) = VELOCITY_KEYS
        .iter()
        .find(|k| readings.iter().any(|r| r.scalars.contains_key(**k)))
    else {
        ui.label("No overall velocity stored for this point.");
        return false;
    };
    let factor = units.velocity_factor();
    let unit = units.velocity_unit();
    let segments = life_segments(history, readings, |r| {
        r.scalars.get(*key).map(|v| v * factor)
    });
    let group = Some(history.iso_group);
    let support = history.iso_support;
    let mut drawn = false;
    let height = (ui.available_height() - 4.0 - leave.unwrap_or(0.0)).max(100.0);
    date_plot(
        ("trend-velocity", &history.key),
        height,
        link,
        Corner::LeftTop,
    )
    .y_axis_label(format!("velocity RMS, {unit}"))
    .include_y(0.0)
    .label_formatter(move |hover| Some(hover_label(hover, unit)))
    .show(ui, |pui| {
        for seg in segments {
            pui.points(
                Points::new("", PlotPoints::new(seg.clone()))
                    .color(palette::TREND_COLOURS[0])
                    .radius(2.5),
            );
            pui.line(
                Line::new("overall velocity", PlotPoints::new(seg))
                    .color(palette::TREND_COLOURS[0]),
            );
        }
        if let Some(group) = group {
            let [ab, bc, cd] = zone_boundaries_mm_s(group, support);
            for (name, v) in [
                ("ISO 20816-3 A/B", ab),
                ("ISO 20816-3 B/C", bc),
                ("ISO 20816-3 C/D", cd),
            ] {
                pui.hline(
                    HLine::new(name, v * factor)
                        .color(palette::ZONE_LINE)
                        .style(LineStyle::dashed_loose()),
                );
            }
            drawn = true;
        }
    });
    drawn
}
