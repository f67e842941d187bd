//! The analyst's own records: notes on a bearing (validated, listed by day) and baseline marks (one
//! life's readings; a change makes the position's stage calls stale so they are recomputed).
#![allow(clippy::unwrap_used, reason = "tests: a panic is a failure")]
mod common;

use std::path::Path;

use chrono::NaiveDate;
use common::{PLANT, Row, TestAnalyzer, quiet, sine, write_manifest, write_wav};
use spallcast_store::{NewNote, NewStageCall, NoteKind, PlantFile, Store, StoreError};

const FS: f64 = 8192.0;
const N: usize = 4096;

fn store_with_two_days(dir: &Path) -> (Store, Vec<i64>) {
    let mut store = Store::open(&dir.join("plant.db")).unwrap();
    store
        .apply_plant(&PlantFile::parse(PLANT, Path::new("plant.toml")).unwrap())
        .unwrap();
    for (k, day) in ["2026-04-14", "2026-05-14"].iter().enumerate() {
        let route = dir.join(format!("r{k}"));
        std::fs::create_dir_all(&route).unwrap();
        write_wav(&route.join("a.wav"), sine(1.0 + k as f64, 100.0, FS, N), FS);
        write_manifest(
            &route,
            &[Row::new(
                "a.wav",
                "IN-P1-MNDE-H",
                &format!("{day}T09:00:00+00:00"),
            )],
        );
        store
            .import_route(&route, &TestAnalyzer::new("t1"), &mut quiet())
            .unwrap();
    }
    let ids: Vec<i64> = store
        .readings_of_position(position(&store))
        .unwrap()
        .iter()
        .map(|r| r.id)
        .collect();
    assert_eq!(ids.len(), 2);
    (store, ids)
}

fn position(store: &Store) -> i64 {
    store.plant_tree().unwrap().areas[0].machines[0].bearings[0].position_id
}

fn d(s: &str) -> NaiveDate {
    s.parse().unwrap()
}

#[test]
fn notes_are_validated_and_listed_by_day() {
    let tmp = tempfile::tempdir().unwrap();
    let (mut store, ids) = store_with_two_days(tmp.path());
    let pos = position(&store);
    let note = |day: &str, text: &str, reading: Option<i64>| NewNote {
        position_id: pos,
        reading_id: reading,
        on_day: d(day),
        kind: NoteKind::Lubrication,
        text: text.to_owned(),
    };
    store
        .add_note(&note("2026-05-20", "  regreased  ", None))
        .unwrap();
    store
        .add_note(&note("2026-05-01", "noisy at start-up", Some(ids[1])))
        .unwrap();
    let notes = store.notes(pos).unwrap();
    assert_eq!(notes.len(), 2);
    assert_eq!(notes[0].on_day, d("2026-05-01"), "oldest day first");
    assert_eq!(notes[1].text, "regreased", "trimmed");
    assert_eq!(notes[0].reading_id, Some(ids[1]));
    for bad in ["", "   ", "a\u{0}b", &"x".repeat(2001)] {
        let e = store.add_note(&note("2026-05-20", bad, None)).unwrap_err();
        assert!(matches!(e, StoreError::Invalid(_)), "{bad:?}: {e}");
    }
    // A reading of another bearing is refused.
    let other = NewNote {
        position_id: pos + 1,
        ..note("2026-05-20", "x", Some(ids[0]))
    };
    assert!(store.add_note(&other).is_err());
    store.delete_note(notes[0].id).unwrap();
    assert_eq!(store.notes(pos).unwrap().len(), 1);
    assert!(store.delete_note(notes[0].id).is_err(), "deleted once");
    assert_eq!(
        NoteKind::parse(" Maintenance "),
        Some(NoteKind::Maintenance)
    );
    assert_eq!(NoteKind::parse("oil"), None);
}

#[test]
fn baseline_marks_replace_each_other_and_make_calls_stale() {
    let tmp = tempfile::tempdir().unwrap();
    let (mut store, ids) = store_with_two_days(tmp.path());
    let pos = position(&store);
    let calls: Vec<NewStageCall> = ids
        .iter()
        .map(|id| NewStageCall {
            reading_id: *id,
            stage: 0,
            evidence: serde_json::json!({}),
        })
        .collect();
    store.put_stage_calls(&calls, "v1").unwrap();
    assert!(
        store.positions_with_stale_calls("v1").unwrap().is_empty(),
        "fresh calls"
    );
    std::thread::sleep(std::time::Duration::from_millis(5));
    store.set_baseline(pos, &[ids[1]]).unwrap();
    let marked: Vec<bool> = store
        .readings_of_position(pos)
        .unwrap()
        .iter()
        .map(|r| r.baseline)
        .collect();
    assert_eq!(marked, vec![false, true]);
    assert_eq!(
        store.positions_with_stale_calls("v1").unwrap(),
        vec![pos],
        "a baseline change makes the bearing's calls stale"
    );
    std::thread::sleep(std::time::Duration::from_millis(5));
    store.put_stage_calls(&calls, "v1").unwrap();
    assert!(store.positions_with_stale_calls("v1").unwrap().is_empty());
    // A new mark replaces the old one on the same life; clearing forgets them all.
    store.set_baseline(pos, &[ids[0]]).unwrap();
    let marked: Vec<bool> = store
        .readings_of_position(pos)
        .unwrap()
        .iter()
        .map(|r| r.baseline)
        .collect();
    assert_eq!(marked, vec![true, false]);
    store.set_baseline(pos, &[]).unwrap();
    assert!(
        store
            .readings_of_position(pos)
            .unwrap()
            .iter()
            .all(|r| !r.baseline)
    );
    // A reading of another bearing, or an unknown one, is refused and changes nothing.
    assert!(store.set_baseline(pos + 1, &[ids[0]]).is_err());
    assert!(store.set_baseline(pos, &[ids[0], 999_999]).is_err());
    assert!(
        store
            .readings_of_position(pos)
            .unwrap()
            .iter()
            .all(|r| !r.baseline)
    );
}
