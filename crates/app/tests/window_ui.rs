//! `egui_kittest` tests that drive the real app state on a small database built through the store API:
//! the notice, the plant tree, the bearing views, opening a database, keyboard steps and Find. Changes
//! to the data are in `window_ui_data.rs`, the spectra plot in `window_ui_spectra.rs`.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a broken fixture should fail loudly"
)]

mod common;

use common::{
    BEARING_LABEL, BPFO_ORDERS, DAYS, EVIDENCE, RPM, STAGES, build_fixture, harness,
    harness_on_bearing, retype, settle,
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
    let mut h = harness_on_bearing(&fx.db);
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
    let mut h = harness_on_bearing(&fx.db);
    // The latest call's evidence sentence is beside the plots.
    let history = h.state().history().unwrap();
    assert_eq!(
        history.stage_call.as_ref().map(|c| c.stage),
        Some(STAGES[3])
    );
    assert!(h.query_by_label(&format!("• {EVIDENCE}")).is_some());
    // The thresholds behind the calls are folded under the evidence, the same table as `spallcast
    // rules`: unfolding shows the location margin with its value.
    let margin = spallcast_analysis::location_rules::MARGIN_DB;
    let margin_line = format!("{} = {} {}", margin.id, margin.value, margin.unit);
    assert!(h.query_by_label(&margin_line).is_none(), "folded at first");
    h.get_by_label(spallcast_app::panels::bearing_ui::RULES_HEADER)
        .click();
    h.run_steps(2);
    assert!(h.query_by_label(&margin_line).is_some(), "{margin_line}");

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

/// "How right were we": the dates projected at each reading, shown under the life trend when asked,
/// and the ended life's projection scored against its replacement. The score is worked out here from
/// the IEEE PHM 2012 challenge formula (REFERENCES.md §10: `Er = 100·(actual − predicted)/actual`,
/// `A = exp(−ln(0.5)·Er/5)` when late), not with the project's function.
#[test]
fn track_record_plot_scores_the_ended_life() {
    use common::{OLD_END_OF_LIFE, OLD_REPLACE_BY, day_s};
    use spallcast_app::panels::track_record_ui::TOGGLE_LABEL;
    let fx = build_fixture();
    let mut h = harness_on_bearing(&fx.db);
    h.get_by_label("Life trend").click();
    h.run_steps(3);
    assert!(h.state().trend_panel().track.is_none(), "hidden at first");
    h.get_by_label(TOGGLE_LABEL).click();
    h.run_steps(3);
    let track = h
        .state()
        .trend_panel()
        .track
        .clone()
        .expect("the plot is shown");
    // Reading 1 (old life) and reading 4 (current life) carry forecasts.
    assert_eq!(track.replace_by_points, 2, "{track:?}");
    assert_eq!(track.end_of_life_points, 1, "{track:?}");
    assert_eq!(track.lives.len(), 2, "{track:?}");
    let old = &track.lives[0];
    assert_eq!(
        old.ended.map(|d| d.to_string()).as_deref(),
        Some("2026-02-01")
    );
    let record = old.record.expect("the ended life is scored");
    assert_eq!(record.scored, 1);
    // Taken 2026-01-14 09:30 UTC; replaced 2026-02-01; projected end of life 2026-02-10.
    let taken = day_s(DAYS[0]) + 9.5 * 3600.0;
    let actual = day_s("2026-02-01") - taken;
    let predicted = day_s(OLD_END_OF_LIFE) - taken;
    let er = 100.0 * (actual - predicted) / actual;
    assert!(er < 0.0, "the projection came late");
    let want = (-(0.5_f64.ln()) * er / 5.0).exp();
    let got = record.mean_end_of_life_score.unwrap();
    assert!((got - want).abs() < 1e-9, "score {got} vs {want}");
    // |2026-01-25 − 2026-02-01| = 7 days.
    let rb_error = (day_s(OLD_REPLACE_BY) - day_s("2026-02-01")).abs() / 86_400.0;
    assert!((record.median_abs_replace_by_error_days.unwrap() - rb_error).abs() < 1e-9);
    assert!((rb_error - 7.0).abs() < 1e-9);
    // The sentences are on screen; the current life is not scored.
    assert!(
        h.query_by_label(&old.sentence()).is_some(),
        "{}",
        old.sentence()
    );
    assert!(track.lives[1].ended.is_none() && track.lives[1].record.is_none());
    assert!(
        h.query_by_label(&track.lives[1].sentence()).is_some(),
        "{}",
        track.lives[1].sentence()
    );
}
