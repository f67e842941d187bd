//! Golden vectors from numpy/scipy (`tests/golden/generate_golden.py`, committed; regenerate with numpy and
//! scipy installed). Source of truth: `numpy.fft.rfft`, `scipy.signal.get_window`, `scipy.signal.welch`.
#![allow(
    clippy::unwrap_used,
    reason = "test code: a failed unwrap is a failed test"
)]

use serde_json::Value;
use spallcast_analysis::Window;
use spallcast_analysis::spectrum::{PsdScaling, SpectrumEngine, WelchParams};

fn golden() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../../tests/golden/spectrum_golden.json"
    );
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn vec_of(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn assert_close(a: &[f64], b: &[f64], rel: f64, what: &str) {
    assert_eq!(a.len(), b.len(), "{what}: length");
    let scale = b.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    for (i, (x, y)) in a.iter().zip(b).enumerate() {
        assert!((x - y).abs() <= rel * scale, "{what}[{i}]: {x} vs {y}");
    }
}

// numpy.fft.rfft of a 2048-sample signal.
#[test]
fn rfft_matches_numpy() {
    let g = golden();
    let x = vec_of(&g["x"]);
    let spec = SpectrumEngine::new().rfft(&x);
    let re: Vec<f64> = spec.iter().map(|c| c.re).collect();
    let im: Vec<f64> = spec.iter().map(|c| c.im).collect();
    assert_close(&re, &vec_of(&g["rfft_re"]), 1e-12, "re");
    assert_close(&im, &vec_of(&g["rfft_im"]), 1e-12, "im");
}

// scipy.signal.get_window('hann'|'flattop', 64) (periodic).
#[test]
fn windows_match_scipy() {
    let g = golden();
    assert_close(
        &Window::Hann.coefficients(64),
        &vec_of(&g["windows"]["hann_64"]),
        1e-12,
        "hann",
    );
    assert_close(
        &Window::FlatTop.coefficients(64),
        &vec_of(&g["windows"]["flattop_64"]),
        1e-12,
        "flattop",
    );
}

// scipy.signal.welch with several windows, overlaps and both scalings.
#[test]
fn welch_matches_scipy() {
    let g = golden();
    let x = vec_of(&g["x"]);
    let fs = g["fs"].as_f64().unwrap();
    let mut engine = SpectrumEngine::new();
    let cases = g["welch"].as_array().unwrap();
    assert_eq!(cases.len(), 4);
    for c in cases {
        let window = match c["window"].as_str().unwrap() {
            "hann" => Window::Hann,
            "flattop" => Window::FlatTop,
            "boxcar" => Window::Rectangular,
            other => panic!("unknown window {other}"),
        };
        let scaling = if c["scaling"] == "density" {
            PsdScaling::Density
        } else {
            PsdScaling::Spectrum
        };
        let p = WelchParams {
            segment_len: c["nperseg"].as_u64().unwrap() as usize,
            overlap: c["noverlap"].as_u64().unwrap() as usize,
            window,
            detrend_mean: true,
            scaling,
        };
        let ps = engine.welch(&x, fs, &p).unwrap();
        assert!((ps.freq_step_hz - c["df"].as_f64().unwrap()).abs() < 1e-12);
        assert_close(
            &ps.values,
            &vec_of(&c["p"]),
            1e-10,
            &format!("{c:?}").chars().take(80).collect::<String>(),
        );
    }
}
