//! `validate` reject reasons and the clipping measure.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::float_cmp,
    reason = "tests: a panic is a failure, and exact float equality is what is being checked"
)]

use std::path::Path;

use spallcast_formats::{
    FormatError, MAX_SAMPLE_RATE_HZ, MIN_SAMPLE_RATE_HZ, Problem, Recording, clipping_fraction,
    validate,
};

fn rec(samples: usize, rate: f64) -> Recording {
    Recording {
        channels: vec![(0..samples).map(|i| (i as f32 * 0.1).sin()).collect()],
        sample_rate_hz: rate,
    }
}

fn problem(r: &Recording) -> Problem {
    match validate(r, Path::new("/data/route/p1.wav")).unwrap_err() {
        FormatError::Invalid { problem, path } => {
            assert_eq!(path, Path::new("/data/route/p1.wav"));
            problem
        }
        other => panic!("unexpected {other}"),
    }
}

#[test]
fn a_normal_recording_passes() {
    validate(&rec(4096, 25_600.0), Path::new("x.wav")).unwrap();
    validate(&rec(256, MIN_SAMPLE_RATE_HZ), Path::new("x.wav")).unwrap();
    validate(&rec(256, MAX_SAMPLE_RATE_HZ), Path::new("x.wav")).unwrap();
}

#[test]
fn empty_recordings_are_rejected() {
    let none = Recording {
        channels: vec![],
        sample_rate_hz: 25_600.0,
    };
    assert_eq!(problem(&none), Problem::Empty);
    assert_eq!(problem(&rec(0, 25_600.0)), Problem::Empty);
}

#[test]
fn sample_rate_outside_range_is_rejected() {
    for rate in [0.0, 99.9, 1_000_000.5, f64::NAN, f64::INFINITY, -25_600.0] {
        assert!(
            matches!(problem(&rec(1024, rate)), Problem::SampleRate { .. }),
            "{rate}"
        );
    }
}

#[test]
fn fewer_than_256_samples_is_rejected() {
    assert_eq!(
        problem(&rec(255, 25_600.0)),
        Problem::TooShort {
            samples: 255,
            min: 256
        }
    );
}

#[test]
fn infinite_sample_is_rejected_with_position() {
    let mut r = rec(1000, 25_600.0);
    r.channels.push(r.channels[0].clone());
    r.channels[1][999] = f32::NEG_INFINITY;
    assert_eq!(
        problem(&r),
        Problem::NonFinite {
            channel: 2,
            index: 999
        }
    );
}

#[test]
fn ragged_channels_are_rejected() {
    let mut r = rec(1000, 25_600.0);
    r.channels.push(vec![0.0; 999]);
    assert!(matches!(
        problem(&r),
        Problem::RaggedChannels { channel: 2, .. }
    ));
}

#[test]
fn error_message_ends_with_the_path() {
    let msg = validate(&rec(10, 25_600.0), Path::new("/data/route/p1.wav"))
        .unwrap_err()
        .to_string();
    assert!(msg.contains("only 10 samples"), "{msg}");
    assert!(msg.ends_with("/data/route/p1.wav"), "{msg}");
}

// Clipping: a saturated input holds the converter's extreme code for several samples in a row
// (common practice, no source).

#[test]
fn clean_sine_has_no_clipping() {
    let r = rec(10_000, 25_600.0);
    assert_eq!(clipping_fraction(&r.channels[0]), 0.0);
    assert_eq!(clipping_fraction(&[]), 0.0);
    assert_eq!(clipping_fraction(&[0.0; 100]), 0.0);
}

#[test]
fn hard_clipped_sine_reports_its_plateau_fraction() {
    // A sine of amplitude 2 clipped at ±1 spends 2/3 of each cycle at the rails
    // (|sin| > 1/2 for 2/3 of the period).
    let n = 100_000;
    let samples: Vec<f32> = (0..n)
        .map(|i| {
            (2.0 * (2.0 * std::f64::consts::PI * i as f64 / 1000.0).sin()).clamp(-1.0, 1.0) as f32
        })
        .collect();
    let f = clipping_fraction(&samples);
    assert!((f - 2.0 / 3.0).abs() < 0.005, "{f}");
}

#[test]
fn runs_shorter_than_three_do_not_count() {
    let mut s = vec![0.1_f32; 100];
    s[10] = 1.0;
    s[11] = 1.0; // run of 2 at the peak: not a plateau
    assert_eq!(clipping_fraction(&s), 0.0);
    s[12] = 1.0; // run of 3: counts
    assert!((clipping_fraction(&s) - 0.03).abs() < 1e-12);
    s[50] = -1.0;
    s[51] = -1.0;
    s[52] = -1.0;
    s[53] = -1.0; // negative rail too
    assert!((clipping_fraction(&s) - 0.07).abs() < 1e-12);
}

#[test]
fn alternating_rails_are_not_a_plateau() {
    let s: Vec<f32> = (0..100)
        .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
        .collect();
    assert_eq!(clipping_fraction(&s), 0.0);
}
