//! `spallcast diagnose` end to end on WAV files the test synthesises.
#![allow(
    clippy::unwrap_used,
    reason = "test code: a failed unwrap is a failed test"
)]

use std::path::Path;
use std::process::Command;

const FS: u32 = 12_000;

/// Outer-race-like impacts: BPFO of the CWRU drive-end bearing (REFERENCES §1.2a, 3.5848 orders) at
/// 1800 r/min, each ringing a 3 kHz resonance, plus deterministic pseudo-noise.
fn impacts(secs: f64) -> Vec<f64> {
    let bpfo = 3.5848 * 30.0;
    let mut state = 99_u64;
    let n = (f64::from(FS) * secs) as usize;
    (0..n)
        .map(|i| {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            let noise = ((state >> 11) as f64 / (1_u64 << 53) as f64) - 0.5;
            let t = i as f64 / f64::from(FS);
            let since = t % (1.0 / bpfo);
            0.3 * (-500.0 * since).exp() * (std::f64::consts::TAU * 3000.0 * since).sin()
                + 0.1 * noise
        })
        .collect()
}

fn write_stereo_i16(path: &Path, second_channel: &[f64]) {
    let spec = hound::WavSpec {
        channels: 2,
        sample_rate: FS,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut w = hound::WavWriter::create(path, spec).unwrap();
    for &v in second_channel {
        w.write_sample(0_i16).unwrap();
        w.write_sample((v * 32767.0).round() as i16).unwrap();
    }
    w.finalize().unwrap();
}

fn spallcast() -> Command {
    Command::new(env!("CARGO_BIN_EXE_spallcast"))
}

#[test]
fn diagnoses_synthetic_outer_race_wav_as_json_and_report() {
    let dir = tempfile::tempdir().unwrap();
    let wav = dir.path().join("or.wav");
    write_stereo_i16(&wav, &impacts(4.0));
    let out = spallcast()
        .args([
            "diagnose",
            wav.to_str().unwrap(),
            "--rpm",
            "1800",
            "--geometry",
            "n=9,d=0.3126,pitch=1.537,angle=0",
            "--channel",
            "2",
            "--json",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["diagnosis"], "outer race");
    assert!((v["fault_frequencies_hz"]["bpfo"].as_f64().unwrap() - 107.54).abs() < 0.05);
    for key in [
        "accel_rms_g",
        "accel_peak_g",
        "crest_factor",
        "kurtosis",
        "velocity_rms_mm_s",
        "iso20816_zone",
    ] {
        assert!(!v["indicators"][key].is_null(), "missing indicators.{key}");
    }
    assert_eq!(v["demodulation_band_hz"].as_array().unwrap().len(), 2);

    // Channel 1 is silent: nothing to find, and the factors form is accepted.
    let out = spallcast()
        .args([
            "diagnose",
            wav.to_str().unwrap(),
            "--rpm",
            "1800",
            "--factors",
            "ftf=0.3983,bsf=2.3567,bpfo=3.5848,bpfi=5.4152",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("Diagnosis  none"), "{text}");
    assert!(text.contains("lock out"));
}

#[test]
fn bad_inputs_fail_with_one_line_error() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("bad.wav");
    std::fs::write(&bad, b"RIFF not really a wave file").unwrap();
    let geometry = ["--geometry", "n=9,d=0.3126,pitch=1.537,angle=0"];
    let cases: Vec<Vec<String>> = vec![
        vec![bad.to_str().unwrap().into(), "--rpm".into(), "1800".into()],
        vec![
            dir.path().join("missing.wav").to_str().unwrap().into(),
            "--rpm".into(),
            "1800".into(),
        ],
        vec![bad.to_str().unwrap().into(), "--rpm".into(), "-5".into()],
    ];
    for mut args in cases {
        args.extend(geometry.iter().map(|s| (*s).to_owned()));
        let out = spallcast().arg("diagnose").args(&args).output().unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(!out.status.success(), "{args:?}");
        assert!(!err.contains("panicked"), "{err}");
        assert_eq!(err.trim().lines().count(), 1, "{err}");
    }
    let wav = dir.path().join("ok.wav");
    write_stereo_i16(&wav, &impacts(1.0));
    for geometry in [
        "n=9,d=2,pitch=1.5,angle=0",
        "n=9,d=0.3",
        "n=x,d=0.3,pitch=1.5,angle=0",
    ] {
        let out = spallcast()
            .args([
                "diagnose",
                wav.to_str().unwrap(),
                "--rpm",
                "1800",
                "--geometry",
                geometry,
            ])
            .output()
            .unwrap();
        assert!(!out.status.success());
        assert!(String::from_utf8_lossy(&out.stderr).contains("--geometry"));
    }
    let out = spallcast()
        .args([
            "diagnose",
            wav.to_str().unwrap(),
            "--rpm",
            "1800",
            "--channel",
            "3",
            "--geometry",
            "n=9,d=0.3126,pitch=1.537,angle=0",
        ])
        .output()
        .unwrap();
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("channel"));
}
