//! Time one 65,536-sample reading (release): `cargo run --release --example bench_simulate`.
//!
//! Prints the median wall time of a few repetitions per stage. Not a unit test on purpose: speed
//! targets live in benchmarks, not in timed tests.

use std::time::Instant;

use spallcast_simulate::{BearingFactors, Condition, FaultKind, MachineParams, Stage, simulate};

fn main() -> Result<(), spallcast_simulate::SimError> {
    let factors = BearingFactors::from_geometry(9, 12.7, 65.0, 0.0);
    let params = MachineParams::typical(24.75, factors);
    for (fs, label) in [(25_600.0, "25.6 kHz"), (102_400.0, "102.4 kHz")] {
        for stage in 0..=4_u8 {
            let condition = Condition::new(
                FaultKind::InnerRace,
                Stage::new(stage).unwrap_or(Stage::MAX),
                0.5,
            );
            let mut times = Vec::new();
            for seed in 0..15 {
                let t0 = Instant::now();
                let x = simulate(&params, &condition, fs, 65_536, seed)?;
                times.push(t0.elapsed().as_secs_f64() * 1e3);
                std::hint::black_box(x);
            }
            times.sort_by(f64::total_cmp);
            println!(
                "fs {label:>9}, stage {stage}: median {:.2} ms, min {:.2} ms per 65,536 samples",
                times[7], times[0]
            );
        }
    }
    Ok(())
}
