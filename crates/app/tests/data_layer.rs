//! The window's data layer (store backend) against a real store database, without a window.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a broken fixture should fail loudly"
)]

mod common;

use std::sync::Arc;

use common::{
    BPFO_ORDERS, DAYS, EVIDENCE, FS_HZ, FixtureAnalyzer, RPM, SAMPLES, STAGES, build_fixture, synth,
};
use spallcast_app::StoreBackend;
use spallcast_app::model::BearingKey;
use spallcast_app::source::Backend;

#[test]
fn store_backend_reads_plant_attention_history_and_spectra() {
    let fx = build_fixture();
    let backend = StoreBackend::with_analyzer(Arc::new(FixtureAnalyzer));
    let mut source = backend.open(&fx.db, &mut |_| {}).unwrap();
    let key = BearingKey {
        machine_id: "TP-P1".to_owned(),
        position: "DE".to_owned(),
    };

    let plant = source.plant().unwrap();
    assert_eq!(plant.bearing(&key).unwrap().stage, Some(STAGES[3]));

    let att = source.attention().unwrap();
    assert_eq!(att.latest_day.unwrap().to_string(), DAYS[3]);
    assert_eq!(att.changed.len(), 1);
    assert_eq!(att.changed[0].what, "stage 1 to 2");

    let h = source.bearing(&key).unwrap();
    assert_eq!(h.readings.len(), 4);
    assert_eq!(
        h.lives_started
            .iter()
            .map(ToString::to_string)
            .collect::<Vec<_>>(),
        vec!["2024-03-01", "2026-02-01"]
    );
    assert_eq!(
        h.stage_call.as_ref().unwrap().evidence,
        vec![EVIDENCE.to_owned()]
    );
    // Geometry n = 9, d = 7.94 mm, D = 39.04 mm gives CWRU's published BPFO 3.5848 orders
    // (REFERENCES.md §1.2(a)).
    assert!((h.factors.unwrap().bpfo - BPFO_ORDERS).abs() < 5e-4);

    let w = source.waveform(fx.de_readings[3]).unwrap();
    assert_eq!(w.samples_g.len(), SAMPLES);
    let s = backend.spectra(&w).unwrap();
    // 16,384-sample segments at 12.8 kHz: lines every 12800 / 16384 = 0.78125 Hz, N/2 + 1 of them.
    assert!((s.acceleration.df_hz - FS_HZ / 16_384.0).abs() < 1e-9);
    assert_eq!(s.acceleration.amplitude.len(), 8_193);
    // The synthesised 1x line (0.05 g peak at 1772 r/min) reads within the flat-top window's 0.1 dB.
    let one_x = (0..=3)
        .filter_map(|d| {
            s.acceleration
                .amplitude_at(RPM / 60.0 + (f64::from(d) - 1.5) * s.acceleration.df_hz)
        })
        .fold(0.0_f32, f32::max);
    assert!(
        (f64::from(one_x) - 0.05).abs() < 0.05 * 0.012,
        "1x reads {one_x} g"
    );
    assert!(s.envelope_band_hz.is_some());
}

#[test]
fn store_backend_imports_a_route_folder_idempotently() {
    let fx = build_fixture();
    let backend = StoreBackend::with_analyzer(Arc::new(FixtureAnalyzer));
    let folder = fx.dir.path().join("route");
    std::fs::create_dir_all(&folder).unwrap();
    let text: String = synth(0.3, 77).iter().fold(String::new(), |mut t, v| {
        t.push_str(&v.to_string());
        t.push('\n');
        t
    });
    std::fs::write(folder.join("de.csv"), text).unwrap();
    std::fs::write(
        folder.join("route.csv"),
        format!(
            "file,point,taken_at,rpm,sample_rate_hz\n\
             de.csv,TP-P1-DE-H,2026-05-14T09:30:00+00:00,{RPM},{FS_HZ}\n\
             missing.csv,TP-P1-NDE-H,2026-05-14T09:32:00+00:00,{RPM},{FS_HZ}\n"
        ),
    )
    .unwrap();
    let mut progress = Vec::new();
    let first = backend
        .import_route(&fx.db, &folder, &mut |p| progress.push(p))
        .unwrap();
    assert_eq!(
        (first.imported, first.already_present, first.rejected.len()),
        (1, 0, 1)
    );
    assert_eq!(progress.last().map(|p| (p.done, p.total)), Some((2, 2)));
    let again = backend.import_route(&fx.db, &folder, &mut |_| {}).unwrap();
    assert_eq!((again.imported, again.already_present), (0, 1));
    let missing = backend
        .open(&fx.dir.path().join("nope.sqlite"), &mut |_| {})
        .err()
        .unwrap();
    assert!(format!("{missing:#}").contains("nope.sqlite"));
}

/// Opening a database through the window's own backend brings it up to date before the window reads
/// it (issue: re-analysis when a database is opened, with progress): readings analysed by another
/// analyzer version are analysed again with the pipeline's analyzer, and the progress says so.
#[test]
fn default_backend_reanalyses_stale_readings_when_it_opens_a_database() {
    let fx = build_fixture();
    let version_of = |id: i64| {
        let store = spallcast_store::Store::open_existing(&fx.db).unwrap();
        store.analysis(id).unwrap().unwrap().version
    };
    assert_eq!(version_of(fx.de_readings[0]), "window-test-1");
    let backend = spallcast_app::default_backend();
    let mut seen = Vec::new();
    let mut source = backend.open(&fx.db, &mut |p| seen.push(p)).unwrap();
    let reanalysing: Vec<_> = seen
        .iter()
        .filter(|p| p.what.starts_with("re-analysing"))
        .collect();
    // Four DE and two NDE readings, all from the fixture's analyzer.
    assert!(
        reanalysing.iter().any(|p| p.total == 6 && p.done == 6),
        "progress seen: {seen:?}"
    );
    for id in &fx.de_readings {
        assert_eq!(version_of(*id), spallcast_pipeline::ANALYZER_VERSION);
    }
    assert!(source.plant().is_ok());
}
