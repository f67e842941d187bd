//! `spallcast bearings` (the replacement list, most urgent first) and `spallcast bearing` (one
//! bearing's history of stage calls with evidence, and the replay of its replaced lives).
//!
//! Both refresh the stored stage call of every reading first. Calls and dates are advisory: isolate
//! and lock out a machine before any work on it, and follow local codes and licensed practice.
use std::fmt::Write as _;
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::Context;
use chrono::{DateTime, Utc};
use spallcast_analysis::forecast::{Backtest, Projection};
use spallcast_analysis::stage::StageOptions;
use spallcast_pipeline::assess::{
    AssessReport, BearingSummary, LifeAssessment, PointHistory, assess_position, assess_store,
    bearing_summaries, utc_from_s,
};
use spallcast_store::Store;

/// Arguments of `spallcast bearings`.
#[derive(Debug, clap::Args)]
pub struct BearingsArgs {
    /// The plant database.
    #[arg(long)]
    pub db: PathBuf,
    /// Print JSON (the same rows plus evidence, forecast intervals and assumptions).
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `spallcast bearing`.
#[derive(Debug, clap::Args)]
pub struct BearingArgs {
    /// The bearing: `MACHINE/POSITION` (e.g. `IN-P1/MNDE`), a point id on it, or its number.
    pub id: String,
    /// The plant database.
    #[arg(long)]
    pub db: PathBuf,
    /// Print JSON: every life with each point's calls, forecasts and (for replaced lives) the replay.
    #[arg(long)]
    pub json: bool,
}

pub(crate) const CAUTION: &str = "Advisory only: isolate and lock out the machine before any work, and follow local codes and licensed practice.";

fn date(t: Option<DateTime<Utc>>) -> String {
    t.map_or_else(
        || "-".to_owned(),
        |d| d.format("%Y-%m-%d %H:%M").to_string(),
    )
}

/// A reading time in UTC, with seconds when `seconds` (readings closer together than a minute).
fn reading_time(t: DateTime<Utc>, seconds: bool) -> String {
    if seconds {
        t.format("%Y-%m-%d %H:%M:%S").to_string()
    } else {
        t.format("%Y-%m-%d %H:%M").to_string()
    }
}

/// Whether any two neighbouring times are less than a minute apart.
fn needs_seconds(times: &[DateTime<Utc>]) -> bool {
    times
        .windows(2)
        .any(|w| (w[1] - w[0]).num_seconds().abs() < 60)
}

fn date_s(t_s: f64) -> String {
    date(utc_from_s(t_s))
}

fn projection(p: Option<&Projection>) -> String {
    p.map_or_else(
        || "-".to_owned(),
        |p| {
            format!(
                "{} ({} .. {})",
                date_s(p.t_s),
                date_s(p.lo_s),
                p.hi_s.map_or_else(|| "open".to_owned(), date_s)
            )
        },
    )
}

/// Opens the database and brings its analyses up to date (see `crate::refresh`); the store's errors
/// name the database.
fn open(db: &std::path::Path) -> anyhow::Result<Store> {
    crate::refresh::open_and_refresh(db, false)
}

/// Runs `spallcast bearings`.
pub fn run_bearings(args: &BearingsArgs) -> anyhow::Result<ExitCode> {
    let mut store = open(&args.db)?;
    let report = if store.is_read_only() {
        let summaries = bearing_summaries(&store, &StageOptions::default())?;
        AssessReport {
            positions: summaries.len(),
            summaries,
            ..AssessReport::default()
        }
    } else {
        assess_store(&mut store, &StageOptions::default())?
    };
    crate::refresh::print_warnings(&store);
    if args.json {
        let doc = serde_json::json!({ "caution": CAUTION, "bearings": report.summaries });
        println!("{}", serde_json::to_string_pretty(&doc)?);
        return Ok(ExitCode::SUCCESS);
    }
    print!("{}", bearings_table(&report.summaries));
    println!(
        "{} stage calls stored; {} readings left out (not analysed or suspect).",
        report.calls_written, report.readings_skipped
    );
    println!("{CAUTION}");
    Ok(ExitCode::SUCCESS)
}

/// The replacement list as a text table.
pub fn bearings_table(rows: &[BearingSummary]) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "{:<14} {:<10} {:<8} {:<16} {:>5} {:<16} {:>8} {:>5} {:<16} {:<16} {:<16}",
        "area",
        "machine",
        "position",
        "point",
        "stage",
        "location",
        "loc conf",
        "conf",
        "replace by",
        "stage-4 risk",
        "last reading"
    );
    for r in rows {
        let _ = writeln!(
            out,
            "{:<14} {:<10} {:<8} {:<16} {:>5} {:<16} {:>8} {:>5} {:<16} {:<16} {:<16}",
            r.area,
            r.machine,
            r.position,
            r.point.as_deref().unwrap_or("-"),
            r.stage.map_or_else(|| "-".to_owned(), |s| s.to_string()),
            r.location.map_or("-", |l| l.name()),
            r.location_confidence
                .map_or_else(|| "-".to_owned(), |c| format!("{:.0}%", 100.0 * c)),
            r.confidence
                .map_or_else(|| "-".to_owned(), |c| format!("{:.0}%", 100.0 * c)),
            date(r.replace_by),
            date(r.risk_from),
            date(r.last_reading)
        );
    }
    out
}

/// The bearing `wanted` names: `MACHINE/POSITION`, its number, or the id of one of its points (from
/// the plant tree, so a point names its bearing before it has readings). No assessment is run.
pub(crate) fn resolve_bearing(
    store: &Store,
    db: &std::path::Path,
    wanted: &str,
) -> anyhow::Result<spallcast_store::BearingState> {
    let wanted = wanted.trim();
    let tree = store.plant_tree().context("reading the plant tree")?;
    let by_point = tree
        .areas
        .iter()
        .flat_map(|a| a.machines.iter())
        .flat_map(|m| m.bearings.iter())
        .find(|b| b.points.iter().any(|p| p.tag.eq_ignore_ascii_case(wanted)))
        .map(|b| b.position_id);
    let states = store.latest_states().context("listing bearing positions")?;
    states
        .into_iter()
        .find(|s| {
            format!("{}/{}", s.machine, s.position).eq_ignore_ascii_case(wanted)
                || s.position_id.to_string() == wanted
                || by_point == Some(s.position_id)
        })
        .with_context(|| {
            format!(
                "no bearing {wanted:?} in {}: give MACHINE/POSITION, a point id or the bearing number",
                db.display()
            )
        })
}

/// The bearing `wanted` names (see [`resolve_bearing`]) with its assessed lives.
pub(crate) fn find_bearing(
    store: &Store,
    db: &std::path::Path,
    wanted: &str,
) -> anyhow::Result<(spallcast_store::BearingState, Vec<LifeAssessment>)> {
    let state = resolve_bearing(store, db, wanted)?;
    let lives = assess_position(store, &state, &StageOptions::default())?;
    Ok((state, lives))
}

/// Runs `spallcast bearing`.
pub fn run_bearing(args: &BearingArgs) -> anyhow::Result<ExitCode> {
    let store = open(&args.db)?;
    let (state, lives) = find_bearing(&store, &args.db, &args.id)?;
    let notes = store.notes(state.position_id)?;
    let baseline: Vec<i64> = store
        .readings_of_position(state.position_id)?
        .into_iter()
        .filter(|r| r.baseline)
        .map(|r| r.id)
        .collect();
    crate::refresh::print_warnings(&store);
    if args.json {
        let doc = serde_json::json!({
            "caution": CAUTION,
            "times": "UTC",
            "machine": state.machine,
            "machine_name": state.machine_name,
            "area": state.area,
            "position": state.position,
            "lubrication": state.lubrication,
            "lives": lives,
            "notes": notes,
            "baseline_readings": baseline,
        });
        println!("{}", serde_json::to_string_pretty(&doc)?);
        return Ok(ExitCode::SUCCESS);
    }
    println!(
        "{} / {} ({}, {}), {:?} lubrication; times are UTC",
        state.machine, state.position, state.machine_name, state.area, state.lubrication
    );
    for life in &lives {
        print!("{}", life_report(life));
    }
    if !baseline.is_empty() {
        println!(
            "\nBaseline marked by the analyst: readings {}",
            baseline
                .iter()
                .map(i64::to_string)
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    if !notes.is_empty() {
        println!("\nNotes:");
        for n in &notes {
            let about = n
                .reading_id
                .map_or_else(String::new, |r| format!(" (reading {r})"));
            println!("  {}  {:<11} {}{about}", n.on_day, n.kind.as_str(), n.text);
        }
    }
    println!("{CAUTION}");
    Ok(ExitCode::SUCCESS)
}

/// One life's history of calls with evidence, and its replay when it has been replaced.
pub fn life_report(life: &LifeAssessment) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "\nLife installed {}{}",
        life.life.installed,
        life.life.removed.map_or_else(
            || " (current)".to_owned(),
            |r| format!(
                ", replaced {r}{}",
                life.life
                    .found_condition
                    .as_ref()
                    .map_or_else(String::new, |f| format!(": {f}"))
            )
        )
    );
    let _ = writeln!(
        out,
        "  location over this life: {} (confidence {:.0}%): {}",
        life.location.location.name(),
        100.0 * life.location.confidence,
        life.location.reason
    );
    for p in &life.points {
        out.push_str(&point_report(p));
    }
    for (point, bt) in &life.backtests {
        out.push_str(&backtest_report(point, bt));
    }
    out
}

fn point_report(p: &PointHistory) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "  point {}: {} readings assessed, {} left out",
        p.point,
        p.calls.len(),
        p.skipped.len()
    );
    let seconds = needs_seconds(&p.taken_at);
    for ((c, t), f) in p.calls.iter().zip(&p.taken_at).zip(&p.forecasts) {
        let _ = writeln!(
            out,
            "  {}  stage {}  {:<16} conf {:>3.0}%  damage {:+5.1} dB  replace by {}  stage-4 risk {}",
            reading_time(*t, seconds),
            c.stage,
            c.location.name(),
            100.0 * c.confidence,
            c.damage_index_db,
            projection(f.as_ref().and_then(|f| f.replace_by.as_ref())),
            projection(f.as_ref().and_then(|f| f.risk_from.as_ref()))
        );
        for e in &c.evidence {
            let _ = writeln!(out, "      - {e}");
        }
        for l in &c.limits {
            let _ = writeln!(out, "      ! {l}");
        }
    }
    if let Some(f) = p.forecasts.last().and_then(Option::as_ref) {
        let _ = writeln!(out, "  forecast method: {:?}", f.method);
        for a in &f.assumptions {
            let _ = writeln!(out, "      * {a}");
        }
    }
    for (id, why) in &p.skipped {
        let _ = writeln!(out, "      (reading {id} left out: {why})");
    }
    out
}

fn backtest_report(point: &str, bt: &Backtest) -> String {
    let mut out = String::new();
    let days = |s: f64| s / 86_400.0;
    let _ = writeln!(
        out,
        "  Replay against the actual replacement ({}), point {point}:",
        date_s(bt.replaced_s)
    );
    for stage in 1..=4 {
        let _ = writeln!(
            out,
            "      first stage-{stage} call: {}",
            bt.first_call_s[stage].map_or_else(
                || "never".to_owned(),
                |t| format!(
                    "{} ({:.1} days before replacement)",
                    date_s(t),
                    bt.lead_s[stage].map_or(0.0, days)
                )
            )
        );
    }
    let _ = writeln!(
        out,
        "      replace-by forecasts: median |error| {}, replacement inside the interval at {} of the readings with a forecast",
        bt.median_abs_error_s
            .map_or_else(|| "-".to_owned(), |e| format!("{:.1} days", days(e))),
        bt.coverage
            .map_or_else(|| "-".to_owned(), |c| format!("{:.0} %", 100.0 * c))
    );
    out
}
