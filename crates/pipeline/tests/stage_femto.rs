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
use std::sync::OnceLock;

use spallcast_analysis::forecast::{
    DegradationPrior, EolBasis, ForecastContext, LifeFacts, Lubrication, fit_prior, forecast_life,
    forecast_life_with, life_facts, rul_percent_error, rul_score,
};
use spallcast_analysis::stage::rules;
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

fn reading(
    root: &std::path::Path,
    s: &Snapshot,
    shaft_hz: f64,
    factors: &spallcast_analysis::FaultFactors,
) -> LifeReading {
    let rec = spallcast_formats::read_wav(&root.join(&s.file)).unwrap();
    let x: Vec<f64> = rec.channels[0].iter().map(|&v| f64::from(v)).collect();
    let d = diagnose(
        &x,
        rec.sample_rate_hz,
        shaft_hz,
        factors,
        &DiagnoseOptions::default(),
    )
    .unwrap();
    LifeReading {
        t_s: s.elapsed_s,
        indicators: ReadingIndicators::from_diagnosis(&d, ToneUse::Ignore),
        baseline_mark: false,
    }
}

/// Every converted snapshot of each run (one a minute, the last 30 at 10 s), diagnosed once.
fn all_lives() -> Option<&'static BTreeMap<String, Vec<LifeReading>>> {
    static LIVES: OnceLock<Option<BTreeMap<String, Vec<LifeReading>>>> = OnceLock::new();
    LIVES
        .get_or_init(|| {
            let root = datasets_dir().join("femto_pronostia");
            if !root.join("manifest.csv").is_file() {
                return None;
            }
            let factors = geometry().factors().unwrap();
            Some(
                load_runs(&root)
                    .into_iter()
                    .map(|(name, snaps)| {
                        let shaft_hz = snaps[0].rpm / 60.0;
                        let lives = snaps
                            .iter()
                            .map(|s| reading(&root, s, shaft_hz, &factors))
                            .collect();
                        (name, lives)
                    })
                    .collect(),
            )
        })
        .as_ref()
}

fn skip_message() {
    println!(
        "SKIPPED: PRONOSTIA data not found at {} (set SPALLCAST_SHARED)",
        datasets_dir().join("femto_pronostia").display()
    );
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
            .map(|s| reading(&root, s, shaft_hz, &factors))
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
            // The end-of-life projection (a labelled prior before any damage growth).
            let predicted = f.end_of_life.map(|p| (p.t_s - now).max(0.0));
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
    assert_eq!(scores.len(), 18, "an end-of-life projection at every cut");
}

/// Cuts of the leave-one-out test, as shares of each run's life.
const CUTS: [f64; 5] = [0.5, 0.7, 0.8, 0.9, 0.95];

fn ctx_for(shaft_hz: f64) -> ForecastContext {
    ForecastContext {
        lubrication: Lubrication::Grease,
        shaft_hz,
        installed_s: Some(0.0),
        rating_life_s: None,
    }
}

fn run_facts(readings: &[LifeReading]) -> Option<LifeFacts> {
    life_facts(&assess_life(readings, &StageOptions::default()))
}

/// Readings up to a cut (share of the life).
fn upto(readings: &[LifeReading], frac: f64) -> &[LifeReading] {
    let end = readings.last().map_or(0.0, |r| r.t_s);
    let n = readings.iter().take_while(|r| r.t_s <= frac * end).count();
    &readings[..n.max(1)]
}

fn score_of(actual: f64, predicted: f64) -> f64 {
    rul_score(rul_percent_error(actual, predicted))
}

// Density invariance: each run imported at every converted snapshot and at every 5th gives the same
// stage at the shared readings at least 95 % of the time. Measured 96.5 % (275 of 285) over the six
// runs with the share-based hold (`hold_share`), 93.7 % with the former highest-reading hold; the
// misses left are at the fast ends of the runs, where a damage index at the stage-4 level (12 dB)
// differs by a few tenths of a dB between the two baselines.
#[test]
fn pronostia_stage_calls_do_not_depend_on_reading_density() {
    let Some(lives) = all_lives() else {
        skip_message();
        return;
    };
    println!("\n| run | shared readings | same stage | share |");
    println!("|---|---|---|---|");
    let (mut n, mut same) = (0usize, 0usize);
    for (name, dense) in lives {
        let sparse: Vec<LifeReading> = dense.iter().step_by(5).cloned().collect();
        let a = assess_life(dense, &StageOptions::default());
        let b = assess_life(&sparse, &StageOptions::default());
        let s = b
            .iter()
            .enumerate()
            .filter(|(k, c)| a[k * 5].stage == c.stage)
            .count();
        for (k, c) in b.iter().enumerate() {
            if a[k * 5].stage != c.stage {
                eprintln!(
                    "{name} mismatch at {:.1} min: dense {} (raw {}) sparse {} (raw {}) dmg {:.1}/{:.1}",
                    c.t_s / 60.0,
                    a[k * 5].stage,
                    a[k * 5].raw_stage,
                    c.stage,
                    c.raw_stage,
                    a[k * 5].damage_index_db,
                    c.damage_index_db
                );
            }
        }
        println!(
            "| {name} | {} | {s} | {:.3} |",
            b.len(),
            s as f64 / b.len() as f64
        );
        n += b.len();
        same += s;
    }
    println!("| all | {n} | {same} | {:.3} |", same as f64 / n as f64);
    assert!(same as f64 >= 0.95 * n as f64, "{same} of {n}");
}

// Leave-one-out on the six learning runs: for each held-out run the degradation prior (slope, end-of-
// life level, survival ratio) is fitted on the other five only, and the constant-guess baseline is
// the constant remaining life that scores best on the other five at the same cuts. Both are scored
// with the PHM 2012 challenge score (reference sheet section 10, from memory) at each cut.
#[test]
fn pronostia_leave_one_out_end_of_life_against_a_constant_guess() {
    let Some(lives) = all_lives() else {
        skip_message();
        return;
    };
    let facts: BTreeMap<&String, Option<LifeFacts>> =
        lives.iter().map(|(n, r)| (n, run_facts(r))).collect();
    println!(
        "\n| run | FPT (min before end) | slope per healthy span | end-of-life index (dB) | survival ratio |"
    );
    println!("|---|---|---|---|---|");
    for (name, f) in &facts {
        let r = &lives[*name];
        let calls = assess_life(r, &StageOptions::default());
        let fpt = spallcast_analysis::forecast::detect_fpt(&calls);
        let end = r.last().unwrap().t_s;
        println!(
            "| {name} | {} | {} | {} | {} |",
            fmt_min(fpt.map(|f| end - f.t_s)),
            f.map_or("-".into(), |f| format!("{:.2}", f.rate)),
            f.map_or("-".into(), |f| format!("{:.1}", f.eol_db)),
            f.map_or("-".into(), |f| format!("{:.3}", f.survival_ratio))
        );
    }
    // The documented default prior is the fit on all six runs.
    let all: Vec<LifeFacts> = facts.values().flatten().copied().collect();
    let full = fit_prior(&all).unwrap();
    println!("prior fitted on all six: {full:?}");
    let near = |a: f64, b: f64| (a - b).abs() <= 0.05 * b.abs().max(1e-9) + 0.01;
    assert!(
        near(full.rate_mean, rules::PRIOR_RATE_MEAN.value)
            && near(full.rate_sd, rules::PRIOR_RATE_SD.value)
            && near(full.eol_db, rules::EOL_DB.value)
            && near(full.survival_ratio, rules::PRIOR_SURVIVAL_RATIO.value),
        "rules table prior {:?} differs from the fit on all six {full:?}",
        DegradationPrior::default()
    );

    println!(
        "\n| run | cut | stage | basis | actual RUL (min) | ours (min) | score | constant (min) | score |"
    );
    println!("|---|---|---|---|---|---|---|---|---|");
    let (mut ours, mut base) = (Vec::new(), Vec::new());
    let (mut model_ours, mut model_base) = (Vec::new(), Vec::new());
    for (held, readings) in lives {
        let others: Vec<LifeFacts> = facts
            .iter()
            .filter(|(n, _)| **n != held)
            .filter_map(|(_, f)| *f)
            .collect();
        let prior = fit_prior(&others).unwrap();
        // The held-out run's data never enters its prior.
        assert_eq!(prior.finished_lives_s.len(), 5, "{held}");
        // Best constant remaining life on the other runs' cuts (a grid from 10 s to 10 h).
        let train: Vec<f64> = lives
            .iter()
            .filter(|(n, _)| *n != held)
            .flat_map(|(_, r)| {
                CUTS.iter().map(|&c| {
                    let part = upto(r, c);
                    r.last().unwrap().t_s - part.last().unwrap().t_s
                })
            })
            .collect();
        let constant = (0..400)
            .map(|k| 10.0 * 1.02f64.powi(k))
            .max_by(|a, b| {
                let m = |c: f64| train.iter().map(|&act| score_of(act, c)).sum::<f64>();
                m(*a).total_cmp(&m(*b))
            })
            .unwrap();
        let shaft_hz = 1800.0 / 60.0;
        for &cut in &CUTS {
            let part = upto(readings, cut);
            let calls = assess_life(part, &StageOptions::default());
            let f = forecast_life_with(&calls, &ctx_for(shaft_hz), &prior).unwrap();

            let now = calls.last().unwrap().t_s;
            let actual = readings.last().unwrap().t_s - now;
            let predicted = f.end_of_life.map_or(0.0, |p| (p.t_s - now).max(0.0));
            let (a, b) = (score_of(actual, predicted), score_of(actual, constant));
            ours.push(a);
            base.push(b);
            if f.end_of_life_basis == EolBasis::Model {
                model_ours.push(a);
                model_base.push(b);
            }
            println!(
                "| {held} | {:.0} % | {} | {} | {:.1} | {:.1} | {a:.3} | {:.1} | {b:.3} |",
                cut * 100.0,
                f.stage,
                match f.end_of_life_basis {
                    EolBasis::Model => "model",
                    EolBasis::SurvivalPrior => "survival prior",
                    EolBasis::FinishedLives => "finished lives",
                    EolBasis::Reached => "reached",
                    EolBasis::None => "none",
                },
                actual / 60.0,
                predicted / 60.0,
                constant / 60.0
            );
        }
    }
    let mean = |v: &[f64]| v.iter().sum::<f64>() / v.len().max(1) as f64;
    let (mo, mb) = (mean(&ours), mean(&base));
    println!(
        "mean PHM 2012 score over {} predictions: ours {mo:.3}, constant guess {mb:.3}",
        ours.len()
    );
    println!(
        "where the degradation model projects ({} predictions): ours {:.3}, constant guess {:.3}",
        model_ours.len(),
        mean(&model_ours),
        mean(&model_base)
    );
    // What this achieves, honestly: the model beats the constant guess where it projects; over all
    // cuts the constant guess (fitted to the other runs' cuts) still scores higher (see the report).
    assert!(!model_ours.is_empty(), "the model projects at some cut");
    assert!(
        mean(&model_ours) > mean(&model_base),
        "model {:.3} vs constant {:.3} where the model projects",
        mean(&model_ours),
        mean(&model_base)
    );
    assert!(mo >= 0.12, "mean score {mo:.3}");
}
