//! Tests of the one-call diagnosis.
use super::*;
use crate::kinematics::BearingGeometry;
use crate::spectrum::STANDARD_GRAVITY;
use crate::testutil::{Gauss, impulse_train};

fn cwru_de() -> FaultFactors {
    // REFERENCES §1.2a (CWRU drive-end geometry).
    BearingGeometry {
        rolling_elements: 9,
        element_diameter: 0.3126,
        pitch_diameter: 1.537,
        contact_angle_deg: 0.0,
    }
    .factors()
    .unwrap()
}

// Synthetic outer-race impacts (REFERENCES check 17 construction) at BPFO of 1772 r/min are named
// "outer race"; the JSON document carries the contract's keys.
#[test]
fn synthetic_outer_race_is_named() {
    let f = cwru_de();
    let shaft = 1772.0 / 60.0;
    let (x, fs) = impulse_train(f.bpfo * shaft, 3000.0, 12_000.0, 5.0, 2.0, 21);
    let d = diagnose(&x, fs, shaft, &f, &DiagnoseOptions::default()).unwrap();
    assert_eq!(d.diagnosis, "outer race", "{:?}", d.findings);
    assert!(d.findings[0].harmonics >= 2);
    let v = serde_json::to_value(&d).unwrap();
    for k in ["ftf", "bsf", "bpfo", "bpfi"] {
        assert!(v["fault_frequencies_hz"][k].is_number());
    }
    for k in [
        "accel_rms_g",
        "accel_peak_g",
        "crest_factor",
        "kurtosis",
        "velocity_rms_mm_s",
    ] {
        assert!(v["indicators"][k].is_number(), "{k}");
    }
    assert!(v["indicators"]["iso20816_zone"].is_string());
    assert_eq!(v["demodulation_band_hz"].as_array().unwrap().len(), 2);
    assert!(v["findings"][0]["score_db"].is_number() && v["findings"][0]["fault"].is_string());
    let flat = stage_indicators_flat(&d);
    assert!(flat.windows(2).all(|w| w[0].0 < w[1].0));
    assert!(
        flat.iter()
            .any(|(n, _)| n == "band_bearing_resonance_rms_g")
    );
    assert!(
        !flat.iter().any(|(n, _)| n == "band_ultrasonic_rms_g"),
        "12 kHz cannot show the ultrasonic band"
    );
}

// A user band finds an inner-race train (impacts at BPFI, amplitude modulated at 1x). Pre-whitening is
// only checked to run: it removes strictly periodic lines, which a jitter-free synthetic train is.
#[test]
fn synthetic_inner_race_with_user_band_and_prewhitening() {
    let f = cwru_de();
    let shaft = 30.0;
    let (mut x, fs) = impulse_train(f.bpfi * shaft, 3500.0, 12_000.0, 5.0, 1.5, 5);
    for (i, v) in x.iter_mut().enumerate() {
        *v *= 1.0 + 0.5 * (std::f64::consts::TAU * shaft * i as f64 / fs).cos();
    }
    let opts = DiagnoseOptions {
        demodulation_band_hz: Some((2500.0, 4500.0)),
        ..DiagnoseOptions::default()
    };
    let d = diagnose(&x, fs, shaft, &f, &opts).unwrap();
    assert_eq!(d.diagnosis, "inner race", "{:?}", d.findings);
    assert_eq!(d.demodulation_band_source, "user");
    let white = diagnose(
        &x,
        fs,
        shaft,
        &f,
        &DiagnoseOptions {
            prewhiten: true,
            ..opts
        },
    )
    .unwrap();
    assert!(white.prewhitened && !d.prewhitened);
}

// Gaussian noise (a healthy-baseline stand-in) is "none" for several seeds: the decision threshold
// keeps pure noise below the call.
#[test]
fn gaussian_noise_is_none() {
    let f = cwru_de();
    for seed in 1..=6 {
        let mut g = Gauss::new(seed);
        let x: Vec<f64> = (0..60_000).map(|_| 0.1 * g.next()).collect();
        let d = diagnose(&x, 12_000.0, 29.5, &f, &DiagnoseOptions::default()).unwrap();
        assert_eq!(d.diagnosis, "none", "seed {seed}: {:?}", d.findings);
        // Gaussian kurtosis is 3 (Pearson), crest factor of 60k Gaussian samples about 4–5.
        assert!((d.indicators.kurtosis - 3.0).abs() < 0.1);
    }
}

// Analytic: a 1x velocity sine of 4 mm/s RMS at 25 Hz reads 4 mm/s overall and at 1x, zone C for
// group 2 rigid (ISO 10816-3 Table A.2: 2.8 ≤ v < 4.5).
#[test]
fn velocity_sine_gives_iso_zone() {
    let fs = 5000.0;
    let fr = 25.0;
    let v_peak_mm_s = 4.0 * std::f64::consts::SQRT_2;
    let a_peak_g = v_peak_mm_s * std::f64::consts::TAU * fr / (STANDARD_GRAVITY * 1000.0);
    let x: Vec<f64> = (0..50_000)
        .map(|i| a_peak_g * (std::f64::consts::TAU * fr * i as f64 / fs).cos())
        .collect();
    let d = diagnose(&x, fs, fr, &cwru_de(), &DiagnoseOptions::default()).unwrap();
    assert!(
        (d.indicators.velocity_rms_mm_s - 4.0).abs() < 0.04,
        "{}",
        d.indicators.velocity_rms_mm_s
    );
    assert!((d.stage_indicators.one_x_velocity_rms_mm_s - 4.0).abs() < 0.04);
    assert_eq!(d.indicators.iso20816_zone, Zone::C);
    // Analytic: a sine's impulse factor is π/2 (mean of the rectified sine 2/π of its peak); the
    // stage indicators carry it under its stored name.
    assert!((d.stage_indicators.impulse_factor - std::f64::consts::FRAC_PI_2).abs() < 1e-3);
    let stage = crate::stage::ReadingIndicators::from_diagnosis(&d, crate::stage::ToneUse::Use);
    let stored = stage.to_scalars()[crate::stage::keys::IMPULSE_FACTOR];
    assert!((stored - d.stage_indicators.impulse_factor).abs() < 1e-12);
    let inch = DiagnoseOptions {
        units: DisplayUnits {
            velocity: VelocityUnit::InPerS,
            acceleration: AccelUnit::MetresPerSecond2,
        },
        ..DiagnoseOptions::default()
    };
    let d2 = diagnose(&x, fs, fr, &cwru_de(), &inch).unwrap();
    assert!((d2.display.velocity_rms * 25.4 - d.indicators.velocity_rms_mm_s).abs() < 1e-9);
    assert!((d2.display.accel_rms - d.indicators.accel_rms_g * STANDARD_GRAVITY).abs() < 1e-12);
}

#[test]
fn bad_inputs_are_errors() {
    let f = cwru_de();
    let x = vec![0.0; 4096];
    let o = DiagnoseOptions::default();
    assert!(matches!(
        diagnose(&x[..100], 1000.0, 10.0, &f, &o),
        Err(AnalysisError::TooShort { .. })
    ));
    assert!(matches!(
        diagnose(&x, 0.0, 10.0, &f, &o),
        Err(AnalysisError::BadSampleRate(_))
    ));
    assert!(matches!(
        diagnose(&x, 1000.0, 600.0, &f, &o),
        Err(AnalysisError::BadShaftSpeed(_))
    ));
    let bad = FaultFactors { bpfo: -1.0, ..f };
    assert!(matches!(
        diagnose(&x, 1000.0, 10.0, &bad, &o),
        Err(AnalysisError::BadFactors(_))
    ));
    let mut y = x.clone();
    y[7] = f64::INFINITY;
    assert!(matches!(
        diagnose(&y, 1000.0, 10.0, &f, &o),
        Err(AnalysisError::NonFinite { index: 7 })
    ));
    let band = DiagnoseOptions {
        demodulation_band_hz: Some((400.0, 900.0)),
        ..o
    };
    assert!(matches!(
        diagnose(&x, 1000.0, 10.0, &f, &band),
        Err(AnalysisError::BadBand { .. })
    ));
}

// Plot spectra: a 0.5 g sine at 120 Hz reads 0.5 g peak (flat-top), and its velocity RMS line is
// 0.5·9806.65/(2π·120)/√2 mm/s.
#[test]
fn plot_spectra_read_true() {
    let fs = 6000.0;
    let x: Vec<f64> = (0..60_000)
        .map(|i| 0.5 * (std::f64::consts::TAU * 120.0 * i as f64 / fs).sin())
        .collect();
    let mut e = SpectrumEngine::new();
    let a = acceleration_spectrum(&mut e, &x, fs, 25.0, AccelUnit::G).unwrap();
    let top = a.values.iter().copied().fold(0.0, f64::max);
    assert!((20.0 * (top / 0.5).log10()).abs() < 0.1);
    let v = velocity_spectrum(&mut e, &x, fs, 25.0, VelocityUnit::MmPerS).unwrap();
    let top = v.values.iter().copied().fold(0.0, f64::max);
    let want = 0.5 * STANDARD_GRAVITY * 1000.0
        / (std::f64::consts::TAU * 120.0)
        / std::f64::consts::SQRT_2;
    assert!((20.0 * (top / want).log10()).abs() < 0.1);
    let freqs = cwru_de().at_shaft_hz(25.0);
    let (env, band) = envelope_spectrum(&mut e, &x, fs, &freqs, None, false).unwrap();
    assert!(band[1] > band[0] && env.units.quantity == Quantity::SquaredEnvelopeG2);
}

// Clipped and silent recordings never get a location (rules::CLIPPED_FRACTION). The clipped case is the
// synthetic outer-race train that is named above, flattened at 30 % of its peak.
#[test]
fn clipped_or_silent_recordings_get_no_location() {
    let f = cwru_de();
    let shaft = 1772.0 / 60.0;
    let (x, fs) = impulse_train(f.bpfo * shaft, 3000.0, 12_000.0, 5.0, 2.0, 21);
    let peak = x.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    let clipped: Vec<f64> = x.iter().map(|v| v.clamp(-0.3 * peak, 0.3 * peak)).collect();
    let d = diagnose(&clipped, fs, shaft, &f, &DiagnoseOptions::default()).unwrap();
    assert_eq!(d.diagnosis, "none", "{}", d.location.reason);
    assert!(
        d.location.reason.contains("clipped"),
        "{}",
        d.location.reason
    );
    let silent = vec![0.0; 8192];
    let d = diagnose(&silent, fs, shaft, &f, &DiagnoseOptions::default()).unwrap();
    assert_eq!(d.diagnosis, "none");
    assert!(
        d.location.reason.contains("silent"),
        "{}",
        d.location.reason
    );
}

// Every location threshold is in the table with its source.
#[test]
fn location_rules_are_documented() {
    for r in rules::LOCATION_RULES {
        assert!(
            !r.source.is_empty() && !r.meaning.is_empty() && r.value.is_finite(),
            "{}",
            r.id
        );
    }
}

fn scored(kind: FaultKind, rate_hz: f64, score_db: f64, harmonic_db: Vec<f64>) -> Finding {
    Finding {
        fault: kind.label().to_owned(),
        kind,
        defect_rate_hz: rate_hz,
        score_db,
        harmonics: harmonic_db.iter().filter(|&&h| h >= 10.0).count() as u32,
        sidebands: 2,
        matched_hz: rate_hz,
        harmonic_db,
        linear_harmonics: 0,
        linear_sidebands: 0,
    }
}

// Kinematics (REFERENCES §1.1 formulas): 14 rollers of 15 mm on a 92 mm pitch give BPFO = 5.86x and
// 2xBSF = 5.97x, 1.9 % apart, inside the two combs' 2 % slip reach, so the two families read the same
// lines and only FTF modulation can tell a rolling element (carried through the load zone at cage
// speed) from the outer race (fixed in the load zone). On the CWRU drive-end
// geometry the two rates are 31 % apart and the rule does not apply.
#[test]
fn coinciding_outer_race_and_element_combs_are_told_apart_by_ftf_modulation() {
    let roller = BearingGeometry {
        rolling_elements: 14,
        element_diameter: 15.0,
        pitch_diameter: 92.0,
        contact_angle_deg: 0.0,
    }
    .factors()
    .unwrap();
    let fr = 29.65;
    let (bpfo, two_bsf, ftf) = (roller.bpfo * fr, 2.0 * roller.bsf * fr, roller.ftf * fr);
    assert!(locate::combs_coincide(bpfo, two_bsf));
    let cw = cwru_de();
    assert!(!locate::combs_coincide(cw.bpfo, 2.0 * cw.bsf));
    let comb = vec![0.0, 19.0, 16.0, 12.0, 10.0];
    let with_ftf = |ftf_line_db: f64| {
        vec![
            scored(FaultKind::OuterRace, bpfo, 17.6, comb.clone()),
            scored(FaultKind::RollingElement, two_bsf, 17.6, comb.clone()),
            scored(
                FaultKind::Cage,
                ftf,
                14.0,
                vec![ftf_line_db, 9.0, 4.0, 2.0, 1.0],
            ),
            scored(
                FaultKind::InnerRace,
                roller.bpfi * fr,
                6.0,
                vec![5.0, 4.0, 3.0],
            ),
        ]
    };
    let call = locate::locate(
        &with_ftf(30.0),
        None,
        Some(locate::Corroboration {
            agreeing: 3,
            present: 3,
        }),
    );
    assert_eq!(call.diagnosis, "rolling element", "{}", call.reason);
    assert!(call.confidence <= 0.8);
    assert!(call.reason.contains("FTF line"), "{}", call.reason);
    // No FTF line at all: not modulated at cage speed, a defect fixed in the load zone.
    let call = locate::locate(
        &with_ftf(3.0),
        None,
        Some(locate::Corroboration {
            agreeing: 3,
            present: 3,
        }),
    );
    assert_eq!(call.diagnosis, "outer race", "{}", call.reason);
    assert!(call.reason.contains("no FTF line"), "{}", call.reason);
    // A weak FTF line (a line, but under the present level): the honest call is "unclear".
    let call = locate::locate(
        &with_ftf(11.0),
        None,
        Some(locate::Corroboration {
            agreeing: 3,
            present: 3,
        }),
    );
    assert_eq!(call.diagnosis, "unclear", "{}", call.reason);
    assert!(call.candidates.contains(&"outer race".to_owned()));
    assert!(call.candidates.contains(&"rolling element".to_owned()));
    // One comb fitting clearly better (by the margin) wins as usual.
    let mut clear = with_ftf(30.0);
    clear[0].score_db = 24.0;
    let call = locate::locate(
        &clear,
        None,
        Some(locate::Corroboration {
            agreeing: 3,
            present: 3,
        }),
    );
    assert_eq!(call.diagnosis, "outer race", "{}", call.reason);
}

// The corroboration share: a family that leads in the chosen band but not in most of the other bands
// where a family shows is "unclear" with both candidates named (CWRU ball records 118/222 read 9 of
// 13; right calls read 13 of 14 or more; rules table, `corroborating_share`).
#[test]
fn mixed_bands_make_the_location_unclear() {
    let cw = cwru_de();
    let fr = 29.95;
    let findings = vec![
        scored(
            FaultKind::InnerRace,
            cw.bpfi * fr,
            28.0,
            vec![30.0, 27.0, 24.0, 20.0],
        ),
        scored(
            FaultKind::OuterRace,
            cw.bpfo * fr,
            15.0,
            vec![16.0, 14.0, 9.0],
        ),
        scored(
            FaultKind::RollingElement,
            2.0 * cw.bsf * fr,
            8.0,
            vec![9.0, 7.0],
        ),
        scored(FaultKind::Cage, cw.ftf * fr, 6.0, vec![6.0, 3.0]),
    ];
    let agree = |agreeing, present| {
        locate::locate(
            &findings,
            None,
            Some(locate::Corroboration { agreeing, present }),
        )
    };
    let call = agree(9, 13);
    assert_eq!(call.diagnosis, "unclear", "{}", call.reason);
    assert!(call.candidates.contains(&"inner race".to_owned()));
    assert!(call.reason.contains("9 of the 13"), "{}", call.reason);
    let call = agree(13, 14);
    assert_eq!(call.diagnosis, "inner race", "{}", call.reason);
    // A user band (no corroboration) is judged on its own findings.
    let call = locate::locate(&findings, None, None);
    assert_eq!(call.diagnosis, "inner race", "{}", call.reason);
}

// An FTF comb with a deep minimum is the load-zone window of a damaged element, not a cage defect
// (rules table, `cage_comb_notch_db`): CWRU ball record 187 reads [22, 13, 21, 16, 18] dB; a cage
// impulse train on the simulator reads [28, 27, 22, 20, 20].
#[test]
fn an_ftf_comb_with_a_notch_is_not_called_cage() {
    let cw = cwru_de();
    let fr = 29.15;
    let with_cage = |comb: Vec<f64>| {
        vec![
            scored(FaultKind::Cage, cw.ftf * fr, 21.6, comb),
            scored(
                FaultKind::RollingElement,
                2.0 * cw.bsf * fr,
                9.5,
                vec![9.0, 10.0, 8.0],
            ),
            scored(FaultKind::InnerRace, cw.bpfi * fr, 7.0, vec![6.0, 5.0, 8.0]),
            scored(FaultKind::OuterRace, cw.bpfo * fr, 4.0, vec![5.0, 3.0, 3.0]),
        ]
    };
    let c = Some(locate::Corroboration {
        agreeing: 12,
        present: 13,
    });
    let call = locate::locate(&with_cage(vec![21.9, 13.1, 21.4, 15.6, 18.1]), None, c);
    assert_eq!(call.diagnosis, "unclear", "{}", call.reason);
    assert!(call.candidates.contains(&"rolling element".to_owned()));
    assert!(call.reason.contains("load-zone"), "{}", call.reason);
    let call = locate::locate(&with_cage(vec![28.0, 27.0, 22.0, 20.0, 20.0]), None, c);
    assert_eq!(call.diagnosis, "cage", "{}", call.reason);
    assert!((locate::comb_notch_db(&[21.9, 13.1, 21.4, 15.6, 18.1]) - 8.55).abs() < 1e-9);
    assert!(locate::comb_notch_db(&[20.0, 21.0]).abs() < 1e-12);
}

// The inner race and the rolling elements on combs that share lines (rules table,
// `inner_element_sidebands`): BPFI on the 2nd harmonic of 2xBSF, as on simulator reading 118 (2xBSF
// 71.1 Hz, BPFI 142.7 Hz). Within the margin, the family showing its own sidebands is named.
#[test]
fn shared_inner_and_element_lines_are_told_apart_by_sidebands() {
    assert!(locate::inner_element_share_lines(71.1, 142.7));
    assert!(locate::inner_element_share_lines(380.4, 376.7));
    let cw = cwru_de();
    assert!(!locate::inner_element_share_lines(cw.bpfi, 2.0 * cw.bsf));
    let with = |element_sidebands: u32, inner_sidebands: u32| {
        let mut element = scored(
            FaultKind::RollingElement,
            71.1,
            32.0,
            vec![33.0, 31.0, 18.0],
        );
        element.sidebands = element_sidebands;
        let mut inner = scored(FaultKind::InnerRace, 142.7, 29.0, vec![31.0, 26.0, 24.0]);
        inner.sidebands = inner_sidebands;
        vec![
            element,
            inner,
            scored(FaultKind::Cage, 7.9, 13.0, vec![20.0, 6.0, 5.0]),
            scored(FaultKind::OuterRace, 79.2, 12.0, vec![18.0, 5.0, 3.0]),
        ]
    };
    let c = Some(locate::Corroboration {
        agreeing: 13,
        present: 13,
    });
    let call = locate::locate(&with(8, 0), None, c);
    assert_eq!(call.diagnosis, "rolling element", "{}", call.reason);
    assert!(call.confidence <= 0.8);
    assert!(call.reason.contains("share lines"), "{}", call.reason);
    let call = locate::locate(&with(0, 5), None, c);
    assert_eq!(call.diagnosis, "inner race", "{}", call.reason);
    // Both modulated, or neither: the lines and the margin decide, and 3 dB is not enough.
    for (e, i) in [(4, 2), (0, 0)] {
        let call = locate::locate(&with(e, i), None, c);
        assert_eq!(call.diagnosis, "unclear", "{e}/{i}: {}", call.reason);
    }
}
