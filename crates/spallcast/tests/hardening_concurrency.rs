//! Two processes on one database: two `spallcast import`s at once, an import while another process
//! reads, and an import while another process holds the write lock. Nothing is corrupted, a waiting
//! import either finishes after the lock is released (busy timeout) or says the database is busy, and
//! the final contents are the union of what each import alone produces.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

mod common;

use std::time::{Duration, Instant};

use common::{Contents, contents, import_command, import_ok, readings_of, write_route};
use spallcast_store::Store;

#[test]
fn two_imports_at_once_give_the_union_of_both() {
    let tmp = tempfile::tempdir().unwrap();
    let a = write_route(tmp.path(), "day-a", 16, 8192, 12, None);
    let b = write_route(tmp.path(), "day-b", 16, 8192, 13, Some(3));
    let plant = tmp.path().join("plant.toml");

    // Each alone, into its own database: the expected union.
    let mut expected: Contents = Contents::new();
    for (route, name) in [(&a, "alone-a.db"), (&b, "alone-b.db")] {
        let db = tmp.path().join(name);
        import_ok(route, &db, &plant);
        expected.extend(contents(&db));
    }
    assert_eq!(expected.len(), 32);

    // Both at once into one database, plus a third import of folder A racing the first.
    let db = tmp.path().join("shared.db");
    let handles: Vec<_> = [a.clone(), b.clone(), a.clone()]
        .into_iter()
        .map(|route| {
            let (db, plant) = (db.clone(), plant.clone());
            std::thread::Builder::new()
                .name("test-import".into())
                .spawn(move || import_command(&route, &db, &plant).output().unwrap())
                .unwrap()
        })
        .collect();
    let mut busy = 0;
    for h in handles {
        let out = h.join().unwrap();
        if !out.status.success() {
            // Allowed only as the documented busy error.
            let err = String::from_utf8_lossy(&out.stderr);
            assert!(
                err.contains("busy"),
                "an import failed for another reason: {err}"
            );
            busy += 1;
        }
    }
    // Whatever waited too long is simply re-run, as the analyst would.
    for route in [&a, &b] {
        import_ok(route, &db, &plant);
    }
    println!("imports that reported busy: {busy}");
    assert_eq!(contents(&db), expected);
}

#[test]
fn a_reader_sees_only_complete_readings_while_an_import_runs() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-r", 24, 8192, 20, None);
    let plant = tmp.path().join("plant.toml");
    let reference_db = tmp.path().join("reference.db");
    import_ok(&route, &reference_db, &plant);
    let reference = contents(&reference_db);

    let db = tmp.path().join("shared.db");
    let mut child = import_command(&route, &db, &plant)
        .stdout(std::process::Stdio::null())
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let mut snapshots = Vec::new();
    let start = Instant::now();
    loop {
        let finished = child.try_wait().unwrap().is_some();
        if db.exists()
            && let Ok(store) = Store::open(&db)
        {
            let now = readings_of(&store, &db);
            for (key, value) in &now {
                assert_eq!(
                    reference.get(key),
                    Some(value),
                    "a reading seen mid-import differs: {key:?}"
                );
            }
            if let Some(&last) = snapshots.last() {
                assert!(
                    now.len() >= last,
                    "readings disappeared: {last} then {}",
                    now.len()
                );
            }
            snapshots.push(now.len());
        }
        if finished {
            break;
        }
        assert!(
            start.elapsed() < Duration::from_mins(1),
            "the import did not finish"
        );
        std::thread::sleep(Duration::from_millis(5));
    }
    assert!(child.wait().unwrap().success());
    println!("readings seen by the reader: {snapshots:?}");
    assert_eq!(snapshots.last().copied(), Some(reference.len()));
    assert_eq!(contents(&db), reference);
}

#[test]
fn an_import_waits_for_a_held_write_lock_then_finishes() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-w", 4, 4096, 21, None);
    let plant = tmp.path().join("plant.toml");
    let db = tmp.path().join("locked.db");
    drop(Store::open(&db).unwrap());

    // Another program (this test) takes the write lock for 1.5 s, shorter than the busy timeout.
    let conn = rusqlite::Connection::open(&db).unwrap();
    conn.execute_batch(
        "BEGIN IMMEDIATE; INSERT INTO area (name) VALUES ('held by another program');",
    )
    .unwrap();
    let start = Instant::now();
    let child = import_command(&route, &db, &plant).spawn().unwrap();
    std::thread::sleep(Duration::from_millis(1500));
    conn.execute_batch("ROLLBACK").unwrap();
    let out = child.wait_with_output().unwrap();
    assert!(out.status.success(), "the import did not wait for the lock");
    assert!(start.elapsed() >= Duration::from_millis(1500));
    assert_eq!(contents(&db).len(), 4);
}

#[test]
fn an_import_blocked_past_the_busy_timeout_says_the_database_is_busy_and_changes_nothing() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-x", 4, 4096, 22, None);
    let plant = tmp.path().join("plant.toml");
    let db = tmp.path().join("held.db");
    drop(Store::open(&db).unwrap());

    let conn = rusqlite::Connection::open(&db).unwrap();
    conn.execute_batch(
        "BEGIN IMMEDIATE; INSERT INTO area (name) VALUES ('held by another program');",
    )
    .unwrap();
    let out = import_command(&route, &db, &plant).output().unwrap();
    conn.execute_batch("ROLLBACK").unwrap();
    assert!(
        !out.status.success(),
        "the import claims success while the database was locked"
    );
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("busy"), "{err}");
    // The message also names the database file: see
    // `a_busy_error_during_an_import_names_the_database` below.
    drop(conn);
    assert!(contents(&db).is_empty());
}

/// Every error names the file it is about, also an `SQLite` error met after the database was opened
/// (a lock held by another program here).
#[test]
fn a_busy_error_during_an_import_names_the_database() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-y", 4, 4096, 23, None);
    let plant = tmp.path().join("plant.toml");
    let db = tmp.path().join("held.db");
    drop(Store::open(&db).unwrap());
    let conn = rusqlite::Connection::open(&db).unwrap();
    conn.execute_batch("BEGIN IMMEDIATE; INSERT INTO area (name) VALUES ('held');")
        .unwrap();
    let out = import_command(&route, &db, &plant).output().unwrap();
    conn.execute_batch("ROLLBACK").unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("held.db"),
        "the message does not name the database: {err}"
    );
}
