//! `spallcast backtest`: how right were we. Replays each bearing life reading by reading with the calls
//! and forecasts the tool would have made then (causal: only the readings up to each one), and for a
//! life that has ended in a replacement scores them against it: the error of the replace-by and the
//! end-of-life projections, and the IEEE PHM 2012 challenge score of the end-of-life projection
//! (`spallcast_analysis::forecast::rul_score`).
//!
//! A life ends at its recorded replacement, which is when the bearing came out, not when it would have
//! failed: a bearing replaced early makes a late-looking forecast. The figures are advisory.
use std::fmt::Write as _;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::bail;
use chrono::{DateTime, Utc};
use serde::Serialize;
use spallcast_analysis::forecast::{ProjectionAt, end_of_life_score, track_record};
use spallcast_analysis::stage::StageOptions;
use spallcast_model::units::unix_s_of_date;
use spallcast_pipeline::assess::{LifeAssessment, assess_position, utc_from_s};

const DAY_S: f64 = 86_400.0;

/// Arguments of `spallcast backtest`.
#[derive(Debug, clap::Args)]
pub struct BacktestArgs {
    /// The bearing: `MACHINE/POSITION`, a point id on it, or its number (or `--all`).
    pub id: Option<String>,
    /// Every bearing of the plant.
    #[arg(long, conflicts_with = "id")]
    pub all: bool,
    /// The plant database.
    #[arg(long)]
    pub db: PathBuf,
    /// Print JSON.
    #[arg(long)]
    pub json: bool,
}

/// One reading of the replay.
#[derive(Debug, Clone, Serialize)]
pub struct ReplayRow {
    /// When the reading was taken (UTC).
    pub taken_at: DateTime<Utc>,
    /// The stage called then.
    pub stage: u8,
    /// The replace-by projection then, UTC.
    pub replace_by: Option<DateTime<Utc>>,
    /// The end-of-life projection then, UTC.
    pub end_of_life: Option<DateTime<Utc>>,
    /// Replace-by minus the actual replacement, days (finished lives only).
    pub replace_by_error_days: Option<f64>,
    /// End of life minus the actual replacement, days (finished lives only).
    pub end_of_life_error_days: Option<f64>,
    /// The PHM 2012 score of the end-of-life projection (finished lives only).
    pub end_of_life_score: Option<f64>,
}

/// One point of one life.
#[derive(Debug, Clone, Serialize)]
pub struct PointReplay {
    /// Point id.
    pub point: String,
    /// One row per assessed reading.
    pub rows: Vec<ReplayRow>,
    /// Mean of the rows' end-of-life scores, when any.
    pub mean_end_of_life_score: Option<f64>,
    /// Median |replace-by error|, days, when any.
    pub median_abs_replace_by_error_days: Option<f64>,
}

/// One life of one bearing.
#[derive(Debug, Clone, Serialize)]
pub struct LifeReplay {
    /// `MACHINE/POSITION`.
    pub bearing: String,
    /// Installed on.
    pub installed: chrono::NaiveDate,
    /// Replaced on (the end the errors are measured against), if the life has ended.
    pub replaced: Option<chrono::NaiveDate>,
    /// Per point.
    pub points: Vec<PointReplay>,
}

/// Replays one assessed life.
pub fn replay(bearing: &str, life: &LifeAssessment) -> LifeReplay {
    let replaced_s = life.life.removed.map(unix_s_of_date);
    let points = life
        .points
        .iter()
        .map(|p| {
            let projections: Vec<ProjectionAt> = p
                .taken_at
                .iter()
                .zip(&p.forecasts)
                .map(|(t, f)| ProjectionAt {
                    t_s: t.timestamp() as f64,
                    replace_by_s: f.as_ref().and_then(|f| f.replace_by).map(|p| p.t_s),
                    end_of_life_s: f.as_ref().and_then(|f| f.end_of_life).map(|p| p.t_s),
                })
                .collect();
            let rows: Vec<ReplayRow> = p
                .calls
                .iter()
                .zip(&p.taken_at)
                .zip(&projections)
                .map(|((call, t), at)| ReplayRow {
                    taken_at: *t,
                    stage: call.stage,
                    replace_by: at.replace_by_s.and_then(utc_from_s),
                    end_of_life: at.end_of_life_s.and_then(utc_from_s),
                    replace_by_error_days: replaced_s
                        .zip(at.replace_by_s)
                        .map(|(end, r)| (r - end) / DAY_S),
                    end_of_life_error_days: replaced_s
                        .zip(at.end_of_life_s)
                        .map(|(end, e)| (e - end) / DAY_S),
                    end_of_life_score: replaced_s.and_then(|end| end_of_life_score(at, end)),
                })
                .collect();
            let record = replaced_s.map(|end| track_record(&projections, end));
            let mean_end_of_life_score = record.and_then(|r| r.mean_end_of_life_score);
            let median_abs_replace_by_error_days =
                record.and_then(|r| r.median_abs_replace_by_error_days);
            PointReplay {
                point: p.point.clone(),
                rows,
                mean_end_of_life_score,
                median_abs_replace_by_error_days,
            }
        })
        .collect();
    LifeReplay {
        bearing: bearing.to_owned(),
        installed: life.life.installed,
        replaced: life.life.removed,
        points,
    }
}

fn day(t: Option<DateTime<Utc>>) -> String {
    t.map_or_else(|| "-".to_owned(), |t| t.format("%Y-%m-%d").to_string())
}

fn num(v: Option<f64>, digits: usize) -> String {
    v.map_or_else(|| "-".to_owned(), |v| format!("{v:+.digits$}"))
}

/// The replay as text.
pub fn replay_table(r: &LifeReplay) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "\n{}: life installed {}{}",
        r.bearing,
        r.installed,
        r.replaced.map_or_else(
            || " (current: nothing to score yet)".to_owned(),
            |d| format!(", replaced {d}")
        )
    );
    for p in &r.points {
        let _ = writeln!(
            out,
            "  point {}: mean end-of-life score {}, median |replace-by error| {} days",
            p.point,
            p.mean_end_of_life_score
                .map_or_else(|| "-".to_owned(), |s| format!("{s:.3}")),
            p.median_abs_replace_by_error_days
                .map_or_else(|| "-".to_owned(), |d| format!("{d:.0}"))
        );
        let _ = writeln!(
            out,
            "    {:<16} {:>5} {:<10} {:>8} {:<10} {:>8} {:>6}",
            "reading (UTC)", "stage", "replace by", "err d", "end of life", "err d", "score"
        );
        for row in &p.rows {
            let _ = writeln!(
                out,
                "    {:<16} {:>5} {:<10} {:>8} {:<10} {:>8} {:>6}",
                row.taken_at.format("%Y-%m-%d %H:%M"),
                row.stage,
                day(row.replace_by),
                num(row.replace_by_error_days, 0),
                day(row.end_of_life),
                num(row.end_of_life_error_days, 0),
                row.end_of_life_score
                    .map_or_else(|| "-".to_owned(), |s| format!("{s:.3}"))
            );
        }
    }
    out
}

/// Runs `spallcast backtest`.
pub fn run(args: &BacktestArgs) -> anyhow::Result<ExitCode> {
    let store = crate::refresh::open_and_refresh(&args.db, false)?;
    let mut replays = Vec::new();
    if args.all {
        for state in store.latest_states()? {
            let bearing = format!("{}/{}", state.machine, state.position);
            for life in assess_position(&store, &state, &StageOptions::default())? {
                replays.push(replay(&bearing, &life));
            }
        }
    } else {
        let Some(id) = &args.id else {
            bail!("name a bearing (MACHINE/POSITION, a point id or its number) or give --all");
        };
        let (state, lives) = crate::bearings_cmd::find_bearing(&store, &args.db, id)?;
        let bearing = format!("{}/{}", state.machine, state.position);
        replays.extend(lives.iter().map(|l| replay(&bearing, l)));
    }
    crate::refresh::print_warnings(&store);
    if args.json {
        let doc = serde_json::json!({
            "caution": crate::bearings_cmd::CAUTION,
            "times": "UTC",
            "score": "IEEE PHM 2012 challenge score of the end-of-life projection against the recorded replacement",
            "lives": replays,
        });
        println!("{}", serde_json::to_string_pretty(&doc)?);
        return Ok(ExitCode::SUCCESS);
    }
    for r in &replays {
        print!("{}", replay_table(r));
    }
    println!(
        "\nErrors are measured against the recorded replacement (when the bearing came out, not when it \
         would have failed); score 1 is perfect, late projections are punished harder than early ones."
    );
    println!("{}", crate::bearings_cmd::CAUTION);
    Ok(ExitCode::SUCCESS)
}
