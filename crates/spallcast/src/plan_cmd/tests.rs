//! `spallcast plan export` parsed and run as the binary would.

use clap::Parser;
use spallcast_testkit::plants::plant_store;

use super::{PlanArgs, run};

#[derive(Debug, Parser)]
struct Cli {
    #[command(subcommand)]
    command: Top,
}

#[derive(Debug, clap::Subcommand)]
enum Top {
    Plan(PlanArgs),
}

fn parse(args: &[&str]) -> Result<PlanArgs, clap::Error> {
    let cli = Cli::try_parse_from(std::iter::once("spallcast").chain(args.iter().copied()))?;
    let Top::Plan(p) = cli.command;
    Ok(p)
}

#[test]
fn export_writes_the_chosen_format() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("plant.db");
    drop(plant_store(&db));
    for (format, head) in [
        ("csv", "outage,outage_start"),
        ("ics", "BEGIN:VCALENDAR\r\n"),
        ("html", "<!DOCTYPE html>"),
    ] {
        let out = dir.path().join(format!("plan.{format}"));
        let args = parse(&[
            "plan",
            "export",
            "--db",
            db.to_str().unwrap(),
            "--format",
            format,
            "--out",
            out.to_str().unwrap(),
            "--today",
            "2026-12-01",
        ])
        .unwrap();
        let code = run(&args).unwrap();
        assert_eq!(code, std::process::ExitCode::SUCCESS);
        assert!(
            std::fs::read_to_string(&out).unwrap().starts_with(head),
            "{format}"
        );
    }
}

#[test]
fn bad_arguments_and_a_missing_database_are_clear_errors() {
    let err = parse(&[
        "plan", "export", "--db", "x.db", "--format", "xlsx", "--out", "y",
    ])
    .unwrap_err();
    assert!(err.to_string().contains("xlsx"), "{err}");
    let err = parse(&["plan", "export", "--format", "csv", "--out", "y"]).unwrap_err();
    assert!(err.to_string().contains("--db"), "{err}");
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("missing.db");
    let out = dir.path().join("plan.csv");
    let args = parse(&[
        "plan",
        "export",
        "--db",
        missing.to_str().unwrap(),
        "--format",
        "csv",
        "--out",
        out.to_str().unwrap(),
    ])
    .unwrap();
    let err = run(&args).unwrap_err();
    assert!(format!("{err:#}").contains("missing.db"), "{err:#}");
    assert!(!out.exists());
}
