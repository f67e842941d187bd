//! Generate the 18 demo route days and time it.
//!
//! `cargo run --release --example gen_demo -- [OUT_DIR]` (default: a `demo-routes` folder in the
//! system temporary directory) prints the wall time and, per faulty bearing, its true stage on
//! each route day. `-- --truth` prints only the table, without simulating anything.

use std::collections::BTreeMap;
use std::time::Instant;

use spallcast_simulate::{PLANT_TOML, SCENARIO_TOML, TruthRow};

fn print_table(truth: &[TruthRow]) {
    let faulty: Vec<(&str, &str)> = truth
        .iter()
        .filter(|t| t.fault.is_some())
        .map(|t| (t.machine.as_str(), t.bearing.as_str()))
        .collect();
    let mut table: BTreeMap<(&str, &str), BTreeMap<String, String>> = BTreeMap::new();
    for t in truth {
        let key = (t.machine.as_str(), t.bearing.as_str());
        if faulty.contains(&key) {
            let cell = t.fault.map_or_else(
                || "0".to_owned(),
                |f| format!("{}{}", t.stage, &f.label()[..1]),
            );
            table
                .entry(key)
                .or_default()
                .entry(t.date.format("%y-%m").to_string())
                .or_insert(cell);
        }
    }
    for ((m, b), days) in &table {
        let row: Vec<String> = days.iter().map(|(d, c)| format!("{d}:{c}")).collect();
        println!("{m:6} {b:5} {}", row.join(" "));
    }
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let arg = std::env::args_os().nth(1);
    if arg.as_deref() == Some(std::ffi::OsStr::new("--truth")) {
        print_table(&spallcast_simulate::demo_truth_from_str(
            PLANT_TOML,
            SCENARIO_TOML,
        )?);
        return Ok(());
    }
    let out = arg.map_or_else(
        || std::env::temp_dir().join("demo-routes"),
        std::path::PathBuf::from,
    );
    let t0 = Instant::now();
    let summary =
        spallcast_simulate::generate_demo_routes_from_str(PLANT_TOML, SCENARIO_TOML, &out)?;
    let secs = t0.elapsed().as_secs_f64();
    println!(
        "wrote {} route days, {} recordings ({} bad on purpose) to {} in {secs:.3} s",
        summary.route_dirs.len(),
        summary.recordings,
        summary.bad_recordings,
        out.display()
    );
    print_table(&summary.truth);
    Ok(())
}
