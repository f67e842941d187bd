//! The outage-plan calendar driven in an `egui_kittest` harness over a temporary database: drag a bearing
//! onto an outage, accept a suggestion, mark a replacement done, add an outage; each checked in the store.
//!
//! The forecast dates are crafted. They stand for the trade rule "replace between stage 2 and stage 3"
//! (common practice, no source; REFERENCES §9): `replace_by` ends that window, `risk_from` is when
//! failure in service becomes likely.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a broken fixture should fail loudly"
)]

mod common;

use std::collections::BTreeMap;

use common::drag_and_drop;
use eframe::egui;
use egui_kittest::kittest::Queryable;
use egui_kittest::{Harness, HarnessBuilder};
use spallcast_app::plan_view::{PlanPanel, PlanView};
use spallcast_app::store_backend::plan_steps;
use spallcast_plan::Forecast;
use spallcast_plan::source::PlanChange;
use spallcast_store::{PlanStatus, Store};
// The planner's invented plant (two intake pumps, one blower, three outages).
use spallcast_testkit::plants::{d, plant_store};

struct Fixture {
    store: Store,
    panel: PlanPanel,
    _dir: tempfile::TempDir,
}

fn life_of(store: &Store, machine: &str) -> i64 {
    spallcast_plan::source::current_lives(store)
        .unwrap()
        .into_iter()
        .find(|l| l.machine_id == machine)
        .unwrap()
        .life_id
}

fn outage_id(store: &Store, name: &str) -> i64 {
    store
        .outages()
        .unwrap()
        .into_iter()
        .find(|o| o.name == name)
        .unwrap()
        .id
}

fn fixture() -> Fixture {
    let dir = tempfile::tempdir().unwrap();
    let store = plant_store(&dir.path().join("plant.db"));
    let fc = |stage, rb: &str, rf: &str| Forecast {
        stage,
        evidence: "outer-race tones with harmonics".into(),
        replace_by: d(rb),
        risk_from: d(rf),
        location: None,
    };
    let mut forecasts = BTreeMap::new();
    // IN-P1: replace by 20 Apr; the last intake outage before then is the spring shutdown.
    forecasts.insert(life_of(&store, "IN-P1"), fc(2, "2027-04-20", "2027-06-01"));
    // IN-P2: replace by 5 Jan, at risk from 1 Mar: every intake outage starts after its replace-by
    // date (the winter stop on 11 Jan is the first), so an unplanned stop is needed.
    forecasts.insert(life_of(&store, "IN-P2"), fc(3, "2027-01-05", "2027-03-01"));
    let panel = plan_steps::load_with(&store, d("2026-12-01"), forecasts).unwrap();
    Fixture {
        store,
        panel,
        _dir: dir,
    }
}

/// One frame of the calendar: draw it, and carry out what the planner asked in the store (the window
/// does this on its data thread).
fn draw(ui: &mut egui::Ui, fx: &mut Fixture) {
    if let Some(ask) = fx.panel.draw(ui) {
        plan_steps::execute(&mut fx.panel, &mut fx.store, &ask);
        ui.ctx().request_repaint();
    }
}

fn harness(fx: Fixture) -> Harness<'static, Fixture> {
    HarnessBuilder::default()
        .with_size(egui::vec2(1400.0, 1000.0))
        .build_ui_state(draw, fx)
}

fn planned(store: &Store) -> Vec<(i64, i64, PlanStatus)> {
    store
        .plan_entries(None)
        .unwrap()
        .into_iter()
        .map(|e| (e.life_id, e.outage_id, e.status))
        .collect()
}

#[test]
fn dragging_a_bearing_onto_an_outage_stores_the_plan() {
    let mut h = harness(fixture());
    h.run();
    let p1 = life_of(&h.state().store, "IN-P1");
    let spring = outage_id(&h.state().store, "Spring intake shutdown");
    assert!(planned(&h.state().store).is_empty());

    let from = h.get_by_label("IN-P1 MNDE").rect().center();
    let to = h.get_by_label("Spring intake shutdown").rect().center();
    drag_and_drop(&mut h, from, to);

    assert_eq!(
        planned(&h.state().store),
        vec![(p1, spring, PlanStatus::Planned)]
    );
    // The board was read again: the bearing now sits in the outage and no longer needs a slot.
    let board = &h.state().panel.board;
    assert_eq!(board.tasks_in(spring).len(), 1);
    assert!(board.open_needs().iter().all(|n| n.life.life_id != p1));
    let msg = h.state().panel.message.clone().unwrap();
    // Status lines name the bearing and the outage, never internal ids (issue 17 item 6).
    assert!(
        msg.contains("planned IN-P1 MNDE in \"Spring intake shutdown\""),
        "{msg}"
    );
    assert!(
        !msg.contains("Warning"),
        "a good slot has no warning: {msg}"
    );
}

#[test]
fn dropping_on_a_late_outage_of_another_area_warns_in_words() {
    let mut h = harness(fixture());
    h.run();
    let p2 = life_of(&h.state().store, "IN-P2");
    let filters = outage_id(&h.state().store, "Filter hall stop");
    // IN-P2 has no fitting outage: the view says an unplanned stop is needed.
    assert!(
        h.query_by_label_contains("an unplanned stop is needed")
            .is_some()
    );

    let from = h.get_by_label("IN-P2 MDE").rect().center();
    let to = h.get_by_label("Filter hall stop").rect().center();
    drag_and_drop(&mut h, from, to);

    assert_eq!(
        planned(&h.state().store),
        vec![(p2, filters, PlanStatus::Planned)]
    );
    let msg = h.state().panel.message.clone().unwrap();
    assert!(msg.contains("does not take machine IN-P2 down"), "{msg}");
    assert!(
        msg.contains("at risk of failing in service (from 2027-03-01)"),
        "{msg}"
    );
    // The same warning stays beside the planned task: in the message and under the task.
    assert_eq!(
        h.query_all_by_label_contains("does not take machine IN-P2 down")
            .count(),
        2
    );
}

#[test]
fn accepting_the_suggestion_then_marking_done_starts_a_new_life() {
    let mut h = harness(fixture());
    h.run();
    let p1 = life_of(&h.state().store, "IN-P1");
    let spring = outage_id(&h.state().store, "Spring intake shutdown");
    h.get_by_label("Plan IN-P1 MNDE in Spring intake shutdown")
        .click();
    h.run();
    assert_eq!(
        planned(&h.state().store),
        vec![(p1, spring, PlanStatus::Planned)]
    );

    h.get_by_label("Mark done…").click();
    h.run();
    h.get_by_label("Confirm replacement").click();
    h.run();
    assert_eq!(
        planned(&h.state().store),
        vec![(p1, spring, PlanStatus::Done)]
    );
    let new_life = life_of(&h.state().store, "IN-P1");
    assert_ne!(new_life, p1, "marking done started a new bearing life");
    let lives = h.state().store.lives(
        h.state()
            .store
            .latest_states()
            .unwrap()
            .iter()
            .find(|s| s.machine == "IN-P1")
            .unwrap()
            .position_id,
    );
    let lives = lives.unwrap();
    let old = lives.iter().find(|l| l.id == p1).unwrap();
    assert_eq!(
        old.removed,
        Some(d("2026-12-01")),
        "closed on the form's default date (today)"
    );
}

#[test]
fn an_outage_added_in_the_form_is_stored() {
    let mut h = harness(fixture());
    h.run();
    {
        let editor = &mut h.state_mut().panel.view.editor;
        editor.name = "Blower swap".into();
        editor.start = "2027-02-15".into();
        editor.end = "2027-02-16".into();
        editor.machines = "FI-B1, IN-P2".into();
    }
    h.run();
    h.get_by_label("Add outage").click();
    h.run();
    let stored = h
        .state()
        .store
        .outages()
        .unwrap()
        .into_iter()
        .find(|o| o.name == "Blower swap")
        .unwrap();
    assert_eq!(
        (stored.start, stored.end),
        (d("2027-02-15"), d("2027-02-16"))
    );
    assert_eq!(
        stored.machines,
        vec!["FI-B1".to_owned(), "IN-P2".to_owned()]
    );
    // It takes IN-P2 down, but starts after IN-P2's replace-by date (5 Jan): not suggested.
    assert!(h.query_by_label("Plan IN-P2 MDE in Blower swap").is_none());
    assert_eq!(
        h.state().panel.view.editor,
        spallcast_app::plan_view::OutageEditor::default()
    );
}

#[test]
fn the_form_explains_a_bad_date() {
    let mut view = PlanView::default();
    view.editor.name = "Bad".into();
    view.editor.start = "2027-13-01".into();
    view.editor.end = "2027-02-01".into();
    view.editor.areas = "Intake".into();
    assert_eq!(
        view.editor.input().unwrap_err(),
        "first day: write the date as YYYY-MM-DD"
    );
    view.editor.start = "2027-02-02".into();
    assert_eq!(
        view.editor.input().unwrap_err(),
        "the last day is before the first day"
    );
}

/// Issue 17 item 6: at 1280x720 a planned row with long warnings stayed on one line and drew over
/// the next column, and buttons covered text. Every widget of the planned row stays left of the
/// needs column, and no two of them overlap.
#[test]
fn planned_rows_stay_in_their_column_at_1280_by_720() {
    let mut fx = fixture();
    let p2 = life_of(&fx.store, "IN-P2");
    let filters = outage_id(&fx.store, "Filter hall stop");
    spallcast_plan::source::apply_change(
        &mut fx.store,
        &PlanChange::Assign {
            life_id: p2,
            outage_id: filters,
        },
    )
    .unwrap();
    plan_steps::reload(&mut fx.panel, &fx.store).unwrap();
    // The window at 1280x720 less the plant tree (270 px): what the plan view gets.
    let mut h = HarnessBuilder::default()
        .with_size(egui::vec2(1010.0, 720.0))
        .build_ui_state(draw, fx);
    h.run();
    let right_column = h
        .get_by_label(spallcast_app::plan_view::NEEDS_HEADING)
        .rect()
        .min
        .x;
    let mut rects = vec![h.get_by_label("IN-P2 MDE").rect()];
    for b in ["Remove", "Cancel", "Mark done…"] {
        rects.push(h.get_by_label(b).rect());
    }
    for w in h.query_all_by_label_contains("does not take machine IN-P2 down") {
        rects.push(w.rect());
    }
    for r in &rects {
        assert!(
            r.max.x <= right_column + 0.5,
            "{r:?} reaches into the needs column (from x = {right_column})"
        );
    }
    for (i, a) in rects.iter().enumerate() {
        for b in &rects[i + 1..] {
            assert!(a.intersect(*b).area() <= 0.5, "{a:?} and {b:?} overlap");
        }
    }
}

/// Issue 17 item 8: "Undo" (and Ctrl+Z) takes back the last plan step, "Mark done" included: the
/// removed bearing's life is open again and planned in its outage; a second undo empties the plan.
#[test]
fn undo_takes_back_mark_done_then_the_plan_entry() {
    let mut h = harness(fixture());
    h.run();
    assert!(
        h.query_by_label(spallcast_app::plan_view::UNDO_LABEL)
            .is_none(),
        "nothing to undo yet"
    );
    let p1 = life_of(&h.state().store, "IN-P1");
    let spring = outage_id(&h.state().store, "Spring intake shutdown");
    h.get_by_label("Plan IN-P1 MNDE in Spring intake shutdown")
        .click();
    h.run();
    h.get_by_label("Mark done…").click();
    h.run();
    h.get_by_label("Confirm replacement").click();
    h.run();
    assert_ne!(life_of(&h.state().store, "IN-P1"), p1);

    h.get_by_label(spallcast_app::plan_view::UNDO_LABEL).click();
    h.run();
    assert_eq!(
        life_of(&h.state().store, "IN-P1"),
        p1,
        "the old life is open again"
    );
    assert_eq!(
        planned(&h.state().store),
        vec![(p1, spring, PlanStatus::Planned)]
    );
    let msg = h.state().panel.message.clone().unwrap();
    assert!(
        msg.starts_with("undone: replacement of IN-P1 MNDE"),
        "{msg}"
    );
    assert_eq!(
        h.state().panel.board.tasks_in(spring).len(),
        1,
        "board read again"
    );

    // The keyboard shortcut takes back the planning step too.
    h.key_press_modifiers(egui::Modifiers::COMMAND, egui::Key::Z);
    h.run();
    assert!(
        planned(&h.state().store).is_empty(),
        "{:?}",
        planned(&h.state().store)
    );
    assert!(h.state().panel.undo.is_empty());
    assert!(
        h.query_by_label(spallcast_app::plan_view::UNDO_LABEL)
            .is_none()
    );
}
