//! Checks of the simulated waveforms against the physics they model.
#![allow(clippy::unwrap_used)]

mod common;

use common::{band_energy, median_in, peak_in, power_spectrum, squared_envelope_spectrum};
use spallcast_simulate::{BearingFactors, Condition, FaultKind, MachineParams, Stage, simulate};

const SHAFT_HZ: f64 = 24.75; // 1485 r/min

fn params() -> MachineParams {
    // CWRU drive-end geometry (reference sheet §1.2a) as a plausible bearing.
    MachineParams::typical(
        SHAFT_HZ,
        BearingFactors::from_geometry(9, 0.3126, 1.537, 0.0),
    )
}

fn stage(s: u8) -> Stage {
    Stage::new(s).unwrap()
}

#[test]
fn same_seed_same_bytes_different_seed_differs() {
    let p = params();
    let c = Condition::new(FaultKind::InnerRace, stage(3), 0.4);
    let a = simulate(&p, &c, 25_600.0, 8192, 42).unwrap();
    let b = simulate(&p, &c, 25_600.0, 8192, 42).unwrap();
    let d = simulate(&p, &c, 25_600.0, 8192, 43).unwrap();
    assert_eq!(a.len(), 8192);
    let bits = |v: &[f32]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&a), bits(&b));
    assert_ne!(bits(&a), bits(&d));
    assert!(a.iter().all(|x| x.is_finite()));
}

#[test]
fn rejects_bad_parameters() {
    let mut p = params();
    let c = Condition::healthy();
    assert!(simulate(&p, &c, 0.0, 100, 1).is_err());
    assert!(simulate(&p, &c, f64::NAN, 100, 1).is_err());
    p.shaft_hz = -1.0;
    assert!(simulate(&p, &c, 25_600.0, 100, 1).is_err());
    let mut p = params();
    p.bearing_resonance.damping_ratio = 0.0;
    assert!(simulate(&p, &c, 25_600.0, 100, 1).is_err());
}

/// The squared-envelope-spectrum peak sits at the requested defect rate within slip (±2 %).
/// Slip of 1–2 % and the 2×BSF rolling-element rate: Randall & Antoni (2011) §2, via reference
/// sheet §1.1. Envelope method: reference sheet §4.1.
#[test]
fn envelope_peak_at_defect_frequency_for_every_fault_kind() {
    let p = params();
    let fs = 25_600.0;
    for fault in FaultKind::ALL {
        let f_d = p.factors.defect_order(fault) * SHAFT_HZ;
        // The cage line (~10 Hz) needs a longer record for 2 % resolution.
        let (fs, n) = if fault == FaultKind::Cage {
            (12_800.0, 1 << 17)
        } else {
            (fs, 1 << 16)
        };
        let x = simulate(&p, &Condition::new(fault, stage(2), 0.8), fs, n, 7).unwrap();
        let (df, ses) = squared_envelope_spectrum(&x, fs, 2200.0, 4500.0);
        let (f_peak, height) = peak_in(&ses, df, 0.6 * f_d, 1.4 * f_d);
        let background = median_in(&ses, df, 0.3 * f_d, 3.0 * f_d);
        assert!(
            (f_peak - f_d).abs() <= 0.02 * f_d,
            "{fault}: envelope peak {f_peak:.2} Hz, expected {f_d:.2} Hz ± 2 %"
        );
        assert!(
            height > 20.0 * background,
            "{fault}: peak only {:.1}× background",
            height / background
        );
    }
}

/// Inner-race impacts pass through the load zone once per revolution: ±1x sidebands around
/// BPFI in the envelope spectrum (reference sheet §6.1 stage 3 row: ±fr for inner race).
#[test]
fn inner_race_envelope_has_shaft_sidebands() {
    let p = params();
    let fs = 25_600.0;
    let x = simulate(
        &p,
        &Condition::new(FaultKind::InnerRace, stage(2), 0.8),
        fs,
        1 << 16,
        3,
    )
    .unwrap();
    let (df, ses) = squared_envelope_spectrum(&x, fs, 2200.0, 4500.0);
    let bpfi = p.factors.bpfi * SHAFT_HZ;
    let background = median_in(&ses, df, 20.0, 400.0);
    for f in [bpfi - SHAFT_HZ, bpfi + SHAFT_HZ] {
        let (_, h) = peak_in(&ses, df, f - 1.0, f + 1.0);
        assert!(
            h > 10.0 * background,
            "sideband at {f:.1} Hz only {:.1}× background",
            h / background
        );
    }
    // An outer-race defect (fixed load zone) has no such sideband.
    let x = simulate(
        &p,
        &Condition::new(FaultKind::OuterRace, stage(2), 0.8),
        fs,
        1 << 16,
        3,
    )
    .unwrap();
    let (df, ses) = squared_envelope_spectrum(&x, fs, 2200.0, 4500.0);
    let bpfo = p.factors.bpfo * SHAFT_HZ;
    let (_, carrier) = peak_in(&ses, df, bpfo - 1.0, bpfo + 1.0);
    let (_, side) = peak_in(&ses, df, bpfo + SHAFT_HZ - 1.0, bpfo + SHAFT_HZ + 1.0);
    assert!(
        side < 0.05 * carrier,
        "outer race sideband {:.3} of carrier",
        side / carrier
    );
}

/// Stage 1 adds energy only in the ultrasonic band (above 20 kHz) when the sample rate reaches it,
/// and nothing at 25.6 kHz. Four-stage model: reference sheet §6.1 (common practice, no source).
#[test]
fn stage_one_energy_only_above_20_khz() {
    let p = params();
    let healthy = Condition::healthy();
    let s1 = Condition::new(FaultKind::OuterRace, stage(1), 0.5);
    let fs = 102_400.0;
    let h = simulate(&p, &healthy, fs, 1 << 16, 11).unwrap();
    let x = simulate(&p, &s1, fs, 1 << 16, 11).unwrap();
    let hi = band_energy(&x, fs, 20_000.0, 46_000.0) / band_energy(&h, fs, 20_000.0, 46_000.0);
    let lo = band_energy(&x, fs, 10.0, 20_000.0) / band_energy(&h, fs, 10.0, 20_000.0);
    assert!(hi > 2.0, "ultrasonic band energy rose only {hi:.2}×");
    assert!(
        (lo - 1.0).abs() < 0.02,
        "audible band energy changed by {:.2} %",
        (lo - 1.0) * 100.0
    );

    let fs = 25_600.0;
    let h = simulate(&p, &healthy, fs, 1 << 15, 11).unwrap();
    let x = simulate(&p, &s1, fs, 1 << 15, 11).unwrap();
    let ratio = band_energy(&x, fs, 10.0, 12_800.0) / band_energy(&h, fs, 10.0, 12_800.0);
    assert!(
        (ratio - 1.0).abs() < 1e-6,
        "stage 1 visible at 25.6 kHz: ratio {ratio}"
    );
}

/// Stage 2 rings the bearing resonance (2–4 kHz region), not just the ultrasonic one.
#[test]
fn stage_two_raises_bearing_resonance_band() {
    let p = params();
    let fs = 25_600.0;
    let s1 = simulate(
        &p,
        &Condition::new(FaultKind::OuterRace, stage(1), 0.9),
        fs,
        1 << 15,
        5,
    )
    .unwrap();
    let s2 = simulate(
        &p,
        &Condition::new(FaultKind::OuterRace, stage(2), 0.5),
        fs,
        1 << 15,
        5,
    )
    .unwrap();
    let r = band_energy(&s2, fs, 2500.0, 4000.0) / band_energy(&s1, fs, 2500.0, 4000.0);
    assert!(r > 5.0, "bearing-resonance band rose only {r:.2}×");
}

fn spectrum_f64(x: &[f32]) -> Vec<f64> {
    let xd: Vec<f64> = x.iter().map(|&v| f64::from(v)).collect();
    power_spectrum(&xd, xd.len(), true)
}

/// Stage 3: discrete defect harmonics appear in the ordinary (linear) spectrum, which stage 2
/// does not show; the noise floor rises. Reference sheet §6.1 (common practice, no source).
#[test]
fn stage_three_shows_defect_harmonics_in_linear_spectrum() {
    let p = params();
    let fs = 25_600.0;
    let n = 1 << 16;
    let df = fs / n as f64;
    let bpfo = p.factors.bpfo * SHAFT_HZ;
    let s2 = spectrum_f64(
        &simulate(
            &p,
            &Condition::new(FaultKind::OuterRace, stage(2), 0.5),
            fs,
            n,
            9,
        )
        .unwrap(),
    );
    let s3 = spectrum_f64(
        &simulate(
            &p,
            &Condition::new(FaultKind::OuterRace, stage(3), 0.5),
            fs,
            n,
            9,
        )
        .unwrap(),
    );
    for k in 2..=4 {
        let f = bpfo * f64::from(k);
        let line =
            |s: &[f64]| peak_in(s, df, f * 0.99, f * 1.01).1 / median_in(s, df, f - 40.0, f + 40.0);
        assert!(
            line(&s3) > 30.0,
            "stage 3 harmonic {k} only {:.1}× local median",
            line(&s3)
        );
        assert!(
            line(&s2) < 15.0,
            "stage 2 already shows harmonic {k}: {:.1}×",
            line(&s2)
        );
    }
    let floor = |s: &[f64]| median_in(s, df, 5000.0, 10_000.0);
    assert!(
        floor(&s3) > 2.0 * floor(&s2),
        "stage 3 floor {:.2}× stage 2",
        floor(&s3) / floor(&s2)
    );
}

/// Stage 4: higher broadband floor and higher 1x than stage 2. Reference sheet §6.1 stage 4 row
/// (common practice, no source).
#[test]
fn stage_four_has_higher_floor_and_higher_1x_than_stage_two() {
    let p = params();
    let fs = 25_600.0;
    let n = 1 << 16;
    let df = fs / n as f64;
    for seed in [1, 2] {
        let s2 = spectrum_f64(
            &simulate(
                &p,
                &Condition::new(FaultKind::InnerRace, stage(2), 0.5),
                fs,
                n,
                seed,
            )
            .unwrap(),
        );
        let s4 = spectrum_f64(
            &simulate(
                &p,
                &Condition::new(FaultKind::InnerRace, stage(4), 0.5),
                fs,
                n,
                seed,
            )
            .unwrap(),
        );
        let floor = |s: &[f64]| median_in(s, df, 500.0, 10_000.0);
        let onex = |s: &[f64]| peak_in(s, df, SHAFT_HZ - 0.5, SHAFT_HZ + 0.5).1.sqrt();
        assert!(
            floor(&s4) > 10.0 * floor(&s2),
            "floor ratio {:.1}",
            floor(&s4) / floor(&s2)
        );
        assert!(
            onex(&s4) > 1.5 * onex(&s2),
            "1x ratio {:.2}",
            onex(&s4) / onex(&s2)
        );
    }
}

/// Stage 4 smears the impacts: the envelope line at the defect frequency stands out less than
/// in stage 3 (tones fade into broadband noise; reference sheet §6.1).
#[test]
fn stage_four_envelope_tone_is_less_distinct_than_stage_three() {
    let p = params();
    let fs = 25_600.0;
    let f_d = p.factors.bpfi * SHAFT_HZ;
    let prominence = |s: u8| {
        let x = simulate(
            &p,
            &Condition::new(FaultKind::InnerRace, stage(s), 0.7),
            fs,
            1 << 16,
            21,
        )
        .unwrap();
        let (df, ses) = squared_envelope_spectrum(&x, fs, 2200.0, 4500.0);
        peak_in(&ses, df, 0.98 * f_d, 1.02 * f_d).1 / median_in(&ses, df, 20.0, 500.0)
    };
    let (p3, p4) = (prominence(3), prominence(4));
    assert!(
        p4 < 0.5 * p3,
        "stage 4 prominence {p4:.1} vs stage 3 {p3:.1}"
    );
}

/// Kinematic factors against published values: CWRU drive-end bearing (reference sheet §1.2a,
/// best check 1: BPFO 3.5848, BPFI 5.4152, FTF 0.39828, 2×BSF 4.7135) and the IMS rig with a
/// 15.17° contact angle at 2000 r/min (best check 6: BPFO 236.40, BPFI 296.93, BSF 139.92,
/// FTF 14.78 Hz).
#[test]
fn bearing_factors_match_published_values() {
    let f = BearingFactors::from_geometry(9, 0.3126, 1.537, 0.0);
    assert!((f.bpfo - 3.5848).abs() < 1e-4);
    assert!((f.bpfi - 5.4152).abs() < 1e-4);
    assert!((f.ftf - 0.39828).abs() < 5e-5);
    assert!((f.defect_order(FaultKind::RollingElement) - 4.7135).abs() < 1e-4);
    let fr = 2000.0 / 60.0;
    let g = BearingFactors::from_geometry(16, 0.331, 2.815, 15.17);
    assert!((g.bpfo * fr - 236.40).abs() < 0.05);
    assert!((g.bpfi * fr - 296.93).abs() < 0.05);
    assert!((g.bsf * fr - 139.92).abs() < 0.05);
    assert!((g.ftf * fr - 14.78).abs() < 0.05);
}
