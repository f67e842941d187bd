//! Opening, upgrading and copying databases.

use super::*;

#[test]
fn fresh_database_is_current_with_wal_and_foreign_keys() {
    let dir = tempfile::tempdir().unwrap();
    let store = Store::open(&dir.path().join("p.db")).unwrap();
    assert_eq!(store.schema_version().unwrap(), SCHEMA_VERSION);
    let mode: String = store
        .conn
        .pragma_query_value(None, "journal_mode", |r| r.get(0))
        .unwrap();
    assert_eq!(mode.to_lowercase(), "wal");
    let fk: i64 = store
        .conn
        .pragma_query_value(None, "foreign_keys", |r| r.get(0))
        .unwrap();
    assert_eq!(fk, 1);
    // Large pages for waveform blobs (set before WAL, or SQLite keeps 4 KiB).
    let page: i64 = store
        .conn
        .pragma_query_value(None, "page_size", |r| r.get(0))
        .unwrap();
    assert_eq!(page, PAGE_SIZE);
    // A fresh file has nothing to back up.
    assert!(!dir.path().join("p.db.v0.bak").exists());
}

#[test]
fn migration_backs_up_the_older_file_first() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("old.db");
    {
        let store = Store::open_to_version(&path, 1).unwrap();
        assert_eq!(store.schema_version().unwrap(), 1);
        store
            .conn
            .execute("INSERT INTO area (name) VALUES ('Old area')", [])
            .unwrap();
    }
    let store = Store::open(&path).unwrap();
    assert_eq!(store.schema_version().unwrap(), SCHEMA_VERSION);
    let backup = dir.path().join("old.db.v1.bak");
    assert!(backup.is_file(), "backup beside the file");
    let old = Connection::open(&backup).unwrap();
    let v: i64 = old
        .pragma_query_value(None, "user_version", |r| r.get(0))
        .unwrap();
    assert_eq!(v, 1);
    let name: String = old
        .query_row("SELECT name FROM area", [], |r| r.get(0))
        .unwrap();
    assert_eq!(name, "Old area");
    // Opening again migrates nothing and makes no second backup.
    drop(store);
    let _again = Store::open(&path).unwrap();
    assert!(!dir.path().join("old.db.v1.1.bak").exists());
}

#[test]
fn migration_5_moves_results_to_one_vocabulary() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("v4.db");
    {
        let store = Store::open_to_version(&path, 4).unwrap();
        // Result rows only (no plant): their reading rows are not needed for this check.
        store
            .conn
            .pragma_update(None, "foreign_keys", "OFF")
            .unwrap();
        store
            .conn
            .execute_batch(
                r#"
INSERT INTO analysis VALUES (1, 'spallcast-analysis-2', '{"diagnosis":"outer race"}', 'then');
INSERT INTO reading_scalar VALUES (1, 'accel_rms_g', 0.5), (1, 'stage.accel_rms_g', 0.5),
(1, 'accel_peak_g', 2.0), (1, 'band_ultrasonic_rms_g', 0.1), (1, 'iso_zone_index', 1.0),
(1, 'envelope_bpfo_score_db', 9.0), (1, 'stage.kurtosis', 3.1), (2, 'kurtosis', 4.0);
INSERT INTO stage_call VALUES (1, 2, 'spallcast-stage-1', '{"call":{"stage":2},"forecast":null,"point":"P"}', 'then', 1, 't'),
(2, 1, 'other', '{"evidence":["x"]}', 'then', 1, 't');
"#,
            )
            .unwrap();
    }
    let store = Store::open(&path).unwrap();
    let names: Vec<(i64, String)> = store
        .conn
        .prepare("SELECT reading_id, name FROM reading_scalar ORDER BY reading_id, name")
        .unwrap()
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    let expect = [
        (1, "stage.accel_peak_g"),
        (1, "stage.accel_rms_g"),
        (1, "stage.band.ultrasonic_rms_g"),
        (1, "stage.kurtosis"),
        (2, "stage.kurtosis"),
    ];
    assert_eq!(
        names,
        expect.map(|(i, n)| (i, n.to_owned())).to_vec(),
        "flat names renamed where no twin, dropped where one exists"
    );
    let (version, label): (String, Option<String>) = store
        .conn
        .query_row("SELECT version, diagnosis FROM analysis", [], |r| {
            Ok((r.get(0)?, r.get(1)?))
        })
        .unwrap();
    assert_ne!(version, "spallcast-analysis-2", "marked stale");
    assert_eq!(
        label, None,
        "filled when re-analysed, not read from the document"
    );
    let evidence: Vec<String> = store
        .conn
        .prepare("SELECT evidence FROM stage_call ORDER BY reading_id")
        .unwrap()
        .query_map([], |r| r.get(0))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    let first: serde_json::Value = serde_json::from_str(&evidence[0]).unwrap();
    assert_eq!(first["schema_version"], 1);
    assert_eq!(first["point"], "P");
    assert_eq!(
        evidence[1], r#"{"evidence":["x"]}"#,
        "other shapes left alone"
    );
}

#[test]
fn migration_7_moves_waveforms_to_their_own_table() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("v6.db");
    {
        let store = Store::open_to_version(&path, 6).unwrap();
        store
            .conn
            .pragma_update(None, "foreign_keys", "OFF")
            .unwrap();
        store
            .conn
            .execute_batch(
                "INSERT INTO reading (id, point_id, position_id, taken_at_utc, utc_offset_s, route_day,
                    shaft_hz, sample_rate_hz, units, sample_count, waveform, source_file,
                    content_sha256, imported_at)
                 VALUES (1, 1, 1, 't', 0, '2026-01-01', 25.0, 1000.0, 'g', 2, x'0000803f000000c0',
                    'a.wav', 'h1', 'now'),
                    (2, 1, 1, 't2', 0, '2026-01-01', 25.0, 1000.0, 'g', 0, NULL, 'b.wav', 'h2', 'now');",
            )
            .unwrap();
    }
    let store = Store::open(&path).unwrap();
    let rows: Vec<(i64, Vec<u8>)> = store
        .conn
        .prepare("SELECT reading_id, samples FROM waveform ORDER BY reading_id")
        .unwrap()
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
        .unwrap()
        .map(Result::unwrap)
        .collect();
    assert_eq!(
        rows.len(),
        1,
        "a reading without samples has no waveform row"
    );
    assert_eq!(
        crate::queries::decode_waveform(&rows[0].1),
        vec![1.0_f32, -2.0],
        "the samples moved intact"
    );
    let has_column: i64 = store
        .conn
        .query_row(
            "SELECT count(*) FROM pragma_table_info('reading') WHERE name = 'waveform'",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(has_column, 0, "the old column is gone");
}

#[test]
fn newer_database_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("new.db");
    {
        let conn = Connection::open(&path).unwrap();
        conn.pragma_update(None, "user_version", SCHEMA_VERSION + 1)
            .unwrap();
    }
    let err = Store::open(&path).err().unwrap();
    assert!(matches!(err, StoreError::NewerSchema { found, .. } if found == SCHEMA_VERSION + 1));
    assert!(err.to_string().contains("newer"), "{err}");
    assert!(err.to_string().contains("new.db"), "{err}");
}

#[test]
fn a_text_file_is_not_a_database() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("notes.db");
    std::fs::write(&path, "these are my notes, not a database\n".repeat(200)).unwrap();
    let err = Store::open(&path).err().unwrap();
    assert!(matches!(err, StoreError::NotADatabase { .. }), "{err:?}");
    assert!(err.to_string().contains("notes.db"), "{err}");
}

#[test]
fn a_held_write_lock_gives_a_busy_error() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("busy.db");
    let store = Store::open(&path).unwrap();
    store
        .conn
        .busy_timeout(std::time::Duration::from_millis(50))
        .unwrap();
    let other = Connection::open(&path).unwrap();
    other
        .execute_batch("BEGIN IMMEDIATE; INSERT INTO area (name) VALUES ('x');")
        .unwrap();
    let err = StoreError::from(
        store
            .conn
            .execute("INSERT INTO area (name) VALUES ('y')", [])
            .unwrap_err(),
    );
    assert!(err.to_string().contains("busy"), "{err}");
    other.execute_batch("COMMIT").unwrap();
}
