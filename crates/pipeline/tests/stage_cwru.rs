//! Stage calls on the open CWRU bearing recordings (shared/datasets/cwru; SOURCES.md section 1).
//!
//! The normal baseline record 97 (48 kHz, 0 hp, 1796 r/min) must never be called above stage 0,
//! neither as one reading nor cut into a five-reading series. Skips with a message when the data is
//! absent.
#![allow(
    clippy::unwrap_used,
    reason = "test code: a broken fixture should fail the test loudly"
)]

use std::path::PathBuf;

use spallcast_analysis::stage::{
    LifeReading, ReadingIndicators, StageOptions, ToneUse, assess_life,
};
use spallcast_analysis::{DiagnoseOptions, FaultFactors, diagnose};

fn datasets_dir() -> PathBuf {
    match std::env::var_os("SPALLCAST_SHARED") {
        Some(s) => PathBuf::from(s).join("datasets"),
        None => PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../../shared/datasets"),
    }
}

/// CWRU drive-end bearing multiples (CWRU bearing page via Smith & Randall 2015 Table 2; reference
/// sheet section 1.2a): BPFO 3.5848, BPFI 5.4152, FTF 0.39828, 2×BSF 4.7135 (so 1×BSF 2.35675).
fn de_factors() -> FaultFactors {
    FaultFactors {
        ftf: 0.39828,
        bsf: 4.7135 / 2.0,
        bpfo: 3.5848,
        bpfi: 5.4152,
    }
}

fn indicators(x: &[f64], fs: f64, rpm: f64) -> ReadingIndicators {
    let d = diagnose(
        x,
        fs,
        rpm / 60.0,
        &de_factors(),
        &DiagnoseOptions::default(),
    )
    .unwrap();
    ReadingIndicators::from_diagnosis(&d, ToneUse::Use)
}

#[test]
fn normal_baseline_record_97_is_stage_zero() {
    let path = datasets_dir().join("cwru/normal/97_normal_0hp_DE.wav");
    if !path.is_file() {
        println!(
            "SKIPPED: CWRU record 97 not found at {} (set SPALLCAST_SHARED)",
            path.display()
        );
        return;
    }
    let rec = spallcast_formats::read_wav(&path).unwrap();
    let fs = rec.sample_rate_hz;
    assert!(
        (fs - 48_000.0).abs() < 1.0,
        "record 97 is sampled at 48 kHz (SOURCES.md)"
    );
    let x: Vec<f64> = rec.channels[0].iter().map(|&v| f64::from(v)).collect();
    let rpm = 1796.0;
    // The whole record as one reading.
    let whole = assess_life(
        &[LifeReading {
            t_s: 0.0,
            indicators: indicators(&x, fs, rpm),
            baseline_mark: false,
        }],
        &StageOptions::default(),
    );
    println!(
        "record 97 whole: stage {} {:?} limits {:?}",
        whole[0].stage, whole[0].evidence, whole[0].limits
    );
    assert_eq!(whole[0].stage, 0, "{:#?}", whole[0]);
    // Five consecutive 1-s pieces as a series (a stationary healthy machine).
    let piece = 48_000;
    let series: Vec<LifeReading> = x
        .chunks_exact(piece)
        .enumerate()
        .map(|(i, c)| LifeReading {
            t_s: i as f64,
            indicators: indicators(c, fs, rpm),
            baseline_mark: false,
        })
        .collect();
    assert_eq!(series.len(), 5);
    let calls = assess_life(&series, &StageOptions::default());
    for c in &calls {
        println!(
            "record 97 piece {}: stage {} damage {:+.1} dB; {:?}",
            c.index, c.stage, c.damage_index_db, c.evidence
        );
        assert_eq!(c.stage, 0, "{c:#?}");
    }
    // 48 kHz reaches only 21.6 kHz usable: no ultrasonic band, so the call says stage 1 cannot be shown.
    assert!(
        calls[0]
            .limits
            .iter()
            .any(|l| l.contains("stage 1 cannot be shown"))
    );
}

/// Records graded clearly diagnosable by Smith & Randall (2015) for the DE channel (reference sheet
/// section 3.4 and check 16): 131 outer race 0.007 in (Y1), 235 outer race 0.021 in (Y2), 210 inner
/// race 0.021 in (Y1). Each alone must be called at stage 2 or above with the right location.
#[test]
fn clearly_diagnosable_fault_records_are_staged_with_their_location() {
    let dir = datasets_dir().join("cwru/12k_de");
    let cases = [
        ("131_OR007@6_1hp_DE.wav", "outer race"),
        ("235_OR021@6_1hp_DE.wav", "outer race"),
        ("210_IR021_1hp_DE.wav", "inner race"),
    ];
    if !dir.is_dir() {
        println!(
            "SKIPPED: CWRU 12 kHz drive-end records not found at {}",
            dir.display()
        );
        return;
    }
    for (file, location) in cases {
        let path = dir.join(file);
        let rec = spallcast_formats::read_wav(&path).unwrap();
        let x: Vec<f64> = rec.channels[0].iter().map(|&v| f64::from(v)).collect();
        let calls = assess_life(
            &[LifeReading {
                t_s: 0.0,
                indicators: indicators(&x, rec.sample_rate_hz, 1772.0),
                baseline_mark: false,
            }],
            &StageOptions::default(),
        );
        println!(
            "{file}: stage {} {} {:?}",
            calls[0].stage,
            calls[0].location.name(),
            calls[0].evidence
        );
        assert!(calls[0].stage >= 2, "{file}: {:#?}", calls[0]);
        assert_eq!(calls[0].location.name(), location, "{file}");
    }
}
