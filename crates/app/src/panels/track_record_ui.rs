//! "How right were we": the replace-by and end-of-life dates projected at each reading of a point (each
//! reading's stored record holds the forecast as it stood then), against the reading's own date and,
//! for a life that has ended, its recorded replacement. Each finished life's projections are scored as
//! `spallcast backtest` scores them ([`track_record`]): the mean IEEE PHM 2012 challenge score of the
//! end-of-life projections and the median |replace-by error|.

use chrono::NaiveDate;
use eframe::egui;
use egui_plot::{Corner, HLine, Line, LineStyle, MarkerShape, PlotPoints, Points};
use spallcast_analysis::forecast::{ProjectionAt, TrackRecord, track_record};
use spallcast_model::units::unix_s_of_date;

use super::trend_ui::{date_label, date_plot, date_x, day_of};
use crate::model::{BearingHistory, ReadingSummary};
use crate::palette;

/// The checkbox that shows the plot.
pub const TOGGLE_LABEL: &str = "How right were we (dates projected at each reading)";

/// Legend names.
pub const REPLACE_BY_SERIES: &str = "replace-by projected then";
/// See [`REPLACE_BY_SERIES`].
pub const END_OF_LIFE_SERIES: &str = "end of life projected then";
/// See [`REPLACE_BY_SERIES`].
pub const PRIOR_SERIES: &str = "end of life, a prior only (no damage growth to project)";
/// See [`REPLACE_BY_SERIES`].
pub const DIAGONAL_SERIES: &str = "the reading's own date (below it: already past)";

/// One bearing life at the point shown.
#[derive(Debug, Clone, PartialEq)]
pub struct LifeTrack {
    /// When the life began.
    pub started: NaiveDate,
    /// Its recorded replacement, when it has ended.
    pub ended: Option<NaiveDate>,
    /// Readings of the life with a projection.
    pub projections: usize,
    /// The score of its projections (ended lives only).
    pub record: Option<TrackRecord>,
}

impl LifeTrack {
    /// The line shown under the plot.
    pub fn sentence(&self) -> String {
        let Some(end) = self.ended else {
            return format!(
                "Life from {}: current, {} projection(s); nothing to score until it ends.",
                self.started, self.projections
            );
        };
        match self.record {
            Some(r) if r.scored > 0 || r.median_abs_replace_by_error_days.is_some() => format!(
                "Life {} to {end}: mean end-of-life score {} over {} projection(s) (1 = perfect; late is punished harder than early), median |replace-by error| {} days.",
                self.started,
                r.mean_end_of_life_score
                    .map_or_else(|| "-".to_owned(), |s| format!("{s:.3}")),
                r.scored,
                r.median_abs_replace_by_error_days
                    .map_or_else(|| "-".to_owned(), |d| format!("{d:.0}")),
            ),
            _ => format!(
                "Life {} to {end}: no projection was made before it ended.",
                self.started
            ),
        }
    }
}

/// What the last frame drew.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct TrackFrameSummary {
    /// Replace-by projections drawn.
    pub replace_by_points: usize,
    /// End-of-life projections drawn (priors included).
    pub end_of_life_points: usize,
    /// Of those, the ones that are only a prior (drawn faint).
    pub prior_points: usize,
    /// The lives, oldest first.
    pub lives: Vec<LifeTrack>,
}

fn projection(r: &ReadingSummary) -> ProjectionAt {
    ProjectionAt {
        t_s: r.taken_at.timestamp() as f64,
        replace_by_s: r.replace_by.map(unix_s_of_date),
        end_of_life_s: r.end_of_life.map(unix_s_of_date),
    }
}

/// Each life of the point's readings with the score of its projections (ended lives only).
pub fn life_tracks(history: &BearingHistory, readings: &[&ReadingSummary]) -> Vec<LifeTrack> {
    let mut starts = history.lives_started.clone();
    starts.sort();
    starts
        .iter()
        .enumerate()
        .filter_map(|(i, &started)| {
            let ended = starts.get(i + 1).copied();
            let of_life: Vec<ProjectionAt> = readings
                .iter()
                .filter(|r| history.life_start_for(r.taken_at.date_naive()) == Some(started))
                .map(|r| projection(r))
                .collect();
            if of_life.is_empty() {
                return None;
            }
            let projections = of_life
                .iter()
                .filter(|p| p.replace_by_s.is_some() || p.end_of_life_s.is_some())
                .count();
            Some(LifeTrack {
                started,
                ended,
                projections,
                record: ended.map(|end| track_record(&of_life, unix_s_of_date(end))),
            })
        })
        .collect()
}

/// Draws the plot (its time axis linked to the trend's) and one line per life under it.
pub fn ui(
    ui: &mut egui::Ui,
    history: &BearingHistory,
    readings: &[&ReadingSummary],
    link: egui::Id,
    height: f32,
) -> TrackFrameSummary {
    let series = |pick: &dyn Fn(&ReadingSummary) -> Option<NaiveDate>| -> Vec<[f64; 2]> {
        readings
            .iter()
            .filter_map(|r| pick(r).map(|d| [day_of(r), date_x(d)]))
            .collect()
    };
    let replace_by = series(&|r| r.replace_by);
    let end_of_life = series(&|r| r.end_of_life.filter(|_| !r.end_of_life_is_prior));
    let prior = series(&|r| r.end_of_life.filter(|_| r.end_of_life_is_prior));
    let lives = life_tracks(history, readings);
    let summary = TrackFrameSummary {
        replace_by_points: replace_by.len(),
        end_of_life_points: end_of_life.len() + prior.len(),
        prior_points: prior.len(),
        lives,
    };
    if replace_by.is_empty() && end_of_life.is_empty() && prior.is_empty() {
        ui.label("No projection is stored for this point's readings yet.");
        return summary;
    }
    let span = readings
        .first()
        .zip(readings.last())
        .map(|(a, b)| [day_of(a), day_of(b)]);
    // Projections lie on or above the diagonal; the bottom right is where the plot is empty.
    date_plot(
        ("trend-track-record", &history.key),
        height,
        link,
        Corner::RightBottom,
    )
    .y_axis_formatter(|m, _| date_label(m.value))
    .y_axis_label("date projected then")
    .show(ui, |pui| {
        if let Some([a, b]) = span {
            pui.line(
                Line::new(DIAGONAL_SERIES, PlotPoints::new(vec![[a, a], [b, b]]))
                    .color(palette::REPLACEMENT_LINE.gamma_multiply(0.5))
                    .style(LineStyle::dashed_loose()),
            );
        }
        pui.points(
            Points::new(REPLACE_BY_SERIES, PlotPoints::new(replace_by))
                .color(palette::FORECAST)
                .shape(MarkerShape::Diamond)
                .radius(3.5),
        );
        pui.points(
            Points::new(PRIOR_SERIES, PlotPoints::new(prior))
                .color(palette::END_OF_LIFE.gamma_multiply(0.45))
                .shape(MarkerShape::Circle)
                .radius(2.0),
        );
        pui.points(
            Points::new(END_OF_LIFE_SERIES, PlotPoints::new(end_of_life))
                .color(palette::END_OF_LIFE)
                .shape(MarkerShape::Square)
                .radius(3.0),
        );
        for life in &summary.lives {
            if let Some(end) = life.ended {
                pui.hline(
                    HLine::new(format!("replaced {end}"), date_x(end))
                        .color(palette::REPLACEMENT_LINE),
                );
            }
        }
    });
    for life in &summary.lives {
        ui.label(life.sentence());
    }
    summary
}
