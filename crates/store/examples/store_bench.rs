//! Speed and memory figures for the store (run in release, once):
//!
//! ```sh
//! cargo run --release -p spallcast-store --example store_bench -- import   # 1,000 readings × 65,536 samples
//! cargo run --release -p spallcast-store --example store_bench -- scale    # 2,000 bearings × 10 years monthly
//! ```
//!
//! `import` prints readings/s from a warm page cache and the peak RSS (`VmHWM`); `scale` prints the time
//! of one bearing's trend query and of the plant overview (latest state of every bearing).
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::print_stdout)]

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;
use std::time::Instant;

use chrono::{DateTime, FixedOffset, Months};
use spallcast_store::{
    AnalysisInput, AnalysisOutput, AnalyzeError, NewReading, PlantFile, ReadingAnalyzer, Store,
};

/// Basic statistics, as the interim command-line analyzer computes.
struct Stats;

impl ReadingAnalyzer for Stats {
    fn version(&self) -> String {
        "bench-stats".to_owned()
    }
    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, AnalyzeError> {
        let n = input.samples_g.len() as f64;
        let (mut s2, mut s4, mut peak) = (0.0_f64, 0.0_f64, 0.0_f64);
        for &x in input.samples_g {
            let x = f64::from(x);
            s2 += x * x;
            s4 += x * x * x * x;
            peak = peak.max(x.abs());
        }
        let rms = (s2 / n).sqrt();
        let kurt = (s4 / n) / (s2 / n).powi(2);
        Ok(AnalysisOutput {
            scalars: BTreeMap::from([
                ("accel_rms_g".to_owned(), rms),
                ("accel_peak_g".to_owned(), peak),
                ("crest_factor".to_owned(), peak / rms),
                ("kurtosis".to_owned(), kurt),
            ]),
            document: serde_json::json!({ "diagnosis": "none", "rms": rms }),
            diagnosis: Some("none".to_owned()),
        })
    }
}

/// As many scalars per reading as the real analyzer stores (about 60: indicators, band energies,
/// fault-tone levels, stage indicators).
fn bench_scalars(rms: f64) -> BTreeMap<String, f64> {
    let mut m = BTreeMap::from([
        ("accel_rms_g".to_owned(), rms),
        ("accel_peak_g".to_owned(), rms * 3.5),
        ("crest_factor".to_owned(), 3.5),
        ("kurtosis".to_owned(), 3.1),
    ]);
    for i in 0..56 {
        m.insert(format!("band.{i:02}_db"), rms * f64::from(i));
    }
    m
}

fn plant(machines: usize, bearings_per_machine: usize) -> PlantFile {
    let mut t = String::from(
        "[site]\nname = \"Bench Works\"\n\n[[bearing_types]]\ndesignation = \"BX-1\"\nkind = \"ball\"\n\
         factors = { ftf = 0.4, bsf = 2.3, bpfo = 3.6, bpfi = 5.4 }\n\n[[areas]]\nname = \"All\"\n",
    );
    for m in 0..machines {
        write!(t, "[[areas.machines]]\nid = \"M{m}\"\nname = \"Machine {m}\"\nkind = \"pump\"\nnominal_rpm = 1480.0\niso_group = 2\niso_support = \"rigid\"\n").unwrap();
        for b in 0..bearings_per_machine {
            write!(t, "[[areas.machines.bearings]]\nposition = \"B{b}\"\nbearing_type = \"BX-1\"\nlubrication = \"grease\"\ninstalled = \"2016-01-01\"\n").unwrap();
        }
        for b in 0..bearings_per_machine {
            write!(t, "[[areas.machines.points]]\nid = \"M{m}-B{b}\"\nbearing = \"B{b}\"\ndirection = \"H\"\n").unwrap();
        }
    }
    PlantFile::parse(&t, Path::new("bench.toml")).unwrap()
}

fn vm_hwm_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

fn bench_import() {
    const COUNT: usize = 1000;
    const SAMPLES: usize = 65_536;
    let tmp = tempfile::tempdir().unwrap();
    let route = tmp.path().join("route");
    std::fs::create_dir_all(&route).unwrap();
    let fs = 25_600.0;
    let mut manifest = String::from("file,point,taken_at,rpm\n");
    for i in 0..COUNT {
        let samples: Vec<f32> = (0..SAMPLES)
            .map(|k| {
                (0.3 * (2.0 * std::f64::consts::PI * (100.0 + i as f64) * k as f64 / fs).sin())
                    as f32
            })
            .collect();
        let rec = spallcast_formats::Recording {
            channels: vec![samples],
            sample_rate_hz: fs,
        };
        let name = format!("r{i:04}.wav");
        spallcast_formats::write_wav_f32(&route.join(&name), &rec).unwrap();
        writeln!(
            manifest,
            "{name},M{}-B{},2026-05-14T{:02}:{:02}:00+01:00,1480",
            i % 50,
            (i / 50) % 4,
            i / 60,
            i % 60
        )
        .unwrap();
    }
    std::fs::write(route.join("route.csv"), manifest).unwrap();
    // Warm the page cache.
    for e in std::fs::read_dir(&route).unwrap() {
        let _ = std::fs::read(e.unwrap().path()).unwrap();
    }
    let mut store = Store::open(&tmp.path().join("bench.db")).unwrap();
    store.apply_plant(&plant(50, 4)).unwrap();
    let rss_before = vm_hwm_kib();
    let start = Instant::now();
    let sum = store.import_route(&route, &Stats, &mut |_, _| {}).unwrap();
    let secs = start.elapsed().as_secs_f64();
    assert_eq!(sum.new_readings, COUNT, "{:?}", sum.rejected.first());
    println!(
        "import: {COUNT} readings x {SAMPLES} samples in {secs:.2} s = {:.0} readings/s on {} threads",
        COUNT as f64 / secs,
        rayon::current_num_threads()
    );
    println!(
        "peak RSS (`VmHWM`): {} MiB (after writing the test files: {} MiB)",
        vm_hwm_kib().unwrap_or(0) / 1024,
        rss_before.unwrap_or(0) / 1024
    );
    let start = Instant::now();
    let again = store.import_route(&route, &Stats, &mut |_, _| {}).unwrap();
    println!(
        "re-import (all duplicates): {} skipped in {:.2} s",
        again.duplicates,
        start.elapsed().as_secs_f64()
    );
}

fn bench_scale() {
    const MACHINES: usize = 500;
    const BEARINGS: usize = 4;
    const MONTHS: u32 = 120;
    let tmp = tempfile::tempdir().unwrap();
    let mut store = Store::open(&tmp.path().join("scale.db")).unwrap();
    store.apply_plant(&plant(MACHINES, BEARINGS)).unwrap();
    let mut point_ids = Vec::new();
    for m in 0..MACHINES {
        for b in 0..BEARINGS {
            point_ids.push(store.point_id(&format!("M{m}-B{b}")).unwrap().unwrap());
        }
    }
    let start = Instant::now();
    let t0: DateTime<FixedOffset> =
        DateTime::parse_from_rfc3339("2016-02-01T09:00:00+01:00").unwrap();
    let evidence = serde_json::json!({
        "call": { "stage": 1, "reasons": vec!["ultrasonic-band energy 9.1 dB over baseline (threshold 6 dB)"; 6] },
        "forecast": { "replace_by": "2027-03-01", "risk_from": "2027-05-01", "interval_days": [40, 160] },
        "point": "M0-B0",
    });
    let hashes: Vec<String> = (0..point_ids.len()).map(|i| format!("{i:064x}")).collect();
    for month in 0..MONTHS {
        let taken_at = t0.checked_add_months(Months::new(month)).unwrap();
        let batch: Vec<(NewReading<'_>, AnalysisOutput)> = point_ids
            .iter()
            .enumerate()
            .map(|(i, &point_id)| {
                let rms = 0.1 + 0.001 * f64::from(month) + 0.0001 * i as f64;
                (
                    NewReading {
                        point_id,
                        taken_at,
                        shaft_hz: 24.7,
                        sample_rate_hz: 25_600.0,
                        units: "g",
                        samples_g: &[],
                        source_file: "synthetic",
                        content_sha256: &hashes[i],
                        clipped_fraction: 0.0,
                    },
                    AnalysisOutput {
                        scalars: bench_scalars(rms),
                        document: serde_json::json!({ "diagnosis": "none" }),
                        diagnosis: Some("none".to_owned()),
                    },
                )
            })
            .collect();
        let ids = store.add_readings(&batch, "bench").unwrap();
        // Every reading gets a stage call with evidence of a realistic size, as the stage runner writes.
        for id in ids.into_iter().flatten() {
            store
                .put_stage_call(id, (month / 40) as u8, "bench-stage", &evidence)
                .unwrap();
        }
    }
    println!(
        "scale: {} bearings x {MONTHS} months = {} readings written in {:.1} s",
        point_ids.len(),
        store.reading_count().unwrap(),
        start.elapsed().as_secs_f64()
    );
    let tree = store.plant_tree().unwrap();
    let lives: Vec<i64> = tree.areas[0]
        .machines
        .iter()
        .flat_map(|m| m.bearings.iter().filter_map(|b| b.current_life_id))
        .collect();
    // Trend query: median and worst of 200 bearings.
    let mut times = Vec::new();
    for life in lives.iter().step_by(lives.len() / 200) {
        let start = Instant::now();
        let trend = store.trend(*life, "accel_rms_g").unwrap();
        times.push(start.elapsed().as_secs_f64() * 1e3);
        assert_eq!(trend.len(), MONTHS as usize);
    }
    times.sort_by(f64::total_cmp);
    println!(
        "trend query (120 points): median {:.2} ms, worst {:.2} ms",
        times[times.len() / 2],
        times[times.len() - 1]
    );
    let mut times = Vec::new();
    for _ in 0..5 {
        let start = Instant::now();
        let states = store.latest_states().unwrap();
        times.push(start.elapsed().as_secs_f64() * 1e3);
        assert_eq!(states.len(), MACHINES * BEARINGS);
    }
    times.sort_by(f64::total_cmp);
    println!(
        "plant overview (latest state of {} bearings): median {:.1} ms, worst {:.1} ms",
        MACHINES * BEARINGS,
        times[2],
        times[4]
    );
    let start = Instant::now();
    let tree = store.plant_tree().unwrap();
    println!(
        "plant tree ({} machines): {:.1} ms",
        tree.areas[0].machines.len(),
        start.elapsed().as_secs_f64() * 1e3
    );
}

fn main() {
    match std::env::args().nth(1).as_deref() {
        Some("import") => bench_import(),
        Some("scale") => bench_scale(),
        _ => {
            bench_import();
            bench_scale();
        }
    }
}
