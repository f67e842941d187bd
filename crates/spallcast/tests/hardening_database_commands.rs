//! What the commands do with a database they should not write over or cannot fully read: `plan
//! export` refuses to write over any `SQLite` file, `demo` refuses to replace a database that is not a
//! demo, an implausible reading time is refused with its line, missing or stale stage calls are
//! completed by the next command, read commands refuse a file that is not a Spallcast database, CSV
//! cells that hide a formula are neutralised, and one bad stored row is left out with a warning.
//! The database file itself in bad shape (newer version, read-only, full disk) is in
//! `hardening_database.rs`.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

mod common;

use std::path::Path;

use common::{contents, import_ok, os, small_database, spallcast, write_route};

/// Issue 16 item 1: `plan export --out` naming the database (or its WAL, or any other `SQLite` file)
/// replaced the database with the CSV and said it wrote it.
#[test]
fn plan_export_refuses_to_write_over_the_database_or_any_sqlite_file() {
    let tmp = tempfile::tempdir().unwrap();
    let db = small_database(tmp.path(), "plant.sqlite");
    let other = small_database(tmp.path(), "other.sqlite");
    let before = contents(&db);
    let other_bytes = std::fs::read(&other).unwrap();
    let wal = tmp.path().join("plant.sqlite-wal");
    let targets = [db.clone(), wal, other.clone()];
    for out in &targets {
        let o = spallcast(&[
            os("plan"),
            os("export"),
            os("--db"),
            os(&db),
            os("--format"),
            os("csv"),
            os("--out"),
            os(out),
        ]);
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(
            !o.status.success(),
            "plan export over {} claims success: {}",
            out.display(),
            String::from_utf8_lossy(&o.stdout)
        );
        let name = out.file_name().unwrap().to_string_lossy();
        assert!(err.contains(name.as_ref()), "{err}");
        assert!(err.contains("--overwrite"), "no way out named: {err}");
    }
    assert_eq!(contents(&db), before, "the database was damaged");
    assert_eq!(std::fs::read(&other).unwrap(), other_bytes);
    // An ordinary output file is still written.
    let csv = tmp.path().join("list.csv");
    let o = spallcast(&[
        os("plan"),
        os("export"),
        os("--db"),
        os(&db),
        os("--format"),
        os("csv"),
        os("--out"),
        os(&csv),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(csv.is_file());
}

/// Issue 16 item 2: `spallcast demo --db real.sqlite` replaced a real database without a word.
#[test]
fn demo_refuses_to_replace_a_database_that_is_not_a_demo() {
    let tmp = tempfile::tempdir().unwrap();
    let db = small_database(tmp.path(), "real.sqlite");
    let before = contents(&db);
    let o = spallcast(&[os("demo"), os("--db"), os(&db)]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(!o.status.success(), "demo replaced a real database: {err}");
    assert!(err.contains("real.sqlite"), "{err}");
    assert!(err.contains("--replace"), "no way out named: {err}");
    assert_eq!(contents(&db), before);
    // A file that is not a database at all is refused too.
    let notes = tmp.path().join("notes.txt");
    std::fs::write(&notes, "my notes\n").unwrap();
    let o = spallcast(&[os("demo"), os("--db"), os(&notes)]);
    assert!(!o.status.success());
    assert_eq!(std::fs::read_to_string(&notes).unwrap(), "my notes\n");
}

/// Issue 16 item 3: one reading dated in the year 9999 (stored as year 10000) made every later
/// command fail. It is refused at the import with its line, as is a time a month ahead; the other
/// readings import and `bearings` reads them.
#[test]
fn an_implausible_reading_time_is_refused_at_the_import_with_its_line() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-t", 4, 4096, 10, None);
    let manifest = route.join("route.csv");
    let text = std::fs::read_to_string(&manifest).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_owned).collect();
    let mut far = lines[2].split(',').map(str::to_owned).collect::<Vec<_>>();
    far[2] = "9999-12-31T23:59:59-12:00".to_owned();
    lines[2] = far.join(",");
    let mut soon = lines[3].split(',').map(str::to_owned).collect::<Vec<_>>();
    soon[2] = (chrono::Utc::now() + chrono::Duration::days(30)).to_rfc3339();
    lines[3] = soon.join(",");
    std::fs::write(&manifest, lines.join("\n") + "\n").unwrap();
    let db = tmp.path().join("times.db");
    let summary = import_ok(&route, &db, &tmp.path().join("plant.toml"));
    assert_eq!(summary["new_readings"].as_u64(), Some(2), "{summary}");
    let rejected = summary["rejected"].as_array().unwrap();
    assert_eq!(rejected.len(), 2, "{summary}");
    for (r, line) in rejected.iter().zip([3, 4]) {
        assert_eq!(r["line"].as_u64(), Some(line), "{summary}");
        assert!(
            r["reason"].as_str().unwrap().contains("taken_at"),
            "{summary}"
        );
    }
    let bearings = |db: &Path| spallcast(&[os("bearings"), os("--db"), os(db)]);
    let o = bearings(&db);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));

    assert!(
        String::from_utf8_lossy(&o.stdout).contains("HC-M1"),
        "{}",
        String::from_utf8_lossy(&o.stdout)
    );
}

/// (reading id → (stage, version)) of every stored stage call.
fn stage_calls(db: &Path) -> std::collections::BTreeMap<i64, (u8, String)> {
    let conn = rusqlite::Connection::open(db).unwrap();
    let mut stmt = conn
        .prepare("SELECT reading_id, stage, version FROM stage_call")
        .unwrap();
    stmt.query_map([], |r| Ok((r.get(0)?, (r.get(1)?, r.get(2)?))))
        .unwrap()
        .collect::<Result<_, _>>()
        .unwrap()
}

/// Issue 16 item 4 (deterministic half; the kill half is in `hardening_crash.rs`): stage calls that
/// are missing or written by an older stage logic are completed by the next command that reads them:
/// a re-import with nothing new, or `plan export`.
#[test]
fn missing_or_stale_stage_calls_are_completed_by_the_next_command() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-s", 8, 4096, 11, None);
    let plant = tmp.path().join("plant.toml");
    let db = tmp.path().join("calls.db");
    import_ok(&route, &db, &plant);
    let complete = stage_calls(&db);
    assert_eq!(complete.len(), 8);
    let damage = |db: &Path| {
        let conn = rusqlite::Connection::open(db).unwrap();
        conn.execute_batch(
            "DELETE FROM stage_call WHERE reading_id IN (SELECT reading_id FROM stage_call ORDER BY reading_id DESC LIMIT 3);
             UPDATE stage_call SET version = 'older-stage-logic' WHERE reading_id = (SELECT min(reading_id) FROM stage_call);",
        )
        .unwrap();
    };
    damage(&db);
    assert_eq!(stage_calls(&db).len(), 5);
    let summary = import_ok(&route, &db, &plant);
    assert_eq!(summary["new_readings"].as_u64(), Some(0), "{summary}");
    assert_eq!(stage_calls(&db), complete, "a re-import left calls missing");

    damage(&db);
    let out = tmp.path().join("list.csv");
    let o = spallcast(&[
        os("plan"),
        os("export"),
        os("--db"),
        os(&db),
        os("--format"),
        os("csv"),
        os("--out"),
        os(&out),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert_eq!(stage_calls(&db), complete, "plan export left calls missing");
}

/// Issue 16 item 8: a zero-byte file given to a read command was rewritten as an empty database.
#[test]
fn read_commands_refuse_a_file_that_is_not_a_spallcast_database() {
    let tmp = tempfile::tempdir().unwrap();
    let empty = tmp.path().join("empty.db");
    std::fs::write(&empty, b"").unwrap();
    let bare = tmp.path().join("bare.db");
    rusqlite::Connection::open(&bare)
        .unwrap()
        .execute_batch("CREATE TABLE notes (t TEXT);")
        .unwrap();
    let bare_bytes = std::fs::read(&bare).unwrap();
    let out = tmp.path().join("list.csv");
    for db in [&empty, &bare] {
        let runs = [
            spallcast(&[os("bearings"), os("--db"), os(db)]),
            spallcast(&[
                os("plan"),
                os("export"),
                os("--db"),
                os(db),
                os("--format"),
                os("csv"),
                os("--out"),
                os(&out),
            ]),
        ];
        for o in runs {
            let err = String::from_utf8_lossy(&o.stderr);
            assert!(!o.status.success(), "accepted {}: {err}", db.display());
            assert!(err.contains("not a Spallcast database"), "{err}");
            let name = db.file_name().unwrap().to_string_lossy();
            assert!(err.contains(name.as_ref()), "{err}");
        }
    }
    assert_eq!(std::fs::metadata(&empty).unwrap().len(), 0);
    assert_eq!(std::fs::read(&bare).unwrap(), bare_bytes);
    assert!(!out.exists());
}

/// Issue 16 item 12: cells a spreadsheet still reads as a formula after leading spaces or line
/// breaks, or with a full-width sign, are neutralised too.
#[test]
fn csv_cells_that_hide_a_formula_are_neutralised() {
    use spallcast_plan::csv_export::neutralise;
    for cell in [
        " =1+1",
        "  +1",
        "\n=cmd",
        "\r\n@x",
        " \t-2",
        "\u{FF1D}1+1",
        "\u{FF0B}1",
        "\u{FF0D}1",
        "\u{FF20}x",
        " \u{FF1D}1",
    ] {
        assert!(
            neutralise(cell).starts_with('\''),
            "{cell:?} -> {:?}",
            neutralise(cell)
        );
    }
    for cell in ["HC-M1", "plain text", " spaced", "1.5", ""] {
        assert_eq!(neutralise(cell), cell);
    }
}

/// Issue 16 item 3, second half: one stored row with a timestamp this build cannot read (year 10000,
/// as an older build could store) made `bearings` and every export fail. It is left out with a
/// warning naming it, and the commands work (seen failing before the fix: "loading the lives of …:
/// bad timestamp").
#[test]
fn one_bad_stored_row_is_left_out_with_a_warning_not_the_end_of_every_command() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-z", 4, 4096, 21, None);
    let db = tmp.path().join("bad-row.db");
    import_ok(&route, &db, &tmp.path().join("plant.toml"));
    let bad_id: i64 = {
        let conn = rusqlite::Connection::open(&db).unwrap();
        let id = conn
            .query_row("SELECT min(id) FROM reading", [], |r| r.get(0))
            .unwrap();
        conn.execute(
            "UPDATE reading SET taken_at_utc = '+10000-01-01T11:59:59.000Z' WHERE id = ?1",
            [id],
        )
        .unwrap();
        id
    };
    let o = spallcast(&[os("bearings"), os("--db"), os(&db)]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(
        err.contains(&format!("warning: reading {bad_id} left out")),
        "the row is named: {err}"
    );
    let out = tmp.path().join("plan.csv");
    let o = spallcast(&[
        os("plan"),
        os("export"),
        os("--db"),
        os(&db),
        os("--format"),
        os("csv"),
        os("--out"),
        os(&out),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let o = spallcast(&[os("bearing"), os("HC-M1/DE"), os("--db"), os(&db)]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
}
