//! CPU time of one frame of the spectra view overlaying 12 spectra of 32,768 lines each (layout plus
//! tessellation, headless through `egui::Context::run_ui`), and of computing one reading's spectra.
//!
//! A plain bench binary (`harness = false`): `cargo bench -p spallcast-app --bench spectra_frame`. It
//! prints the median, mean and slowest of repeated runs; the targets are a frame under 8 ms and a
//! bearing opened (spectra of three readings) under 100 ms.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a broken fixture should fail loudly"
)]

use std::collections::BTreeMap;
use std::hint::black_box;
use std::sync::Arc;
use std::time::{Duration, Instant};

use chrono::{DateTime, Duration as Days};
use eframe::egui;
use spallcast_analysis::{FaultFactors, SpectrumEngine};
use spallcast_app::cache::{ReadingCache, Slot};
use spallcast_app::model::{
    BearingHistory, BearingKey, ReadingSpectra, ReadingSummary, Spectrum, Waveform,
};
use spallcast_app::panels::spectra_ui::SpectraPanel;
use spallcast_app::settings::SpectraSettings;
use spallcast_app::store_backend::compute_spectra;

const LINES: usize = 32_768;
const MONTHS: usize = 12;

fn spectrum(seed: usize) -> Spectrum {
    let amplitude = (0..LINES)
        .map(|i| {
            let x = (i * 7919 + seed * 104_729) % 10_007;
            let floor = 1e-4 * (1.0 + x as f32 / 10_007.0);
            if i % 181 == 0 { floor + 0.05 } else { floor }
        })
        .collect();
    Spectrum {
        df_hz: 0.390_625,
        amplitude,
    }
}

fn fixture() -> (BearingHistory, ReadingCache) {
    let start = DateTime::parse_from_rfc3339("2025-01-14T09:00:00+00:00").unwrap_or_default();
    let mut readings = Vec::new();
    let mut cache = ReadingCache::default();
    for m in 0..MONTHS {
        let id = m as i64 + 1;
        readings.push(ReadingSummary {
            id,
            point: "B-P1-DE-H".to_owned(),
            taken_at: start + Days::days(30 * m as i64),
            rpm: 1480.0,
            scalars: BTreeMap::new(),
            stage: None,
            damage_db: None,
            baseline: false,
            replace_by: None,
            end_of_life: None,
            end_of_life_is_prior: false,
        });
        let s = ReadingSpectra {
            reading_id: id,
            shaft_hz: 1480.0 / 60.0,
            acceleration: spectrum(m),
            velocity: spectrum(m + 100),
            envelope: spectrum(m + 200),
            envelope_band_hz: None,
        };
        cache.spectra.insert(id, Slot::Ready(Arc::new(s)));
    }
    let history = BearingHistory {
        key: BearingKey {
            machine_id: "B-P1".to_owned(),
            position: "DE".to_owned(),
        },
        factors: Some(FaultFactors {
            ftf: 0.398,
            bsf: 2.357,
            bpfo: 3.585,
            bpfi: 5.415,
        }),
        iso_group: spallcast_analysis::MachineGroup::Medium,
        iso_support: spallcast_analysis::Support::Rigid,
        lubrication: spallcast_analysis::forecast::Lubrication::Grease,
        readings,
        lives_started: Vec::new(),
        stage_call: None,
        forecast: None,
        notes: Vec::new(),
    };
    (history, cache)
}

fn frame_input() -> egui::RawInput {
    egui::RawInput {
        screen_rect: Some(egui::Rect::from_min_size(
            egui::Pos2::ZERO,
            egui::vec2(1400.0, 900.0),
        )),
        ..Default::default()
    }
}

fn bench_frame() {
    let (history, cache) = fixture();
    let ctx = egui::Context::default();
    let mut panel = SpectraPanel::default();
    panel.sync_bearing(&history);
    panel.selected = history.readings.iter().map(|r| r.id).collect();
    let mut settings = SpectraSettings::default();
    settings.markers.rolling.sidebands = true;
    let frame = |ctx: &egui::Context, panel: &mut SpectraPanel, settings: &mut SpectraSettings| {
        let output = ctx.run_ui(frame_input(), |ui| {
            egui::CentralPanel::default().show(ui, |ui| {
                let mut actions = Vec::new();
                panel.ui(ui, settings, &history, &cache, &mut actions);
                black_box(actions);
            });
        });
        let clipped = ctx.tessellate(output.shapes, output.pixels_per_point);
        black_box(clipped);
    };
    // Warm up fonts and plot memory, then check the overlay really holds 12 curves.
    for _ in 0..3 {
        frame(&ctx, &mut panel, &mut settings);
    }
    assert_eq!(panel.summary.drawn.len(), MONTHS, "all months drawn");
    eprintln!(
        "points plotted per frame after decimation: {}",
        panel.summary.plotted_points
    );
    report(
        "spectra view frame, 12 x 32,768 lines overlaid, linear",
        60,
        || frame(&ctx, &mut panel, &mut settings),
    );
    settings.layout = spallcast_app::settings::Layout::Stacked;
    settings.scale = spallcast_app::settings::AmplitudeScale::Log;
    report(
        "spectra view frame, 12 x 32,768 lines stacked, log",
        60,
        || frame(&ctx, &mut panel, &mut settings),
    );
}

fn bench_compute() {
    // One reading as a route collects it: 2.56 s at 25.6 kHz (65,536 samples), 1480 r/min.
    let fs = 25_600.0;
    let samples: Vec<f32> = (0..65_536)
        .map(|i| {
            let t = i as f64 / fs;
            let x = 0.05 * (std::f64::consts::TAU * 24.67 * t).sin()
                + 0.02
                    * (std::f64::consts::TAU * 3_100.0 * t).sin()
                    * (std::f64::consts::TAU * 88.4 * t).sin().max(0.0)
                + 0.005 * ((i * 7919 % 1000) as f64 / 1000.0 - 0.5);
            x as f32
        })
        .collect();
    let wave = Waveform {
        reading_id: 1,
        samples_g: samples,
        sample_rate_hz: fs,
        shaft_hz: 1480.0 / 60.0,
        factors: Some(FaultFactors {
            ftf: 0.398,
            bsf: 2.357,
            bpfo: 3.585,
            bpfi: 5.415,
        }),
    };
    let mut engine = SpectrumEngine::new();
    report(
        "spectra of one reading (65,536 samples: acceleration, velocity, envelope)",
        10,
        || {
            black_box(
                compute_spectra(&mut engine, black_box(&wave))
                    .map_or(0, |s| s.acceleration.amplitude.len()),
            );
        },
    );
}

/// Runs `f` `runs` times after one warm-up run and prints the median, mean and slowest wall time (the
/// work is single-threaded, so wall time is its CPU time on an idle machine).
fn report(name: &str, runs: usize, mut f: impl FnMut()) {
    f();
    let mut times: Vec<Duration> = (0..runs)
        .map(|_| {
            let started = Instant::now();
            f();
            started.elapsed()
        })
        .collect();
    times.sort_unstable();
    let ms = |d: Duration| d.as_secs_f64() * 1000.0;
    let mean = times.iter().map(|d| ms(*d)).sum::<f64>() / times.len().max(1) as f64;
    let median = times.get(times.len() / 2).map_or(f64::NAN, |d| ms(*d));
    let slowest = times.last().map_or(f64::NAN, |d| ms(*d));
    println!(
        "{name}: median {median:.2} ms, mean {mean:.2} ms, slowest {slowest:.2} ms over {runs} runs"
    );
}

fn main() {
    bench_frame();
    bench_compute();
    bench_open_bearing();
}

/// Opening a bearing on the demo plant: the data thread's work before the views can draw it (its
/// history, stage call and forecast from the database), then the spectra of the three default months.
fn bench_open_bearing() {
    use spallcast_app::source::Backend as _;
    let tmp = tempfile::tempdir().unwrap();
    let db = tmp.path().join("demo.sqlite");
    spallcast_pipeline::create_demo_database(&db, &mut |_, _, _| {}).unwrap();
    let backend = spallcast_app::default_backend();
    let mut source = backend.open(&db, &mut |_| {}).unwrap();
    let plant = source.plant().unwrap();
    let keys: Vec<BearingKey> = plant.bearings().map(|b| b.key.clone()).collect();
    let mut history_ms = Vec::new();
    let mut total_ms = Vec::new();
    for key in &keys {
        let started = Instant::now();
        let history = black_box(source.bearing(key).unwrap());
        history_ms.push(started.elapsed().as_secs_f64() * 1e3);
        let Some(point) = history.readings.last().map(|r| r.point.clone()) else {
            continue;
        };
        for id in spallcast_app::panels::spectra_ui::default_selection(&history, &point) {
            let waveform = source.waveform(id).unwrap();
            black_box(backend.spectra(&waveform).unwrap());
        }
        total_ms.push(started.elapsed().as_secs_f64() * 1e3);
    }
    let stats = |v: &mut Vec<f64>| {
        v.sort_by(f64::total_cmp);
        (v[v.len() / 2], v[v.len() - 1])
    };
    let (h_med, h_max) = stats(&mut history_ms);
    let (t_med, t_max) = stats(&mut total_ms);
    println!(
        "open a bearing on the demo plant ({} bearings): history {h_med:.1} ms median, {h_max:.1} ms slowest; \
         with the spectra of its three default months {t_med:.1} ms median, {t_max:.1} ms slowest",
        keys.len()
    );
}
