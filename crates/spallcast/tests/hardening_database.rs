//! The database file itself in bad shape: written by a newer version, read-only, or on a disk that
//! fills up during an import; and a full disk during an export. Each fails with a clear message
//! naming the file and loses nothing.
//!
//! The read-only and full-disk cases need a small file system of their own: as root the tests mount
//! a tmpfs (and unmount it afterwards); where that is not possible they print why and skip. Root
//! ignores file permissions, so `chmod 0444` proves nothing there; as root a read-only remount of the
//! tmpfs is used instead, and as another user the chmod.
//! (A file that is not `SQLite` is tested in `crates/store/tests/hardening_hostile_plant.rs` and by the store's own
//! tests.)

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

mod common;

use common::{contents, import_command, import_ok, os, small_database, spallcast, write_route};
use spallcast_store::{PlantFile, SCHEMA_VERSION};
use spallcast_testkit::tmpfs::{Tmpfs, fill, is_root};

#[test]
fn a_database_from_a_newer_version_is_refused_and_left_as_it_was() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-n", 4, 4096, 3, None);
    let later = write_route(tmp.path(), "day-m", 4, 4096, 4, None);
    let plant = tmp.path().join("plant.toml");
    let db = tmp.path().join("future.db");
    import_ok(&route, &db, &plant);
    let before = contents(&db);
    {
        let conn = rusqlite::Connection::open(&db).unwrap();
        conn.pragma_update(None, "user_version", SCHEMA_VERSION + 40)
            .unwrap();
    }
    let bytes = std::fs::read(&db).unwrap();

    let out = import_command(&later, &db, &plant).output().unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("newer") && err.contains("future.db"), "{err}");
    assert_eq!(
        std::fs::read(&db).unwrap(),
        bytes,
        "the newer database was modified"
    );
    let names: Vec<String> = std::fs::read_dir(tmp.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert!(
        !names.iter().any(|n| {
            std::path::Path::new(n)
                .extension()
                .is_some_and(|e| e.eq_ignore_ascii_case("bak"))
        }),
        "a backup or migration was attempted: {names:?}"
    );

    // Nothing was lost: with its version set back, the file holds exactly what it held.
    {
        let conn = rusqlite::Connection::open(&db).unwrap();
        conn.pragma_update(None, "user_version", SCHEMA_VERSION)
            .unwrap();
    }
    assert_eq!(contents(&db), before);
}

#[test]
fn a_read_only_database_is_refused_with_a_clear_message_and_left_as_it_was() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-o", 4, 4096, 5, None);
    let later = write_route(tmp.path(), "day-p", 4, 4096, 6, None);
    let plant = tmp.path().join("plant.toml");
    let made = tmp.path().join("made.db");
    import_ok(&route, &made, &plant);
    let before = contents(&made);

    let _mount;
    let db;
    if is_root() {
        match Tmpfs::mount(&tmp.path().join("ro"), "4m") {
            Ok(m) => {
                db = m.dir.join("readonly.db");
                std::fs::copy(&made, &db).unwrap();
                m.remount("ro");
                _mount = m;
            }
            Err(why) => {
                println!(
                    "SKIPPED: root ignores chmod, and a read-only tmpfs is not available: {why}"
                );
                return;
            }
        }
    } else {
        db = tmp.path().join("readonly.db");
        std::fs::copy(&made, &db).unwrap();
        let mut perm = std::fs::metadata(&db).unwrap().permissions();
        std::os::unix::fs::PermissionsExt::set_mode(&mut perm, 0o444);
        std::fs::set_permissions(&db, perm).unwrap();
    }
    let bytes = std::fs::read(&db).unwrap();

    let out = import_command(&later, &db, &plant).output().unwrap();
    assert!(
        !out.status.success(),
        "an import into a read-only database claims success"
    );
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("readonly.db"),
        "the message does not name the database: {err}"
    );
    assert_eq!(
        std::fs::read(&db).unwrap(),
        bytes,
        "the read-only database changed"
    );
    // The original is intact and complete.
    assert_eq!(contents(&made), before);
}

#[test]
fn a_disk_that_fills_during_an_import_leaves_complete_readings_and_the_rerun_completes() {
    let tmp = tempfile::tempdir().unwrap();
    let route = write_route(tmp.path(), "day-f", 24, 8192, 7, Some(2));
    let plant = tmp.path().join("plant.toml");
    let reference_db = tmp.path().join("reference.db");
    import_ok(&route, &reference_db, &plant);
    let reference = contents(&reference_db);

    let mount = match Tmpfs::mount(&tmp.path().join("small"), "512k") {
        Ok(m) => m,
        Err(why) => {
            println!("SKIPPED: a full disk needs a small tmpfs: {why}");
            return;
        }
    };
    let db = mount.dir.join("plant.db");
    let out = import_command(&route, &db, &plant).output().unwrap();
    assert!(
        !out.status.success(),
        "24 readings of 32 KiB fitted in 512 KiB?"
    );
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("full"),
        "the message does not say the disk is full: {err}"
    );
    assert!(
        err.contains("plant.db"),
        "the message does not name the database: {err}"
    );

    // What was written is sound and complete, reading by reading. Reading it needs a little room (SQLite
    // creates its shared-memory index beside a WAL database on opening), as an analyst would free some.
    mount.remount("size=1m");
    let partial = contents(&db);
    assert!(partial.len() < reference.len());
    for (key, value) in &partial {
        assert_eq!(reference.get(key), Some(value), "{key:?}");
    }
    // Space is freed; the same import runs again and finishes with the uninterrupted contents.
    mount.remount("size=16m");
    let summary = import_ok(&route, &db, &plant);
    assert_eq!(
        summary["duplicates"].as_u64(),
        Some(partial.len() as u64),
        "{summary}"
    );
    assert_eq!(contents(&db), reference);
    println!(
        "readings written before the disk filled: {} of {}",
        partial.len(),
        reference.len()
    );
}

#[test]
fn a_full_disk_during_an_export_keeps_the_previous_file() {
    let tmp = tempfile::tempdir().unwrap();
    let mount = match Tmpfs::mount(&tmp.path().join("export"), "64k") {
        Ok(m) => m,
        Err(why) => {
            println!("SKIPPED: a full disk needs a small tmpfs: {why}");
            return;
        }
    };
    let list = mount.dir.join("replacements.csv");
    let previous = "machine,position,outage\nHC-M1,DE,spring\n".repeat(40);
    spallcast_plan::atomic::write_atomic(&list, previous.as_bytes()).unwrap();
    fill(&mount.dir);

    let bigger = "machine,position,outage\nHC-M1,NDE,autumn\n".repeat(4000);
    let err = spallcast_plan::atomic::write_atomic(&list, bigger.as_bytes()).unwrap_err();
    assert!(err.to_string().contains("replacements.csv"), "{err}");
    assert_eq!(
        std::fs::read_to_string(&list).unwrap(),
        previous,
        "the previous export was damaged"
    );
    let mut names: Vec<String> = std::fs::read_dir(&mount.dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(
        names,
        vec!["filler".to_owned(), "replacements.csv".to_owned()],
        "a temporary file was left"
    );
}

/// The store's plant-file export (`PlantFile::write`) on a full disk must not destroy the plant file it
/// replaces: the analyst's hand-edited file is the only copy of the hierarchy outside the database.
#[test]
fn a_full_disk_during_a_plant_file_export_keeps_the_previous_file() {
    let tmp = tempfile::tempdir().unwrap();
    let mount = match Tmpfs::mount(&tmp.path().join("plantfs"), "64k") {
        Ok(m) => m,
        Err(why) => {
            println!("SKIPPED: a full disk needs a small tmpfs: {why}");
            return;
        }
    };
    let file = mount.dir.join("plant.toml");
    std::fs::write(&file, common::PLANT).unwrap();
    fill(&mount.dir);
    let mut plant = PlantFile::parse(common::PLANT, &file).unwrap();
    plant.site.name = "x".repeat(200_000);
    let err = plant.write(&file).unwrap_err();
    assert!(err.to_string().contains("plant.toml"), "{err}");
    assert_eq!(
        std::fs::read_to_string(&file).unwrap(),
        common::PLANT,
        "the plant file was damaged"
    );
}

/// Issue 16 item 9: reading a read-only database needs no writes, and an error names the database
/// once, without repeated text.
#[test]
fn read_commands_work_on_a_read_only_database() {
    let tmp = tempfile::tempdir().unwrap();
    let made = small_database(tmp.path(), "made.db");
    let mount = match Tmpfs::mount(&tmp.path().join("ro"), "4m") {
        Ok(m) => m,
        Err(why) => {
            println!("SKIPPED: a read-only file system needs a tmpfs: {why}");
            return;
        }
    };
    let db = mount.dir.join("readonly.db");
    std::fs::copy(&made, &db).unwrap();
    // Stage calls out of date, as after an upgrade: they cannot be completed here.
    rusqlite::Connection::open(&db)
        .unwrap()
        .execute_batch("DELETE FROM stage_call WHERE reading_id = (SELECT min(id) FROM reading);")
        .unwrap();
    mount.remount("ro");
    let o = spallcast(&[os("bearings"), os("--db"), os(&db)]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        o.status.success(),
        "bearings on a read-only database: {err}"
    );
    assert!(
        String::from_utf8_lossy(&o.stdout).contains("HC-M1"),
        "{}",
        String::from_utf8_lossy(&o.stdout)
    );
    assert_eq!(err.lines().count(), 1, "one warning line: {err}");
    assert!(
        err.contains("read-only") && err.contains("readonly.db"),
        "{err}"
    );
    let o = spallcast(&[os("bearing"), os("HC-M1/DE"), os("--db"), os(&db)]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
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
    // A write into it fails naming the database once, without repeated text.
    let later = write_route(tmp.path(), "day-w", 2, 4096, 12, None);
    let o = import_command(&later, &db, &tmp.path().join("plant.toml"))
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(!o.status.success());
    assert_eq!(err.matches("readonly.db").count(), 1, "{err}");
    assert!(err.matches("read").count() <= 2, "repeated text: {err}");
}
