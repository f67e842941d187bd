//! `spallcast rules`: every threshold behind the location, stage and life calls, with its meaning and
//! where it comes from, so an analyst can see what a call rests on.

use std::process::ExitCode;

use anyhow::Result;
use clap::Args;
use spallcast_analysis::location_rules::LOCATION_RULES;
use spallcast_analysis::stage::rules::{RULES, Rule};

/// Arguments of `spallcast rules`.
#[derive(Debug, Args)]
pub struct RulesArgs {
    /// Print the tables as JSON (`{"location": [...], "stage_and_life": [...]}`).
    #[arg(long)]
    pub json: bool,
}

/// Prints the rules tables.
pub fn run(args: &RulesArgs) -> Result<ExitCode> {
    if args.json {
        let doc = serde_json::json!({
            "location": LOCATION_RULES,
            "stage_and_life": RULES,
        });
        println!("{}", serde_json::to_string_pretty(&doc)?);
        return Ok(ExitCode::SUCCESS);
    }
    println!(
        "Thresholds behind Spallcast's calls. They are defaults of this tool, not limits from a standard \
         unless the source says so; the calls are advisory."
    );
    print_table("Band choice and fault location", &LOCATION_RULES);
    print_table("Stage and remaining life", RULES);
    Ok(ExitCode::SUCCESS)
}

fn print_table(title: &str, rules: &[Rule]) {
    println!("\n{title} ({} rules)", rules.len());
    for r in rules {
        println!("  {} = {} {}", r.id, r.value, r.unit);
        println!("      {}", r.meaning);
        println!("      source: {}", r.source);
    }
}
