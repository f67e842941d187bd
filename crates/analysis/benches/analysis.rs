//! Speed of the main analysis paths on 65,536 samples (targets in the crate README: full diagnosis < 15 ms).
#![allow(clippy::unwrap_used, reason = "benchmark setup")]

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use spallcast_analysis::envelope::{
    KurtogramLimits, PreparedSignal, fast_kurtogram, squared_envelope_spectrum,
};
use spallcast_analysis::{
    BearingGeometry, DiagnoseOptions, SpectrumEngine, Window, acceleration_spectrum, diagnose_with,
};

const N: usize = 65_536;
const FS: f64 = 12_000.0;

/// Impacts at 105.9 Hz ringing 3 kHz plus a 1x sine and deterministic pseudo-noise.
fn signal() -> Vec<f64> {
    let mut state = 0x1234_5678_u64;
    let mut noise = move || {
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((state >> 11) as f64 / (1_u64 << 53) as f64) - 0.5
    };
    (0..N)
        .map(|i| {
            let t = i as f64 / FS;
            let since = t % (1.0 / 105.9);
            let ring = (-600.0 * since).exp() * (std::f64::consts::TAU * 3000.0 * since).sin();
            ring + 0.3 * (std::f64::consts::TAU * 29.5 * t).sin() + noise()
        })
        .collect()
}

fn benches(c: &mut Criterion) {
    let x = signal();
    let factors = BearingGeometry {
        rolling_elements: 9,
        element_diameter: 0.3126,
        pitch_diameter: 1.537,
        contact_angle_deg: 0.0,
    }
    .factors()
    .unwrap();
    let mut engine = SpectrumEngine::new();
    c.bench_function("spectrum_65536", |b| {
        b.iter(|| {
            acceleration_spectrum(
                &mut engine,
                black_box(&x),
                FS,
                29.5,
                spallcast_analysis::AccelUnit::G,
            )
            .unwrap()
        });
    });
    c.bench_function("rfft_65536_flat_top_amplitude", |b| {
        b.iter(|| {
            let w = engine.window(Window::FlatTop, N);
            let y: Vec<f64> = x.iter().zip(w.iter()).map(|(a, b)| a * b).collect();
            engine.rfft(black_box(&y))
        });
    });
    c.bench_function("envelope_kurtogram_65536", |b| {
        b.iter(|| {
            let sig = PreparedSignal::new(&mut engine, black_box(&x), FS, false).unwrap();
            let limits = KurtogramLimits {
                max_level: 6,
                min_bandwidth_hz: 560.0,
                min_lower_edge_hz: 480.0,
            };
            let kg = fast_kurtogram(&mut engine, &sig, &limits).unwrap();
            squared_envelope_spectrum(&mut engine, &sig, kg.best.lo_hz, kg.best.hi_hz).unwrap()
        });
    });
    let opts = DiagnoseOptions::default();
    c.bench_function("diagnose_65536", |b| {
        b.iter(|| diagnose_with(&mut engine, black_box(&x), FS, 29.5, &factors, &opts).unwrap());
    });
}

criterion_group!(analysis, benches);
criterion_main!(analysis);
