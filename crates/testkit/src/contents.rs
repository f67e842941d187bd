//! What a database holds about its readings, read through the store and checked on the way: the file
//! passes `PRAGMA integrity_check`, every reading has its analysis row and scalars, and none is stored
//! twice.
#![allow(
    clippy::unwrap_used,
    reason = "test fixtures: a failure here is a broken test"
)]

use std::collections::BTreeMap;
use std::path::Path;

use spallcast_store::Store;

/// (point, `taken_at` UTC, sha256) of a reading.
pub type Key = (String, String, String);
/// Suspect flag, analyzer version and scalars of a reading.
pub type Value = (Option<String>, String, BTreeMap<String, f64>);
/// The readings of a database.
pub type Contents = BTreeMap<Key, Value>;

/// Everything the database holds about its readings. Fails if `PRAGMA integrity_check` is not `ok`,
/// if a reading has no analysis row or no scalars, or if a reading is stored twice.
pub fn contents(db: &Path) -> Contents {
    let store = Store::open(db).unwrap();
    contents_of(&store, db)
}

/// As [`contents`], through a store that is already open.
pub fn contents_of(store: &Store, db: &Path) -> Contents {
    let out = readings_of(store, db);
    assert_eq!(
        out.len(),
        store.reading_count().unwrap(),
        "readings outside the route days"
    );
    out
}

/// As [`contents_of`] without the final count check, for a database another process is writing
/// to (the queries are separate statements, so a commit may land between them).
pub fn readings_of(store: &Store, db: &Path) -> Contents {
    assert_eq!(
        store.integrity_check().unwrap(),
        vec!["ok".to_owned()],
        "{}",
        db.display()
    );
    let mut out = Contents::new();
    for day in store.route_days().unwrap() {
        for r in store.readings_of_day(day.day).unwrap() {
            let analysis = store.analysis(r.id).unwrap().unwrap_or_else(|| {
                panic!("reading {} ({}) has no analysis row", r.id, r.source_file)
            });
            assert!(
                !analysis.scalars.is_empty(),
                "reading {} ({}) has no scalars",
                r.id,
                r.source_file
            );
            let key = (
                r.point.clone(),
                r.taken_at.with_timezone(&chrono::Utc).to_rfc3339(),
                r.content_sha256.clone(),
            );
            let old = out.insert(key, (r.suspect.clone(), analysis.version, analysis.scalars));
            assert!(old.is_none(), "reading {} stored twice", r.source_file);
        }
    }
    out
}
