//! `egui_kittest` tests that drive the real app state on a small database built through the store API.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a broken fixture should fail loudly"
)]

mod common;

use common::{
    BEARING_LABEL, BPFO_ORDERS, DAYS, EVIDENCE, LIFT_OUTAGE, REPLACE_BY, RISK_FROM, RPM, STAGES,
    build_fixture, drag_and_drop, harness, harness_on, settle,
};
use eframe::egui;
use egui_kittest::kittest::Queryable;
use spallcast_app::model::BearingKey;
use spallcast_app::path_prompt::PATH_FIELD_LABEL;
use spallcast_app::{CAUTION_LINE, NOTICE_BUTTON, NOTICE_TITLE, View};

fn de_key() -> BearingKey {
    BearingKey {
        machine_id: "TP-P1".to_owned(),
        position: "DE".to_owned(),
    }
}

#[test]
fn cautions_are_shown_until_read_and_stay_in_the_status_bar() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, false);
    settle(&mut h);
    assert!(
        h.query_by_label(NOTICE_TITLE).is_some(),
        "first-run notice missing"
    );
    assert!(!h.state().state.cautions_acknowledged);
    h.get_by_label(NOTICE_BUTTON).click();
    h.run_steps(3);
    assert!(h.state().state.cautions_acknowledged);
    assert!(
        h.query_by_label(NOTICE_TITLE).is_none(),
        "notice still open after reading it"
    );
    // The permanent line stays.
    assert!(h.query_by_label(CAUTION_LINE).is_some());
}

#[test]
fn plant_tree_shows_bearings_with_their_latest_stage() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    let app = h.state();
    let plant = app.plant().expect("plant loaded");
    assert_eq!(plant.site, "Test Reach Pumping Station");
    let de = plant.bearing(&de_key()).expect("DE in tree");
    assert_eq!(
        de.stage,
        Some(STAGES[3]),
        "badge shows the latest stage call"
    );
    let nde = plant
        .bearing(&BearingKey {
            machine_id: "TP-P1".to_owned(),
            position: "NDE".to_owned(),
        })
        .unwrap();
    assert_eq!(nde.stage, None, "no call stored: badge shows the dash");
    assert!(h.query_by_label(BEARING_LABEL).is_some());
    assert!(h.query_by_label("NDE  Pump non-drive end").is_some());
    // Stage went 1 → 2 between the last two route days: it is listed as changed.
    let att = h.state().attention().unwrap();
    assert_eq!(
        att.latest_day.map(|d| d.to_string()).as_deref(),
        Some(DAYS[3])
    );
    assert_eq!(
        att.previous_day.map(|d| d.to_string()).as_deref(),
        Some(DAYS[2])
    );
    let changed: Vec<_> = att
        .changed
        .iter()
        .map(|c| (c.key.clone(), c.stage_before, c.stage_now))
        .collect();
    assert_eq!(changed, vec![(de_key(), Some(STAGES[2]), Some(STAGES[3]))]);
}

#[test]
fn select_bearing_add_month_and_toggle_fault_markers() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
    assert_eq!(h.state().selected_bearing(), Some(&de_key()));
    assert_eq!(h.state().state.view, View::Spectra);
    let ids = &fx.de_readings;
    // Default months: the baseline of the current life (the first reading after the 2026-02-01
    // replacement), the previous reading and the latest.
    let panel = h.state().spectra_panel();
    assert_eq!(panel.selected, vec![ids[1], ids[2], ids[3]]);
    assert_eq!(panel.summary.drawn, vec![ids[1], ids[2], ids[3]]);
    assert!(panel.summary.plotted_points > 0);
    // The plot spans the whole spectrum once it has arrived and "Full span" is chosen (from 0 Hz to
    // at most Nyquist); it opens on the defect region (checked in spectra_open_on_the_defect_region).
    h.get_by_label("Full span").click();
    h.run_steps(3);
    let panel = h.state().spectra_panel();
    let (x0, x1) = panel.summary.x_range;
    assert!(x0.abs() < 1e-9, "starts at 0 Hz: {x0}");
    assert!(
        x1 > 0.35 * common::FS_HZ && x1 <= 0.5 * common::FS_HZ,
        "x range {x0}..{x1} Hz"
    );
    // At most two points per screen column per curve (the plot is narrower than the 1400 px window).
    assert!(
        panel.summary.plotted_points <= 3 * (2 * 1400 + 4),
        "{}",
        panel.summary.plotted_points
    );
    // BPFO markers are on by default, at CWRU's published 3.5848 orders × 1772 r/min = 105.87 Hz
    // (REFERENCES.md §1.2(a), 1 hp row).
    let bpfo = panel
        .summary
        .markers
        .iter()
        .find(|(l, _)| l == "BPFO")
        .expect("BPFO marker drawn");
    assert!((bpfo.1 - 105.87).abs() < 0.05, "BPFO at {} Hz", bpfo.1);
    assert!((bpfo.1 - BPFO_ORDERS * RPM / 60.0).abs() < 0.05);
    assert!(!panel.summary.markers.iter().any(|(l, _)| l.contains("BSF")));

    // Add the month before the replacement.
    h.get_by_label(DAYS[0]).click();
    h.step();
    settle(&mut h);
    let panel = h.state().spectra_panel();
    assert_eq!(panel.selected, vec![ids[0], ids[1], ids[2], ids[3]]);
    assert_eq!(panel.summary.drawn, vec![ids[0], ids[1], ids[2], ids[3]]);
    assert!(
        h.state().cache().spectra_of(ids[0]).is_some(),
        "spectra cached per reading"
    );

    // Switch the BPFO family off and the rolling-element family on.
    h.get_by_label("BPFO").click();
    h.get_by_label("BSF (2×)").click();
    h.run_steps(2);
    let summary = &h.state().spectra_panel().summary;
    assert!(
        !summary.markers.iter().any(|(l, _)| l.contains("BPFO")),
        "{:?}",
        summary.markers
    );
    // Rolling-element markers at 2×BSF = 4.7135 orders (CWRU published, REFERENCES.md §1.2(a)).
    let bsf = summary
        .markers
        .iter()
        .find(|(l, _)| l == "2×BSF")
        .expect("2×BSF marker drawn");
    assert!(
        (bsf.1 - 4.7135 * RPM / 60.0).abs() < 0.1,
        "2×BSF at {} Hz",
        bsf.1
    );
    assert!(!h.state().state.spectra.markers.outer.harmonics);
    assert!(h.state().state.spectra.markers.rolling.harmonics);

    // Sidebands of the inner race: ±1x around each BPFI harmonic.
    h.get_by_label("BPFI sidebands").click();
    h.run_steps(2);
    let summary = &h.state().spectra_panel().summary;
    let bpfi = summary.markers.iter().find(|(l, _)| l == "BPFI").unwrap().1;
    let upper = summary
        .markers
        .iter()
        .find(|(l, _)| l == "BPFI+1x")
        .expect("BPFI+1x sideband")
        .1;
    assert!((upper - bpfi - RPM / 60.0).abs() < 1e-6);

    // Remove a month again.
    h.get_by_label(DAYS[2]).click();
    h.run_steps(2);
    assert_eq!(
        h.state().spectra_panel().summary.drawn,
        vec![ids[0], ids[1], ids[3]]
    );
}

#[test]
fn evidence_trend_and_waveform_views_show_the_bearing() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
    // The latest call's evidence sentence is beside the plots.
    let history = h.state().history().unwrap();
    assert_eq!(
        history.stage_call.as_ref().map(|c| c.stage),
        Some(STAGES[3])
    );
    assert!(h.query_by_label(&format!("• {EVIDENCE}")).is_some());

    h.get_by_label("Life trend").click();
    h.run_steps(3);
    assert_eq!(h.state().state.view, View::Trend);
    let t = &h.state().trend_panel().summary;
    assert!(
        t.indicators.iter().any(|k| k == "stage.accel_rms_g"),
        "{:?}",
        t.indicators
    );
    assert_eq!(t.staged_readings, 4, "a stage numeral at every reading");
    assert_eq!(t.replacements, 1, "the 2026-02-01 replacement");
    assert!(t.zone_lines, "ISO 20816-3 zone lines on overall velocity");
    assert!(
        t.forecast,
        "the forecast stored with the latest call is projected"
    );
    // Issue 17 item 5: the projection to the stage-3/4 levels is drawn, no line is joined across
    // the replacement (the January reading is on the old life), and colours are fixed per indicator.
    assert!(t.projection, "the damage-index projection is drawn");
    assert!(!t.replace_now, "stage {} is not 'replace now'", STAGES[3]);
    for (key, n) in &t.segments {
        assert_eq!(*n, 2, "{key}: one segment per life, {:?}", t.segments);
    }
    for (key, colour) in &t.colours {
        assert_eq!(
            *colour,
            spallcast_app::panels::trend_ui::indicator_colour(key),
            "{key}"
        );
    }

    h.get_by_label("Waveform").click();
    h.step();
    settle(&mut h);
    let w = h.state().waveform_panel();
    assert_eq!(
        w.reading,
        Some(fx.de_readings[3]),
        "newest reading by default"
    );
    assert!(
        w.plotted_points > 100 && w.plotted_points < common::SAMPLES,
        "{}",
        w.plotted_points
    );
}

#[test]
fn opening_a_missing_database_reports_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let missing = dir.path().join("nothing-here.sqlite");
    let mut h = harness(&missing, true);
    settle(&mut h);
    let status = h.state().status().expect("a status message");
    assert!(status.is_error);
    assert!(
        status.text.contains("nothing-here.sqlite"),
        "{}",
        status.text
    );
    assert!(h.state().plant().is_none());
}

/// Replaces the text of the (only) text field.
fn retype(h: &mut egui_kittest::Harness<'static, spallcast_app::SpallcastApp>, text: &str) {
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

/// Issue 17 item 7: where no file-dialog service runs, "Open database…" did nothing. It asks for a
/// typed path, says why, refuses a wrong path with the reason, and opens the right one; the path is
/// then offered as recent.
#[test]
fn open_database_without_a_file_dialog_asks_for_a_typed_path() {
    let fx = build_fixture();
    let dir = tempfile::tempdir().unwrap();
    let mut h = harness(&dir.path().join("nothing-here.sqlite"), true);
    settle(&mut h);
    assert!(h.state().plant().is_none());
    h.get_by_label("Open database…").click();
    h.run_steps(3);
    assert!(
        h.query_by_label(PATH_FIELD_LABEL).is_some(),
        "the prompt is shown"
    );
    assert!(
        h.query_by_label_contains("turned off").is_some(),
        "the prompt says why there is no dialog"
    );
    // The prompt starts on the most recent database (the missing one, opened at start).
    let field = h.get_by_role_and_label(egui::Role::TextInput, PATH_FIELD_LABEL);
    assert_eq!(
        field.value().as_deref(),
        Some(
            dir.path()
                .join("nothing-here.sqlite")
                .display()
                .to_string()
                .as_str()
        )
    );
    retype(&mut h, &dir.path().display().to_string());
    h.get_by_label("Open this database").click();
    h.run_steps(2);
    assert!(
        h.query_by_label_contains("is a folder").is_some(),
        "a folder is refused with the reason"
    );
    h.get_by_label("Cancel").click();
    h.run_steps(2);
    assert!(
        h.query_by_label(PATH_FIELD_LABEL).is_none(),
        "cancel closes the prompt"
    );

    h.get_by_label("Open database…").click();
    h.run_steps(2);
    retype(&mut h, &fx.db.display().to_string());
    h.get_by_label("Open this database").click();
    h.run_steps(2);
    settle(&mut h);
    assert!(
        h.state().plant().is_some(),
        "the typed database opened: {:?}; field {:?}",
        h.state().status(),
        h.query_by_role_and_label(egui::Role::TextInput, PATH_FIELD_LABEL)
            .and_then(|n| n.value())
    );
    assert_eq!(h.state().db_path(), Some(fx.db.as_path()));
    assert_eq!(
        h.state().state.recent_databases.first().map(String::as_str),
        Some(fx.db.display().to_string().as_str())
    );
}

/// Issue 17 item 8: keyboard shortcuts for the next / previous bearing and month.
#[test]
fn alt_arrows_step_through_bearings_and_months() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    let keys: Vec<BearingKey> = h
        .state()
        .plant()
        .unwrap()
        .bearings()
        .map(|b| b.key.clone())
        .collect();
    assert!(keys.len() >= 2);
    h.state_mut()
        .apply(spallcast_app::actions::Action::SelectBearing(
            keys[0].clone(),
        ));
    settle(&mut h);
    h.key_press_modifiers(egui::Modifiers::ALT, egui::Key::ArrowDown);
    settle(&mut h);
    assert_eq!(
        h.state().selected_bearing(),
        Some(&keys[1]),
        "Alt+Down: the next bearing"
    );
    h.key_press_modifiers(egui::Modifiers::ALT, egui::Key::ArrowUp);
    settle(&mut h);
    assert_eq!(h.state().selected_bearing(), Some(&keys[0]), "Alt+Up: back");
    h.key_press_modifiers(egui::Modifiers::ALT, egui::Key::ArrowUp);
    settle(&mut h);
    assert_eq!(
        h.state().selected_bearing(),
        Some(&keys[0]),
        "stops at the first"
    );

    // Months: on the spectra view the newest overlaid reading steps back and forth.
    h.state_mut()
        .apply(spallcast_app::actions::Action::ShowView(View::Spectra));
    settle(&mut h);
    let before = h.state().spectra_panel().selected.clone();
    let newest = *before.last().expect("an overlay");
    h.key_press_modifiers(egui::Modifiers::ALT, egui::Key::ArrowLeft);
    settle(&mut h);
    let after = h.state().spectra_panel().selected.clone();
    assert_ne!(
        after.last(),
        Some(&newest),
        "Alt+Left: an earlier month: {before:?} -> {after:?}"
    );
    h.key_press_modifiers(egui::Modifiers::ALT, egui::Key::ArrowRight);
    settle(&mut h);
    assert_eq!(
        h.state().spectra_panel().selected.last(),
        Some(&newest),
        "Alt+Right: back to the newest"
    );
}

/// Issue 17 item 8: the plant tree's Find matches point ids too, and says when nothing matches.
#[test]
fn find_matches_point_ids_and_says_no_match() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    assert!(h.query_by_label_contains("Extract fan").is_some());
    let find = spallcast_app::panels::tree_ui::FIND_LABEL;
    h.get_by_role_and_label(egui::Role::TextInput, find).focus();
    h.run_steps(1);
    // Only the point id TP-P1-DE-H contains "p1-de-h" (not a machine id, name or position).
    h.get_by_role_and_label(egui::Role::TextInput, find)
        .type_text("p1-de-h");
    h.run_steps(3);
    assert!(
        h.query_by_label_contains("Lift pump 1").is_some(),
        "the machine of the matching point is shown"
    );
    assert!(
        h.query_by_label_contains("Extract fan").is_none(),
        "machines without a match are hidden"
    );
    for _ in 0..20 {
        h.key_press(egui::Key::Backspace);
    }
    h.get_by_role_and_label(egui::Role::TextInput, find)
        .type_text("zzz");
    h.run_steps(3);
    assert!(
        h.query_by_label_contains("No machine, position or point matches \"zzz\"")
            .is_some(),
        "no match is said"
    );
}

/// Issue 17 item 8: notes on a bearing and baseline marks, stored through the window and shown back
/// (evidence panel, life trend, spectra month labels).
#[test]
fn notes_and_baseline_marks_are_stored_and_shown() {
    use spallcast_app::panels::bearing_ui::{
        ADD_NOTE_BUTTON, CLEAR_BASELINE_BUTTON, MARK_BASELINE_BUTTON, NOTE_FIELD_LABEL,
    };
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
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
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
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

/// The envelope spectrum opens on the defect region (0 Hz to about 10x the highest fault frequency,
/// so the BPFO markers are spread across the plot instead of piled at the left); "Fit to markers"
/// and "Full span" change the frequency range only; the month legend and colours follow dates.
#[test]
fn spectra_open_on_the_defect_region() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
    h.get_by_label("Envelope").click();
    h.step();
    settle(&mut h);
    h.run_steps(3);
    let bpfo_hz = BPFO_ORDERS * RPM / 60.0; // 105.87 Hz, REFERENCES.md §1.2(a)
    let panel = h.state().spectra_panel();
    let (x0, x1) = panel.summary.x_range;
    assert!(x0.abs() < 1e-9, "starts at 0 Hz: {x0}");
    // CWRU drive-end bearing: BPFI 5.4152 orders is the highest defect rate (REFERENCES.md §1.2(a)),
    // 10.5 x 5.4152 x 1772/60 = 1680 Hz.
    let highest_hz = 5.4152 * RPM / 60.0;
    assert!(
        x1 > 3.0 * bpfo_hz && x1 <= 10.6 * highest_hz,
        "opens at 0..{x1} Hz, not the full span"
    );
    assert!(x1 < 0.25 * common::FS_HZ, "{x1}");
    let fmax = h.state().spectra_panel().fmax;
    assert!(
        (fmax - x1).abs() < 1e-6,
        "Fmax field shows the range: {fmax}"
    );

    h.get_by_label("Full span").click();
    h.run_steps(3);
    let (_, full) = h.state().spectra_panel().summary.x_range;
    assert!(full > x1 * 1.5, "full span {full} wider than {x1}");

    h.get_by_label("Fit to markers").click();
    h.run_steps(3);
    let (f0, f1) = h.state().spectra_panel().summary.x_range;
    let top_marker = h
        .state()
        .spectra_panel()
        .summary
        .markers
        .iter()
        .map(|(_, f)| *f)
        .filter(|f| *f <= full)
        .fold(0.0_f64, f64::max);
    assert!(
        f0.abs() < 1e-9 && f1 >= top_marker * 0.99 && f1 <= full + 1e-9,
        "{f0}..{f1}, top marker {top_marker}"
    );
}

/// The bundled fallback font draws the symbols the UI wants (arrows, the warning sign), which egui's
/// own fonts lack (DEVELOPERS.md used to ask UI text to avoid them).
#[test]
fn bundled_font_draws_arrows_and_the_warning_sign() {
    use eframe::egui;
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    let ctx = h.ctx.clone();
    let families = ctx.fonts(|f| f.definitions().families.clone());
    assert_eq!(
        families[&egui::FontFamily::Proportional]
            .last()
            .map(String::as_str),
        Some(spallcast_app::assets::FALLBACK_FONT_NAME)
    );
    let symbols = "\u{2192}\u{2190}\u{2191}\u{2193}\u{26a0}\u{2022}";
    for font in [
        egui::FontId::proportional(14.0),
        egui::FontId::monospace(12.0),
    ] {
        assert!(ctx.fonts_mut(|f| f.has_glyphs(&font, symbols)), "{font:?}");
    }
    // egui's default fonts alone lack the warning sign: the check above can fail.
    let plain = egui::Context::default();
    plain.set_fonts(egui::FontDefinitions::default());
    let mut out = plain.run_ui(egui::RawInput::default(), |_| {});
    out.textures_delta.clear();
    assert!(!plain.fonts_mut(|f| f.has_glyph(&egui::FontId::proportional(14.0), '\u{26a0}')));
}

/// Issue 17 item 8: display units. Choosing m/s² and in/s in the units menu redraws the spectra in
/// those units: 1 g = 9.806 65 m/s² (ISO 80000-3, standard gravity), 1 in = 25.4 mm (NIST SP 811,
/// appendix B); the choice is kept in the saved state.
#[test]
fn unit_preferences_redraw_the_spectra() {
    use spallcast_app::settings::{AccelUnit, UNITS_MENU, VelocityUnit};
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
    h.run_steps(3);
    let g_top = h.state().spectra_panel().summary.y_top;
    assert!(g_top > 0.0, "{g_top}");
    assert_eq!(
        h.state().spectra_panel().summary.y_title,
        "acceleration, g peak"
    );

    h.get_by_label(UNITS_MENU).click();
    h.run_steps(2);
    h.get_by_label("m/s²").click();
    h.run_steps(3);
    assert_eq!(h.state().units().accel, AccelUnit::MetrePerS2);
    let si_top = h.state().spectra_panel().summary.y_top;
    assert!(
        (si_top / g_top - 9.806_65).abs() < 1e-3,
        "{si_top} m/s² for {g_top} g"
    );
    assert_eq!(
        h.state().spectra_panel().summary.y_title,
        "acceleration, m/s² peak"
    );

    h.key_press(egui::Key::Escape);
    h.get_by_label("Velocity").click();
    h.run_steps(3);
    let mm_top = h.state().spectra_panel().summary.y_top;
    h.get_by_label(UNITS_MENU).click();
    h.run_steps(2);
    h.get_by_label("in/s").click();
    h.run_steps(3);
    assert_eq!(h.state().units().velocity, VelocityUnit::InPerS);
    let in_top = h.state().spectra_panel().summary.y_top;
    assert!(
        (in_top * 25.4 / mm_top - 1.0).abs() < 1e-4,
        "{in_top} in/s for {mm_top} mm/s"
    );
    assert_eq!(
        h.state().spectra_panel().summary.y_title,
        "velocity, in/s RMS"
    );
}

/// Completes the screenshot the app asked for in the last frame with `image` (the test harness has no
/// renderer); returns whether one was asked for.
fn answer_screenshot(
    h: &mut egui_kittest::Harness<'static, spallcast_app::SpallcastApp>,
    image: &egui::ColorImage,
) -> bool {
    let requests: Vec<egui::ScreenshotCallback> = h
        .output()
        .viewport_output
        .values()
        .flat_map(|v| v.commands.iter())
        .filter_map(|c| match c {
            egui::ViewportCommand::Screenshot(cb) => Some(cb.clone()),
            _ => None,
        })
        .collect();
    let asked = !requests.is_empty();
    for cb in requests {
        cb.complete(std::sync::Arc::new(image.clone()));
    }
    asked
}

/// Issue 17 item 8: "Save plot" writes the plot on screen as a PNG (the window's pixels inside the
/// plot's rectangle) and an SVG drawn again from the same curves, markers and titles; a target that
/// is an `SQLite` database is refused (issue 16 item 1's guard, for this file too).
#[test]
fn save_plot_writes_a_png_of_the_plot_and_a_valid_svg() {
    use spallcast_app::plot_export::EXPORT_BUTTON;
    let fx = build_fixture();
    let out = tempfile::tempdir().unwrap();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
    h.run_steps(3);

    // Refused: the plant database itself as the target.
    assert!(
        h.state().spectra_panel().picture.is_some(),
        "a plot is on screen"
    );
    h.get_by_label(EXPORT_BUTTON).click();
    h.run_steps(3);
    assert!(
        h.query_by_label(PATH_FIELD_LABEL).is_some(),
        "no dialog here, so a typed path is asked for; status {:?}",
        h.state().status().map(|s| s.text.clone())
    );
    retype(&mut h, &fx.db.display().to_string());
    h.get_by_label("Save PNG and SVG").click();
    h.run_steps(2);
    assert!(
        h.query_by_label_contains("is an SQLite database").is_some(),
        "the prompt says why"
    );
    let base = out.path().join("pump de");
    retype(&mut h, &base.display().to_string());
    h.get_by_label("Save PNG and SVG").click();
    h.step();
    // A screenshot of the whole window, each pixel coloured by its position, so the crop is checked.
    let ppp = h.ctx.pixels_per_point();
    let size = h.ctx.content_rect().size() * ppp;
    let (w, hgt) = (size.x.round() as usize, size.y.round() as usize);
    let pixels = (0..w * hgt)
        .map(|i| egui::Color32::from_rgb((i % w % 256) as u8, (i / w % 256) as u8, 7))
        .collect();
    let image = egui::ColorImage::new([w, hgt], pixels);
    assert!(
        answer_screenshot(&mut h, &image),
        "the window asked for its screenshot"
    );
    h.run_steps(3);

    let status = h
        .state()
        .status()
        .map(|s| s.text.clone())
        .unwrap_or_default();
    assert!(status.starts_with("saved the plot to"), "{status}");
    let (_, rect) = h.state().spectra_panel().picture.clone().unwrap();
    let png = out.path().join("pump de.png");
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&png).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size().unwrap()];
    let info = reader.next_frame(&mut buf).unwrap();
    let x0 = (rect.min.x * ppp).round() as usize;
    let y0 = (rect.min.y * ppp).round() as usize;
    assert_eq!(
        (info.width as usize, info.height as usize),
        (
            (rect.max.x * ppp).round() as usize - x0,
            (rect.max.y * ppp).round() as usize - y0
        ),
        "the PNG is the plot's rectangle"
    );
    assert_eq!(
        &buf[0..3],
        &[(x0 % 256) as u8, (y0 % 256) as u8, 7],
        "its first pixel is the plot's top-left pixel of the window"
    );

    let svg = std::fs::read_to_string(out.path().join("pump de.svg")).unwrap();
    let mut reader = quick_xml::Reader::from_str(&svg);
    let (mut polylines, mut depth) = (0, 0_i32);
    loop {
        match reader.read_event() {
            Ok(quick_xml::events::Event::Start(e)) => {
                depth += 1;
                if e.name().as_ref() == b"polyline" {
                    polylines += 1;
                }
            }
            Ok(quick_xml::events::Event::End(_)) => depth -= 1,
            Ok(quick_xml::events::Event::Eof) => break,
            Ok(_) => {}
            Err(e) => panic!("the SVG is not well-formed XML: {e}"),
        }
    }
    assert_eq!(depth, 0, "every element closed");
    let drawn = h.state().spectra_panel().summary.drawn.len();
    assert!(drawn > 0);
    assert_eq!(polylines, drawn, "one curve per month drawn");
    assert!(svg.contains(&h.state().spectra_panel().summary.y_title));
    let picture = &h.state().spectra_panel().picture.as_ref().unwrap().0;
    let (lo, hi) = picture.x_range;
    let shown: Vec<&String> = picture
        .markers
        .iter()
        .filter(|(_, x)| (lo..=hi).contains(x))
        .map(|(l, _)| l)
        .collect();
    assert!(!shown.is_empty(), "the plot opens on its markers");
    for label in shown {
        assert!(
            svg.contains(&format!(">{label}</text>")),
            "marker {label} in the SVG"
        );
    }
}

/// The amplitude axis fits the curves and stays put: marker labels once hung from the top of the view,
/// and as the axis fits everything drawn, each frame lifted it a margin higher (the demo's stage-4
/// spectrum opened with its axis at ten times its highest peak).
#[test]
fn the_amplitude_axis_fits_the_curves_and_does_not_creep() {
    let fx = build_fixture();
    let mut h = harness(&fx.db, true);
    settle(&mut h);
    h.get_by_label(BEARING_LABEL).click();
    h.step();
    settle(&mut h);
    h.run_steps(5);
    let first = h.state().spectra_panel().summary.view_top;
    h.run_steps(60);
    let s = &h.state().spectra_panel().summary;
    assert!(s.y_top > 0.0 && !s.markers.is_empty(), "{s:?}");
    assert!(
        s.view_top <= 1.3 * s.y_top,
        "axis top {} for a highest peak {}",
        s.view_top,
        s.y_top
    );
    assert!(
        (s.view_top - first).abs() <= 1e-9 * first.abs().max(1.0),
        "axis top moved from {first} to {} without any input",
        s.view_top
    );
}
