//! `egui_kittest` tests of the window changing and following the data: notes and baseline marks, a
//! route import in the background, the outage plan, changes made by another program, overdue dates.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a broken fixture should fail loudly"
)]

mod common;

use common::{
    LIFT_OUTAGE, REPLACE_BY, RISK_FROM, RPM, build_fixture, drag_and_drop, harness, harness_on,
    harness_on_bearing, settle,
};
use eframe::egui;
use egui_kittest::kittest::Queryable;
use spallcast_app::View;
use spallcast_app::model::BearingKey;

/// Issue 17 item 8: notes on a bearing and baseline marks, stored through the window and shown back
/// (evidence panel, life trend, spectra month labels).
#[test]
fn notes_and_baseline_marks_are_stored_and_shown() {
    use spallcast_app::panels::bearing_ui::{
        ADD_NOTE_BUTTON, CLEAR_BASELINE_BUTTON, MARK_BASELINE_BUTTON, NOTE_FIELD_LABEL,
    };
    let fx = build_fixture();
    let mut h = harness_on_bearing(&fx.db);
    h.get_by_label("Life trend").click();
    settle(&mut h);
    h.get_by_role_and_label(egui::Role::TextInput, NOTE_FIELD_LABEL)
        .focus();
    h.run_steps(1);
    h.get_by_role_and_label(egui::Role::TextInput, NOTE_FIELD_LABEL)
        .type_text("regreased, 2 shots");
    h.run_steps(2);
    h.get_by_label(ADD_NOTE_BUTTON).click();
    settle(&mut h);
    let history = h.state().history().unwrap();
    assert_eq!(history.notes.len(), 1, "{:?}", history.notes);
    assert_eq!(history.notes[0].text, "regreased, 2 shots");
    assert_eq!(history.notes[0].on_day.to_string(), common::TODAY);
    assert!(
        h.query_by_label_contains("observation: regreased, 2 shots")
            .is_some(),
        "the note is listed"
    );
    h.run_steps(3);
    assert_eq!(
        h.state().trend_panel().summary.notes,
        1,
        "the note is on the life trend"
    );
    // The store holds it: a second window reads it back.
    drop(h);
    let mut h = harness_on_bearing(&fx.db);
    assert_eq!(h.state().history().unwrap().notes.len(), 1);

    // Baseline: the spectra overlay's readings become the baseline.
    h.get_by_label("Spectra").click();
    settle(&mut h);
    let overlaid = h.state().spectra_panel().selected.clone();
    assert!(!overlaid.is_empty());
    h.get_by_label(MARK_BASELINE_BUTTON).click();
    settle(&mut h);
    let history = h.state().history().unwrap();
    let marked: Vec<i64> = history
        .readings
        .iter()
        .filter(|r| r.baseline)
        .map(|r| r.id)
        .collect();
    assert!(!marked.is_empty(), "{:?}", h.state().status());
    // A baseline is one life's readings: the overlay may span the replacement, then it is refused.
    let status = h.state().status().unwrap().clone();
    assert!(!status.is_error, "{}", status.text);
    assert!(h.query_by_label_contains("Baseline marked:").is_some());
    assert!(
        h.query_all_by_label_contains("(baseline)").next().is_some(),
        "month labels say so"
    );
    h.get_by_label(CLEAR_BASELINE_BUTTON).click();
    settle(&mut h);
    assert!(
        h.state()
            .history()
            .unwrap()
            .readings
            .iter()
            .all(|r| !r.baseline)
    );
}

#[test]
fn import_route_folder_in_background_then_show_summary() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    let folder = fx.dir.path().join("route-2026-05");
    std::fs::create_dir_all(&folder).unwrap();
    let samples = common::synth(0.3, 77);
    let text: String = samples.iter().fold(String::new(), |mut t, v| {
        t.push_str(&v.to_string());
        t.push('\n');
        t
    });
    std::fs::write(folder.join("de.csv"), text).unwrap();
    std::fs::write(
        folder.join("route.csv"),
        format!(
            "file,point,taken_at,rpm,sample_rate_hz\n\
             de.csv,TP-P1-DE-H,2026-05-14T09:30:00+00:00,{RPM},{fs}\n\
             de.csv,NO-SUCH-POINT,2026-05-14T09:31:00+00:00,{RPM},{fs}\n\
             missing.csv,TP-P1-NDE-H,2026-05-14T09:32:00+00:00,{RPM},{fs}\n",
            fs = common::FS_HZ
        ),
    )
    .unwrap();

    h.state_mut()
        .apply(spallcast_app::actions::Action::ImportFolder(folder.clone()));
    assert!(h.state().importing(), "the import runs on its own thread");
    settle(&mut h);
    let summary = h
        .state()
        .import_summary()
        .unwrap()
        .as_ref()
        .unwrap()
        .clone();
    assert_eq!(summary.imported, 1);
    assert_eq!(summary.already_present, 0);
    let mut refused: Vec<&str> = summary.rejected.iter().map(|r| r.file.as_str()).collect();
    refused.sort_unstable();
    assert_eq!(refused, vec!["de.csv", "missing.csv"]);
    assert!(
        h.query_by_label("1 readings imported, 0 already present.")
            .is_some()
    );
    // The lists were reloaded: the new route day is the latest, and the refused files are listed.
    let att = h.state().attention().unwrap();
    assert_eq!(
        att.latest_day.map(|d| d.to_string()).as_deref(),
        Some("2026-05-14")
    );
    assert!(att.rejected.iter().any(|r| r.file == "missing.csv"));
    // Issue 17 item 8: the NDE point, read on 14 Apr, was not collected on this route (its file was
    // missing): listed under "Since last route".
    assert_eq!(att.not_collected, vec!["TP-P1-NDE-H".to_owned()]);
    h.get_by_label("Close").click();
    h.run_steps(2);
    h.get_by_label("Since last route").click();
    h.run_steps(3);
    assert!(
        h.query_by_label("Not collected on the last route (1)")
            .is_some()
    );
    h.state_mut()
        .apply(spallcast_app::actions::Action::ShowView(View::Changes));
    h.run_steps(1);
    assert!(h.state().import_summary().is_none());

    // Importing the same folder again adds nothing.
    h.state_mut()
        .apply(spallcast_app::actions::Action::ImportFolder(folder));
    settle(&mut h);
    let again = h.state().import_summary().unwrap().as_ref().unwrap();
    assert_eq!((again.imported, again.already_present), (0, 1));
}

#[test]
fn outage_plan_tab_drag_a_bearing_onto_an_outage_stores_the_plan() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(View::OutagePlan.label()).click();
    h.step();
    settle(&mut h);
    assert_eq!(h.state().state.view, View::OutagePlan);
    // The board was read on the data thread, with the forecast stored beside the latest stage call.
    let board = &h.state().plan_panel().expect("plan loaded").board;
    let need = board
        .open_needs()
        .into_iter()
        .find(|n| n.life.machine_id == "TP-P1" && n.life.position == "DE")
        .expect("the stage-2 bearing needs a slot");
    assert_eq!(need.forecast.replace_by.to_string(), REPLACE_BY);
    assert_eq!(need.forecast.risk_from.to_string(), RISK_FROM);
    let life_id = need.life.life_id;
    // Suggested: the lift-station stop, the last outage that takes the pump down before 15 June.
    assert!(
        h.query_by_label(&format!("Plan TP-P1 DE in {LIFT_OUTAGE}"))
            .is_some()
    );

    let from = h.get_by_label("TP-P1 DE").rect().center();
    let to = h.get_by_label("Chlorine store stop").rect().center();
    drag_and_drop(&mut h, from, to);
    settle(&mut h);

    let store = spallcast_store::Store::open_existing(&fx.db).unwrap();
    let outage = store
        .outages()
        .unwrap()
        .into_iter()
        .find(|o| o.name == "Chlorine store stop")
        .unwrap();
    let planned: Vec<(i64, i64)> = store
        .plan_entries(None)
        .unwrap()
        .iter()
        .map(|e| (e.life_id, e.outage_id))
        .collect();
    assert_eq!(planned, vec![(life_id, outage.id)]);
    // The view read the plan again and says, in words, that this stop does not take the pump down.
    let panel = h.state().plan_panel().unwrap();
    assert_eq!(panel.board.tasks_in(outage.id).len(), 1);
    let message = panel.message.clone().unwrap_or_default();
    assert!(
        message.contains("does not take machine TP-P1 down"),
        "{message}"
    );
}

#[test]
fn changes_made_by_another_program_show_up_without_reopening() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    let nde = BearingKey {
        machine_id: "TP-P1".to_owned(),
        position: "NDE".to_owned(),
    };
    assert_eq!(
        h.state().plant().unwrap().bearing(&nde).unwrap().stage,
        None
    );
    // Another connection, as a command-line import or stage run in another process would, stores a
    // stage call on the NDE bearing's latest reading.
    {
        let mut store = spallcast_store::Store::open_existing(&fx.db).unwrap();
        let state = store
            .latest_states()
            .unwrap()
            .into_iter()
            .find(|s| s.machine == "TP-P1" && s.position == "NDE")
            .unwrap();
        let evidence = serde_json::json!({ "evidence": ["set by another program"] });
        store
            .put_stage_call(
                state.last_reading_id.unwrap(),
                1,
                "window-test-1",
                &evidence,
            )
            .unwrap();
    }
    // The window checks every few seconds and the answer comes back from its data thread: keep
    // stepping (up to 20 s, for a loaded machine) until the plant has been read again.
    let started = std::time::Instant::now();
    while started.elapsed() < std::time::Duration::from_secs(20) {
        h.step();
        settle(&mut h);
        if h.state()
            .plant()
            .unwrap()
            .bearing(&nde)
            .unwrap()
            .stage
            .is_some()
        {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(100));
    }
    assert_eq!(
        h.state().plant().unwrap().bearing(&nde).unwrap().stage,
        Some(1),
        "the badge follows the database"
    );
}

#[test]
fn due_dates_in_the_past_are_marked_overdue() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    let due = format!("replace by {REPLACE_BY}");
    assert!(
        h.query_by_label(&due).is_some(),
        "not yet due on {}",
        common::TODAY
    );
    drop(h);
    // The same database seen a day after the replace-by date.
    let mut h = harness_on(&fx.db, true, "2026-06-16");
    settle(&mut h);
    assert!(h.query_by_label(&due).is_none());
    assert!(h.query_by_label(&format!("overdue: {due}")).is_some());
}
