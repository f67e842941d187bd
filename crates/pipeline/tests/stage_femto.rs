//! Stage calls and remaining-life forecasts on the six run-to-failure bearings of the IEEE PHM 2012
//! (PRONOSTIA) learning set (Nectoux et al. 2012; files and facts in shared/datasets/SOURCES.md).
//!
//! Each run is one bearing life (horizontal channel, every 2nd converted snapshot). No fault was
//! seeded and the failure location is not given, so only generic damage indicators are used. End of
//! life is the last snapshot (the test stopped when the vibration passed 20 g). The remaining-life
//! error and score follow the challenge's score function (reference sheet section 10, from memory;
//! its check values are tested in the analysis crate). Skips with a message when the data is absent.
//! Run with `--nocapture` for the tables.
#![allow(
    clippy::unwrap_used,
    reason = "test code: a broken fixture should fail the test loudly"
)]

use std::collections::BTreeMap;
use std::path::PathBuf;

use spallcast_analysis::forecast::{
    ForecastContext, Lubrication, forecast_life, rul_percent_error, rul_score,
};
use spallcast_analysis::stage::{
    LifeReading, ReadingIndicators, StageOptions, ToneUse, assess_life,
};
use spallcast_analysis::{BearingGeometry, DiagnoseOptions, diagnose};

fn datasets_dir() -> PathBuf {
    match std::env::var_os("SPALLCAST_SHARED") {
        Some(s) => PathBuf::from(s).join("datasets"),
        None => PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../../shared/datasets"),
    }
}

struct Snapshot {
    index: u32,
    elapsed_s: f64,
    file: String,
    rpm: f64,
    load_n: f64,
}

fn load_runs(dir: &std::path::Path) -> BTreeMap<String, Vec<Snapshot>> {
    let mut rdr = csv::Reader::from_path(dir.join("manifest.csv")).unwrap();
    let headers = rdr.headers().unwrap().clone();
    let col = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let (c_file, c_bearing, c_idx, c_chan, c_rpm, c_load, c_el) = (
        col("file"),
        col("bearing"),
        col("snapshot_index"),
        col("channel"),
        col("shaft_rpm"),
        col("radial_load_n"),
        col("elapsed_s_nominal"),
    );
    let mut runs: BTreeMap<String, Vec<Snapshot>> = BTreeMap::new();
    for rec in rdr.records() {
        let rec = rec.unwrap();
        if &rec[c_chan] != "horiz" {
            continue;
        }
        runs.entry(rec[c_bearing].to_owned())
            .or_default()
            .push(Snapshot {
                index: rec[c_idx].parse().unwrap(),
                elapsed_s: rec[c_el].parse().unwrap(),
                file: rec[c_file].to_owned(),
                rpm: rec[c_rpm].parse().unwrap(),
                load_n: rec[c_load].parse().unwrap(),
            });
    }
    for v in runs.values_mut() {
        v.sort_by_key(|s| s.index);
    }
    runs
}

/// Bearing geometry from the challenge document (SOURCES.md): 13 elements of 3.5 mm on a 25.6 mm
/// pitch circle. Used only to satisfy the diagnosis; the defect tones are ignored (`ToneUse::Ignore`).
fn geometry() -> BearingGeometry {
    BearingGeometry {
        rolling_elements: 13,
        element_diameter: 3.5,
        pitch_diameter: 25.6,
        contact_angle_deg: 0.0,
    }
}

fn fmt_min(s: Option<f64>) -> String {
    s.map_or_else(|| "-".to_owned(), |v| format!("{:.1}", v / 60.0))
}

#[test]
fn pronostia_runs_are_staged_and_forecast() {
    let root = datasets_dir().join("femto_pronostia");
    if !root.join("manifest.csv").is_file() {
        println!(
            "SKIPPED: PRONOSTIA data not found at {} (set SPALLCAST_SHARED)",
            root.display()
        );
        return;
    }
    let factors = geometry().factors().unwrap();
    let runs = load_runs(&root);
    assert_eq!(runs.len(), 6, "six learning-set bearings");
    println!(
        "\n| run | readings | life (min) | first stage 2 (min before end) | first stage 3 | first stage 4 | stage at end |"
    );
    println!("|---|---|---|---|---|---|---|");
    let mut rul_rows = Vec::new();
    let mut reached3 = 0;
    for (name, snaps) in &runs {
        let last = snaps.last().unwrap();
        let end_s = last.elapsed_s;
        // Every 2nd snapshot, always keeping the last one.
        let chosen: Vec<&Snapshot> = snaps
            .iter()
            .enumerate()
            .filter(|(i, _)| i % 2 == 0 || *i == snaps.len() - 1)
            .map(|(_, s)| s)
            .collect();
        let shaft_hz = last.rpm / 60.0;
        let readings: Vec<LifeReading> = chosen
            .iter()
            .map(|s| {
                let rec = spallcast_formats::read_wav(&root.join(&s.file)).unwrap();
                let x: Vec<f64> = rec.channels[0].iter().map(|&v| f64::from(v)).collect();
                let d = diagnose(
                    &x,
                    rec.sample_rate_hz,
                    shaft_hz,
                    &factors,
                    &DiagnoseOptions::default(),
                )
                .unwrap();
                LifeReading {
                    t_s: s.elapsed_s,
                    indicators: ReadingIndicators::from_diagnosis(&d, ToneUse::Ignore),
                    baseline_mark: false,
                }
            })
            .collect();
        let calls = assess_life(&readings, &StageOptions::default());
        let first = |stage: u8| {
            calls
                .iter()
                .find(|c| c.stage >= stage)
                .map(|c| end_s - c.t_s)
        };
        let end_stage = calls.last().map_or(0, |c| c.stage);
        if end_stage >= 3 {
            reached3 += 1;
        }
        println!(
            "| {name} | {} | {:.1} | {} | {} | {} | {end_stage} |",
            readings.len(),
            end_s / 60.0,
            fmt_min(first(2)),
            fmt_min(first(3)),
            fmt_min(first(4))
        );
        for c in calls.iter().step_by(10) {
            eprintln!(
                "{name} t {:6.1} min stage {} dmg {:5.1} kurt {:?} rel {:?} {:?}",
                c.t_s / 60.0,
                c.stage,
                c.damage_index_db,
                readings[c.index]
                    .indicators
                    .kurtosis
                    .map(|k| (k * 10.0).round() / 10.0),
                (
                    c.relative.accel_rms_db.map(f64::round),
                    c.relative.resonance_band_db.map(f64::round),
                    c.relative.noise_floor_db.map(f64::round)
                ),
                c.evidence.first()
            );
        }
        // ISO 281 basic rating life as the prior (reference sheet section 5, from memory): ball bearing
        // L10 = (C/P)³ million revolutions, C = 4000 N dynamic rating from the challenge document.
        let l10_rev = (4000.0 / last.load_n).powi(3) * 1e6;
        let l10_s = l10_rev / shaft_hz;
        for frac in [0.5, 0.7, 0.9] {
            let cut = frac * end_s;
            let n = readings.iter().take_while(|r| r.t_s <= cut).count();
            let part = assess_life(&readings[..n], &StageOptions::default());
            let ctx = ForecastContext {
                lubrication: Lubrication::Grease,
                shaft_hz,
                installed_s: Some(0.0),
                rating_life_s: Some(l10_s),
            };
            let f = forecast_life(&part, &ctx).unwrap();
            let now = part.last().map_or(0.0, |c| c.t_s);
            // In stage 4 the risk point has passed: the remaining life predicted is zero.
            let predicted = f.risk_from.or(f.replace_by).map(|p| (p.t_s - now).max(0.0));
            let actual = end_s - now;
            let er = predicted.map(|p| rul_percent_error(actual, p));
            rul_rows.push((
                name.clone(),
                frac,
                part.last().map_or(0, |c| c.stage),
                f.method,
                actual,
                predicted,
                er,
                er.map(rul_score),
            ));
        }
    }
    println!(
        "\n| run | cut | stage then | method | actual RUL (min) | predicted RUL (min) | Er % | score |"
    );
    println!("|---|---|---|---|---|---|---|---|");
    for (name, frac, stage, method, actual, predicted, er, score) in &rul_rows {
        println!(
            "| {name} | {:.0} % | {stage} | {method:?} | {:.1} | {} | {} | {} |",
            frac * 100.0,
            actual / 60.0,
            fmt_min(*predicted),
            er.map_or_else(|| "-".to_owned(), |e| format!("{e:.0}")),
            score.map_or_else(|| "-".to_owned(), |s| format!("{s:.3}"))
        );
    }
    let scores: Vec<f64> = rul_rows.iter().filter_map(|r| r.7).collect();
    let mean = scores.iter().sum::<f64>() / scores.len().max(1) as f64;
    println!("mean score over {} predictions: {mean:.3}", scores.len());

    // Every run ended past 20 g: the tool must see serious damage by the end in most runs, and
    // every cut must produce a prediction (common practice, no source).
    assert!(
        reached3 >= 4,
        "only {reached3} of 6 runs called stage 3+ at end of life"
    );
    assert_eq!(scores.len(), 18, "a remaining-life prediction at every cut");
}
