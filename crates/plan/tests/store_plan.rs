//! The plan over a real (temporary) database: assigning, moving, marking done, outage edits, export.

use std::collections::BTreeMap;

use chrono::{TimeZone, Utc};
use spallcast_plan::source::{PlanChange, apply_change, current_lives, load_board_with};
use spallcast_plan::{ExportFormat, Forecast, PlanStatus, export_database};
use spallcast_store::OutageInput;
use spallcast_testkit::plants::{d, plant_store};

fn forecasts(lives: &[(i64, &str, &str)]) -> BTreeMap<i64, Forecast> {
    lives
        .iter()
        .map(|&(id, rb, rf)| {
            (
                id,
                Forecast {
                    stage: 2,
                    evidence: "defect tones".into(),
                    replace_by: d(rb),
                    risk_from: d(rf),
                    location: None,
                },
            )
        })
        .collect()
}

#[test]
fn assign_move_and_mark_done_persist_and_start_a_new_life() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("plant.db");
    let mut store = plant_store(&path);
    let lives = current_lives(&store).unwrap();
    assert_eq!(lives.len(), 3);
    let p1 = lives
        .iter()
        .find(|l| l.machine_id == "IN-P1")
        .unwrap()
        .clone();
    assert_eq!(p1.area, "Intake");
    assert_eq!(p1.bearing_type, "TCX-209");
    assert_eq!(p1.installed, d("2024-02-12"));
    let fc = forecasts(&[(p1.life_id, "2027-04-20", "2027-06-01")]);
    let today = d("2026-12-01");

    let board = load_board_with(&store, today, &fc).unwrap();
    assert_eq!(board.outages.len(), 3);
    assert_eq!(board.open_needs().len(), 1);
    let spring = board
        .outages
        .iter()
        .find(|o| o.name == "Spring intake shutdown")
        .unwrap()
        .id;
    let winter = board
        .outages
        .iter()
        .find(|o| o.name == "Winter intake stop")
        .unwrap()
        .id;
    // The suggestion is the last intake outage before 20 Apr: the spring shutdown.
    assert_eq!(
        board.suggestion(board.open_needs()[0]).map(|o| o.id),
        Some(spring)
    );

    apply_change(
        &mut store,
        &PlanChange::Assign {
            life_id: p1.life_id,
            outage_id: winter,
        },
    )
    .unwrap();
    apply_change(
        &mut store,
        &PlanChange::Assign {
            life_id: p1.life_id,
            outage_id: spring,
        },
    )
    .unwrap();
    drop(store);

    // Reopen: the plan persisted, and moving left one planned entry.
    let mut store = spallcast_store::Store::open(&path).unwrap();
    let board = load_board_with(&store, today, &fc).unwrap();
    assert!(board.open_needs().is_empty());
    assert!(board.tasks_in(winter).is_empty());
    let tasks = board.tasks_in(spring);
    assert_eq!(tasks.len(), 1);
    assert_eq!(tasks[0].life.life_id, p1.life_id);
    assert_eq!(tasks[0].status, PlanStatus::Planned);
    let entry_id = tasks[0].id;

    let msg = apply_change(
        &mut store,
        &PlanChange::MarkDone {
            entry_id,
            replaced_on: d("2027-03-09"),
            found: "outer race spall".into(),
        },
    )
    .unwrap();
    assert!(msg.contains("replacement of IN-P1 "), "{msg}");
    assert!(msg.contains("new life"), "{msg}");
    // Done inside the outage (8-12 Mar): no comment on the date.
    assert!(!msg.contains("Warning"), "{msg}");
    let lives = current_lives(&store).unwrap();
    let new_p1 = lives.iter().find(|l| l.machine_id == "IN-P1").unwrap();
    assert_ne!(new_p1.life_id, p1.life_id, "a new life started");
    assert_eq!(new_p1.installed, d("2027-03-09"));
    let board = load_board_with(&store, today, &fc).unwrap();
    let done = board.tasks_in(spring);
    assert_eq!(done.len(), 1);
    assert_eq!(done[0].status, PlanStatus::Done);
    assert_eq!(done[0].life.life_id, p1.life_id);
    // The old life's forecast no longer makes a need: the new life has none.
    assert!(board.open_needs().is_empty());
    // Done entries carry no warning.
    assert!(board.entry_warnings(done[0]).is_empty());
}

/// Issue 17 item 2: a replacement dated before its outage was accepted without comment. It is still
/// recorded (the planner may know better), with a warning naming the outage and its start.
#[test]
fn a_replacement_dated_before_its_outage_is_recorded_with_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    let mut store = plant_store(&dir.path().join("plant.db"));
    let p1 = current_lives(&store)
        .unwrap()
        .into_iter()
        .find(|l| l.machine_id == "IN-P1")
        .unwrap();
    let fc = forecasts(&[(p1.life_id, "2027-04-20", "2027-06-01")]);
    let today = d("2026-12-01");
    let spring = load_board_with(&store, today, &fc)
        .unwrap()
        .outages
        .iter()
        .find(|o| o.name == "Spring intake shutdown")
        .unwrap()
        .id;
    apply_change(
        &mut store,
        &PlanChange::Assign {
            life_id: p1.life_id,
            outage_id: spring,
        },
    )
    .unwrap();
    let entry_id = load_board_with(&store, today, &fc)
        .unwrap()
        .tasks_in(spring)[0]
        .id;
    let msg = apply_change(
        &mut store,
        &PlanChange::MarkDone {
            entry_id,
            replaced_on: d("2027-02-01"),
            found: "outer race spall".into(),
        },
    )
    .unwrap();
    assert!(
        msg.contains(
            "Warning: 2027-02-01 is before outage \"Spring intake shutdown\" starts (2027-03-08)"
        ),
        "{msg}"
    );
}

#[test]
fn outage_edits_go_through_the_store() {
    let dir = tempfile::tempdir().unwrap();
    let mut store = plant_store(&dir.path().join("p.db"));
    let input = OutageInput {
        name: "Blower swap".into(),
        start: d("2027-05-03"),
        end: d("2027-05-04"),
        areas: vec![],
        machines: vec!["FI-B1".into(), "IN-P2".into()],
    };
    apply_change(&mut store, &PlanChange::AddOutage(input.clone())).unwrap();
    let board = load_board_with(&store, d("2026-12-01"), &BTreeMap::new()).unwrap();
    let o = board
        .outages
        .iter()
        .find(|o| o.name == "Blower swap")
        .unwrap();
    assert_eq!(o.machines, vec!["FI-B1".to_owned(), "IN-P2".to_owned()]);
    assert!(o.takes_down("IN-P2", "Intake"));
    let id = o.id;
    let mut changed = input.clone();
    changed.end = d("2027-05-06");
    apply_change(
        &mut store,
        &PlanChange::UpdateOutage {
            id,
            outage: changed,
        },
    )
    .unwrap();
    let board = load_board_with(&store, d("2026-12-01"), &BTreeMap::new()).unwrap();
    assert_eq!(board.outage(id).unwrap().end, d("2027-05-06"));
    // A bad outage is refused with a clear message and nothing changes.
    let mut bad = input;
    bad.name = "Backwards".into();
    bad.end = d("2027-05-01");
    let err = apply_change(&mut store, &PlanChange::AddOutage(bad)).unwrap_err();
    assert!(err.to_string().contains("ends before it starts"), "{err}");
    apply_change(&mut store, &PlanChange::DeleteOutage { id }).unwrap();
    let board = load_board_with(&store, d("2026-12-01"), &BTreeMap::new()).unwrap();
    assert_eq!(board.outages.len(), 3);
}

#[test]
fn export_database_writes_each_format_from_the_store() {
    let dir = tempfile::tempdir().unwrap();
    let db = dir.path().join("plant.db");
    let mut store = plant_store(&db);
    let p2 = current_lives(&store)
        .unwrap()
        .into_iter()
        .find(|l| l.machine_id == "IN-P2")
        .unwrap();
    let spring = store
        .outages()
        .unwrap()
        .into_iter()
        .find(|o| o.name.starts_with("Spring"))
        .unwrap()
        .id;
    apply_change(
        &mut store,
        &PlanChange::Assign {
            life_id: p2.life_id,
            outage_id: spring,
        },
    )
    .unwrap();
    drop(store);
    let now = Utc.with_ymd_and_hms(2026, 12, 1, 12, 0, 0).unwrap();
    for format in [ExportFormat::Csv, ExportFormat::Ics, ExportFormat::Html] {
        let out = dir.path().join(format!("plan.{}", format.extension()));
        let summary = export_database(&db, format, &out, d("2026-12-01"), now).unwrap();
        assert_eq!((summary.outages, summary.replacements), (3, 1));
        let text = std::fs::read_to_string(&out).unwrap();
        assert_eq!(summary.bytes, text.len());
        assert!(text.contains("IN-P2"), "{format:?}: {text}");
    }
    let html = std::fs::read_to_string(dir.path().join("plan.html")).unwrap();
    assert!(html.contains("Tallow Creek Water Works"));
    assert!(
        html.contains("No stored waveform"),
        "no readings were imported"
    );
    // A database that does not exist is an error naming it, and nothing is written.
    let missing = dir.path().join("nope.db");
    let err = export_database(
        &missing,
        ExportFormat::Csv,
        &dir.path().join("x.csv"),
        d("2026-12-01"),
        now,
    )
    .unwrap_err();
    assert!(err.to_string().contains("nope.db"), "{err}");
    assert!(!dir.path().join("x.csv").exists());
    assert!(!missing.exists(), "the export must not create a database");
}

/// Issue 17 item 8: the planner's steps can be taken back, last first, including "mark done" (the
/// removed bearing's life is reopened) and an outage deleted with its plan; taking back a step the plan
/// has moved on from is refused and changes nothing.
#[test]
fn plan_steps_are_undone_last_first_and_a_stale_undo_is_refused() {
    use spallcast_plan::source::{apply_changes_undoable, undo};
    let dir = tempfile::tempdir().unwrap();
    let mut store = plant_store(&dir.path().join("plant.db"));
    let p1 = current_lives(&store)
        .unwrap()
        .into_iter()
        .find(|l| l.machine_id == "IN-P1")
        .unwrap();
    let fc = forecasts(&[(p1.life_id, "2027-04-20", "2027-06-01")]);
    let today = d("2026-12-01");
    let board = load_board_with(&store, today, &fc).unwrap();
    let spring = board
        .outages
        .iter()
        .find(|o| o.name == "Spring intake shutdown")
        .unwrap()
        .id;
    let start = store.plan_snapshot().unwrap();

    let (out, plan_step) = apply_changes_undoable(
        &mut store,
        &[PlanChange::Assign {
            life_id: p1.life_id,
            outage_id: spring,
        }],
    );
    assert!(out[0].is_ok(), "{out:?}");
    let plan_step = plan_step.expect("a change was made, so it can be undone");
    assert!(plan_step.what.contains("IN-P1"), "{}", plan_step.what);
    let entry_id = load_board_with(&store, today, &fc)
        .unwrap()
        .tasks_in(spring)[0]
        .id;
    let (out, done_step) = apply_changes_undoable(
        &mut store,
        &[PlanChange::MarkDone {
            entry_id,
            replaced_on: d("2027-03-09"),
            found: "outer race spall".into(),
        }],
    );
    assert!(out[0].is_ok(), "{out:?}");
    let done_step = done_step.unwrap();
    assert_ne!(
        current_lives(&store)
            .unwrap()
            .iter()
            .find(|l| l.machine_id == "IN-P1")
            .unwrap()
            .life_id,
        p1.life_id
    );

    // The older step first: refused, as the plan has moved on since; nothing changes.
    let before_refusal = store.plan_snapshot().unwrap();
    let err = undo(&mut store, &plan_step).unwrap_err().to_string();
    assert!(err.contains("changed since"), "{err}");
    assert_eq!(store.plan_snapshot().unwrap(), before_refusal);

    // Last first: "mark done" taken back reopens the old life, planned in the spring outage again.
    let msg = undo(&mut store, &done_step).unwrap();
    assert!(msg.starts_with("undone: replacement of IN-P1"), "{msg}");
    let reopened = current_lives(&store)
        .unwrap()
        .into_iter()
        .find(|l| l.machine_id == "IN-P1")
        .unwrap();
    assert_eq!(reopened.life_id, p1.life_id);
    assert_eq!(reopened.installed, p1.installed);
    let board = load_board_with(&store, today, &fc).unwrap();
    let tasks = board.tasks_in(spring);
    assert_eq!(tasks.len(), 1);
    assert_eq!(tasks[0].status, PlanStatus::Planned);
    undo(&mut store, &plan_step).unwrap();
    assert_eq!(store.plan_snapshot().unwrap(), start, "back to the start");
    assert_eq!(
        load_board_with(&store, today, &fc)
            .unwrap()
            .open_needs()
            .len(),
        1
    );

    // An outage deleted with its plan comes back with the same id and its planned entry.
    apply_change(
        &mut store,
        &PlanChange::Assign {
            life_id: p1.life_id,
            outage_id: spring,
        },
    )
    .unwrap();
    let planned = store.plan_snapshot().unwrap();
    let (out, delete_step) =
        apply_changes_undoable(&mut store, &[PlanChange::DeleteOutage { id: spring }]);
    assert!(out[0].is_ok(), "{out:?}");
    assert!(
        load_board_with(&store, today, &fc)
            .unwrap()
            .outage(spring)
            .is_none()
    );
    undo(&mut store, &delete_step.unwrap()).unwrap();
    assert_eq!(store.plan_snapshot().unwrap(), planned);
    let board = load_board_with(&store, today, &fc).unwrap();
    assert_eq!(board.tasks_in(spring).len(), 1);
    assert_eq!(store.integrity_check().unwrap(), vec!["ok".to_owned()]);
}
