//! A small plant database built through the store API, with synthesised readings, for the window tests.
#![allow(
    dead_code,
    reason = "each test binary uses a different part of the fixture"
)]

use std::collections::BTreeMap;
use std::f64::consts::TAU;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Duration;

use chrono::{DateTime, FixedOffset};
use eframe::egui;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use spallcast_app::path_prompt::PATH_FIELD_LABEL;
use spallcast_app::{SpallcastApp, StartOptions, StoreBackend};
use spallcast_store::{
    AnalysisInput, AnalysisOutput, AnalyzeError, NewReading, PlantFile, ReadingAnalyzer, Store,
};

/// Shaft speed of the test pump, r/min (the CWRU 1 hp speed, so the fault frequencies can be checked
/// against CWRU's published table in the shared REFERENCES.md, §1.2(a)).
pub const RPM: f64 = 1772.0;
/// Sample rate of the synthesised readings, Hz.
pub const FS_HZ: f64 = 12_800.0;
/// Samples per reading.
pub const SAMPLES: usize = 16_384;
/// BPFO of the CWRU drive-end bearing in orders (CWRU published 3.5848, REFERENCES.md §1.2(a)).
pub const BPFO_ORDERS: f64 = 3.5848;

/// Route days of the test readings (the bearing was replaced on 2026-02-01).
pub const DAYS: [&str; 4] = ["2026-01-14", "2026-02-14", "2026-03-14", "2026-04-14"];
/// The day the window takes as today (the outage plan is drawn from it).
pub const TODAY: &str = "2026-04-20";
/// Stage stored for each reading.
pub const STAGES: [u8; 4] = [3, 0, 1, 2];
/// Overall velocity stored for each reading, mm/s.
pub const VELOCITY_MM_S: [f64; 4] = [4.1, 1.1, 1.3, 2.2];

/// Evidence sentence of the latest stage call.
pub const EVIDENCE: &str = "Envelope spectrum shows BPFO with 3 harmonics, 11 dB over the floor.";

/// The label of the test bearing in the plant tree.
pub const BEARING_LABEL: &str = "DE  Pump drive end";

/// The test plant (an invented site).
const PLANT: &str = spallcast_testkit::plants::TEST_REACH;

/// Name of the outage that takes the test pump down before its replace-by date.
pub const LIFT_OUTAGE: &str = "Lift station May stop";
/// Replace-by and risk-from dates stored with the latest stage call of the test bearing.
pub const REPLACE_BY: &str = "2026-06-15";
/// See [`REPLACE_BY`].
pub const RISK_FROM: &str = "2026-08-01";

/// Scalars the fixture stores, computed from the samples by the analysis crate.
pub struct FixtureAnalyzer;

impl ReadingAnalyzer for FixtureAnalyzer {
    fn version(&self) -> String {
        "window-test-1".to_owned()
    }

    fn analyze(&self, input: &AnalysisInput<'_>) -> Result<AnalysisOutput, AnalyzeError> {
        let x: Vec<f64> = input.samples_g.iter().map(|&v| f64::from(v)).collect();
        let mut scalars = BTreeMap::new();
        scalars.insert(
            "stage.accel_rms_g".to_owned(),
            spallcast_analysis::indicators::rms(&x),
        );
        scalars.insert(
            "stage.kurtosis".to_owned(),
            spallcast_analysis::indicators::kurtosis(&x),
        );
        scalars.insert(
            "stage.crest_factor".to_owned(),
            spallcast_analysis::indicators::crest_factor(&x),
        );
        Ok(AnalysisOutput {
            scalars,
            document: serde_json::json!({ "diagnosis": "none" }),
            diagnosis: Some("none".to_owned()),
        })
    }
}

/// A deterministic outer-race signal: 1x, impacts at BPFO ringing a 3 kHz resonance (`impact_g` high),
/// and noise.
pub fn synth(impact_g: f64, seed: u64) -> Vec<f32> {
    let fr = RPM / 60.0;
    let bpfo = BPFO_ORDERS * fr;
    let mut state = seed.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1);
    let mut noise = move || {
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((state >> 11) as f64 / (1_u64 << 53) as f64) - 0.5
    };
    (0..SAMPLES)
        .map(|i| {
            let t = i as f64 / FS_HZ;
            let since = t % (1.0 / bpfo);
            let ring = impact_g * (-since * 900.0).exp() * (TAU * 3_000.0 * since).sin();
            (0.05 * (TAU * fr * t).sin() + ring + 0.02 * noise()) as f32
        })
        .collect()
}

fn taken_at(day: &str) -> DateTime<FixedOffset> {
    DateTime::parse_from_rfc3339(&format!("{day}T09:30:00+00:00")).unwrap()
}

/// Reading ids of the DE point, oldest first.
pub struct Fixture {
    /// Keeps the folder alive.
    pub dir: tempfile::TempDir,
    /// The database file.
    pub db: PathBuf,
    /// DE readings, in `DAYS` order.
    pub de_readings: Vec<i64>,
}

/// Builds the database: plant, four DE readings (one before the replacement), two NDE readings, stage
/// calls on the DE readings.
pub fn build_fixture() -> Fixture {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("plant.sqlite");
    let plant_path = dir.path().join("plant.toml");
    std::fs::write(&plant_path, PLANT).unwrap();
    let mut store = Store::open(&db).unwrap();
    store
        .apply_plant(&PlantFile::parse(PLANT, &plant_path).unwrap())
        .unwrap();
    let de = store.point_id("TP-P1-DE-H").unwrap().unwrap();
    let nde = store.point_id("TP-P1-NDE-H").unwrap().unwrap();
    let analyzer = FixtureAnalyzer;
    let mut de_readings = Vec::new();
    for (i, day) in DAYS.iter().enumerate() {
        let impact = [0.8, 0.0, 0.05, 0.2][i];
        let samples = synth(impact, i as u64 + 1);
        let ids = add(
            &mut store,
            &analyzer,
            de,
            day,
            &samples,
            &format!("de-{i}"),
            VELOCITY_MM_S[i],
        );
        de_readings.push(ids);
        if i >= 2 {
            let quiet = synth(0.0, 100 + i as u64);
            add(
                &mut store,
                &analyzer,
                nde,
                day,
                &quiet,
                &format!("nde-{i}"),
                0.9,
            );
        }
    }
    for (i, id) in de_readings.iter().enumerate() {
        let evidence = if i == 3 {
            stage_record(STAGES[i], EVIDENCE, Some((REPLACE_BY, RISK_FROM)))
        } else if i == 0 {
            // The old life's projection, scored against its replacement by the "how right were we"
            // plot.
            let mut r = stage_record(
                STAGES[i],
                "stage 3 at reading 1",
                Some((OLD_REPLACE_BY, OLD_RISK_FROM)),
            );
            r["forecast"]["end_of_life"] = projection(OLD_END_OF_LIFE);
            r
        } else {
            stage_record(
                STAGES[i],
                &format!("stage {} at reading {}", STAGES[i], i + 1),
                None,
            )
        };
        store
            .put_stage_call(*id, STAGES[i], "window-test-1", &evidence)
            .unwrap();
    }
    Fixture {
        dir,
        db,
        de_readings,
    }
}

/// Dates projected at the old life's only reading (2026-01-14; the bearing was replaced on
/// 2026-02-01): replace by, risk from, end of life.
pub const OLD_REPLACE_BY: &str = "2026-01-25";
/// See [`OLD_REPLACE_BY`].
pub const OLD_RISK_FROM: &str = "2026-02-05";
/// See [`OLD_REPLACE_BY`].
pub const OLD_END_OF_LIFE: &str = "2026-02-10";

/// Midnight UTC of a day, Unix seconds.
pub fn day_s(day: &str) -> f64 {
    chrono::NaiveDate::parse_from_str(day, "%Y-%m-%d")
        .unwrap()
        .and_hms_opt(0, 0, 0)
        .unwrap()
        .and_utc()
        .timestamp() as f64
}

/// A stored projection of a day (central estimate and interval all on it).
fn projection(day: &str) -> serde_json::Value {
    serde_json::json!({ "t_s": day_s(day), "lo_s": day_s(day), "hi_s": day_s(day) })
}

/// A stage record as the pipeline stores it (`spallcast_analysis::record::StageRecord`, schema 1):
/// one evidence sentence and, optionally, a forecast with `replace_by` and `risk_from` dates (midnight
/// UTC, central estimates).
fn stage_record(stage: u8, evidence: &str, dates: Option<(&str, &str)>) -> serde_json::Value {
    let forecast = dates.map(|(replace_by, risk_from)| {
        serde_json::json!({ "as_of_s": 0.0, "stage": stage, "location": "outer race",
            "confidence": 0.8, "evidence": [evidence], "replace_by": projection(replace_by),
            "risk_from": projection(risk_from), "method": "trend", "assumptions": [] })
    });
    let record = serde_json::json!({
        "schema_version": 1,
        "point": "TP-P1-DE-H",
        "call": { "index": 0, "t_s": 0.0, "stage": stage, "raw_stage": stage,
                  "location": "outer race", "confidence": 0.8, "evidence": [evidence],
                  "limits": [], "relative": {}, "damage_index_db": 0.0, "in_baseline": false },
        "forecast": forecast,
    });
    // The fixture writes exactly the pipeline's type.
    assert!(
        serde_json::from_value::<spallcast_analysis::record::StageRecord>(record.clone()).is_ok()
    );
    record
}

fn add(
    store: &mut Store,
    analyzer: &FixtureAnalyzer,
    point: i64,
    day: &str,
    samples: &[f32],
    name: &str,
    velocity: f64,
) -> i64 {
    let input = AnalysisInput {
        samples_g: samples,
        sample_rate_hz: FS_HZ,
        shaft_hz: RPM / 60.0,
        factors: None,
        iso_group: spallcast_analysis::MachineGroup::Medium,
        iso_support: spallcast_analysis::Support::Rigid,
    };
    let mut out = analyzer.analyze(&input).unwrap();
    out.scalars
        .insert("stage.velocity_rms_mm_s".to_owned(), velocity);
    let reading = NewReading {
        point_id: point,
        taken_at: taken_at(day),
        shaft_hz: RPM / 60.0,
        sample_rate_hz: FS_HZ,
        units: "g",
        samples_g: samples,
        source_file: name,
        content_sha256: name,
        clipped_fraction: 0.0,
    };
    store
        .add_readings(&[(reading, out)], &analyzer.version())
        .unwrap()[0]
        .unwrap()
}

/// The window on `db`, 1400×900, with the store backend (imports use [`FixtureAnalyzer`]).
pub fn harness(db: &Path, cautions_acknowledged: bool) -> Harness<'static, SpallcastApp> {
    harness_on(db, cautions_acknowledged, TODAY)
}

/// As [`harness`], with the window taking `today` as the current day.
pub fn harness_on(
    db: &Path,
    cautions_acknowledged: bool,
    today: &str,
) -> Harness<'static, SpallcastApp> {
    let backend = Arc::new(StoreBackend::with_analyzer(Arc::new(FixtureAnalyzer)));
    let options = StartOptions {
        db_path: Some(db.to_path_buf()),
        start_view: None,
        screenshot: None,
        cautions_acknowledged,
        today: Some(today.parse().expect("a valid date")),
        no_file_dialog: true,
    };
    Harness::builder()
        .with_size(egui::vec2(1400.0, 900.0))
        .build_eframe(move |cc| SpallcastApp::new(cc, backend, options))
}

/// Steps the harness until no background work is in flight (bounded), then a few frames more.
/// A harness on the fixture database with the cautions read and the test bearing selected.
pub fn harness_on_bearing(db: &Path) -> Harness<'static, SpallcastApp> {
    let mut h = harness(db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
    h
}

pub fn settle(harness: &mut Harness<'static, SpallcastApp>) {
    for _ in 0..3000 {
        harness.step();
        if !harness.state().is_busy() {
            harness.run_steps(3);
            if !harness.state().is_busy() {
                return;
            }
        }
        std::thread::sleep(Duration::from_millis(10));
    }
    panic!("background work did not finish in time");
}

/// Presses on `from`, moves in steps to `to` and releases there (without the pointer-gone event that
/// `Harness::drop_at` adds, so the drop zone still sees the pointer when the button comes up). Fixed
/// frame counts, not `run`: the window keeps background work (and its spinner) going.
pub fn drag_and_drop<S>(h: &mut Harness<'_, S>, from: egui::Pos2, to: egui::Pos2) {
    h.hover_at(from);
    h.run_steps(2);
    h.drag_at(from);
    h.run_steps(2);
    for i in 1..=5 {
        h.hover_at(from + (to - from) * (i as f32 / 5.0));
        h.run_steps(2);
    }
    h.event(egui::Event::PointerButton {
        pos: to,
        button: egui::PointerButton::Primary,
        pressed: false,
        modifiers: egui::Modifiers::NONE,
    });
    h.run_steps(2);
    h.remove_cursor();
    h.run_steps(2);
}

/// Replaces the text of the (only) text field.
pub fn retype(h: &mut Harness<'static, SpallcastApp>, text: &str) {
    h.get_by_role_and_label(egui::Role::TextInput, PATH_FIELD_LABEL)
        .focus();
    h.run_steps(1);
    h.key_press(egui::Key::End);
    h.run_steps(1);
    for _ in 0..300 {
        h.key_press(egui::Key::Backspace);
    }
    h.get_by_role_and_label(egui::Role::TextInput, PATH_FIELD_LABEL)
        .type_text(text);
    h.run_steps(2);
}
