//! `spallcast`: the vibration analyst's workstation, command line and window.
//!
//! This file is only glue: argument parsing and dispatch. Each subcommand lives in its own module.
#![forbid(unsafe_code)]

mod analyzer;
mod backtest_cmd;
mod bearings_cmd;
mod demo_cmd;
mod diagnose_cmd;
mod import_cmd;
mod notes_cmd;
mod plan_cmd;
mod refresh;
mod rules_cmd;

use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Parser, Subcommand};

/// Spallcast: rolling-element bearing diagnosis, staging and replacement planning.
///
/// Without a subcommand it opens the workstation window on the plant database (`--db`, or the demo plant,
/// created on first run).
///
/// Its calls are advisory. Isolate and lock out a machine before any work on it, and follow local codes
/// and licensed practice.
#[derive(Debug, Parser)]
#[command(name = "spallcast", version, about, long_about)]
struct Cli {
    /// Plant database the window opens (default: the demo plant's, created on first run).
    #[arg(long, value_name = "FILE")]
    db: Option<PathBuf>,
    #[command(subcommand)]
    command: Option<Command>,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Diagnose one recording: spectra, envelope, fault frequencies and indicators.
    Diagnose(diagnose_cmd::DiagnoseArgs),
    /// Import a route folder (recordings plus route.csv) into a plant database.
    Import(import_cmd::ImportArgs),
    /// List every bearing position with its stage, location, confidence and replacement dates, most urgent first.
    Bearings(bearings_cmd::BearingsArgs),
    /// One bearing's history of stage calls with their evidence.
    Bearing(bearings_cmd::BearingArgs),
    /// Replay each bearing life reading by reading and score the forecasts against the replacement.
    Backtest(backtest_cmd::BacktestArgs),
    /// Add a note to a bearing or one of its readings (an observation, lubrication or maintenance).
    Note(notes_cmd::NoteArgs),
    /// Mark which readings form a bearing life's baseline (default: its first readings).
    Baseline(notes_cmd::BaselineArgs),
    /// Outage planning: export the replacement list for the planner (CSV, iCalendar, HTML).
    Plan(plan_cmd::PlanArgs),
    /// Every threshold behind the location, stage and life calls, with its meaning and source.
    Rules(rules_cmd::RulesArgs),
    /// (Re)create the demo plant database: an invented site with 18 simulated monthly route days.
    Demo(demo_cmd::DemoArgs),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Some(Command::Diagnose(args)) => diagnose_cmd::run(&args),
        Some(Command::Import(args)) => {
            import_cmd::run(&args, analyzer::default_analyzer().as_ref())
        }
        Some(Command::Bearings(args)) => bearings_cmd::run_bearings(&args),
        Some(Command::Bearing(args)) => bearings_cmd::run_bearing(&args),
        Some(Command::Backtest(args)) => backtest_cmd::run(&args),
        Some(Command::Note(args)) => notes_cmd::run_note(&args),
        Some(Command::Baseline(args)) => notes_cmd::run_baseline(&args),
        // Stage calls missing or out of date are completed first, so the plan shows today's calls.
        Some(Command::Plan(args)) => match &args.command {
            plan_cmd::PlanCommand::Export(e) => refresh::open_and_refresh(&e.db, false),
        }
        .and_then(|store| {
            drop(store);
            plan_cmd::run(&args)
        }),
        Some(Command::Demo(args)) => demo_cmd::run(&args),
        Some(Command::Rules(args)) => rules_cmd::run(&args),
        None => demo_cmd::open_window(cli.db),
    };
    match result {
        Ok(code) => code,
        Err(err) => {
            eprintln!("spallcast: {err:#}");
            ExitCode::FAILURE
        }
    }
}
