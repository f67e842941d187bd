//! The command line on the demo plant (built once per test run, copied per test).
//!
//! One bearing, one call, everywhere: on the demo plant, the command line's replacement list
//! (`spallcast bearings --json`), the planner's CSV (`spallcast plan export --format csv`) and the
//! window's data layer (plant tree and header stage, "Due soonest", the evidence panel) give every
//! bearing the same stage and the same replace-by date. Then a replacement marked done resets the
//! bearing everywhere: its new life has no call yet.
//!
//! The rule itself (the point with the highest stage governs) is common practice, no source; what is
//! checked here is that every consumer applies it to the same stored calls.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "test code: a broken fixture should fail loudly"
)]

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::OnceLock;

use chrono::NaiveDate;
use spallcast_app::model::BearingKey;
use spallcast_app::source::Backend as _;
use spallcast_plan::source::PlanChange;

fn spallcast(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_spallcast"))
        .args(args)
        .output()
        .expect("the binary runs")
}

fn ok(args: &[&str]) -> String {
    let o = spallcast(args);
    assert!(
        o.status.success(),
        "spallcast {args:?} failed:\n{}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// The demo database, built once (with the simulator's truth beside it).
fn demo_built() -> &'static Path {
    static DEMO: OnceLock<(tempfile::TempDir, PathBuf)> = OnceLock::new();
    let (_keep, built) = DEMO.get_or_init(|| {
        let tmp = tempfile::tempdir().expect("a temporary folder");
        let db = tmp.path().join("demo.sqlite");
        ok(&["demo", "--db", &db.display().to_string()]);
        (tmp, db)
    });
    built
}

/// The demo database, built once; each test works on its own copy.
fn demo_copy(dir: &Path) -> PathBuf {
    let built = demo_built();
    let copy = dir.join("demo.sqlite");
    spallcast_store::copy_database(built, &copy).expect("a copy of the demo database");
    copy
}

/// `(machine, position)` -> (stage, replace-by date) from `bearings --json`.
type Answers = BTreeMap<(String, String), (Option<u8>, Option<NaiveDate>)>;

fn cli_answers(db: &str) -> Answers {
    let doc: serde_json::Value =
        serde_json::from_str(&ok(&["bearings", "--db", db, "--json"])).expect("bearings --json");
    let mut out = Answers::new();
    for b in doc["bearings"].as_array().expect("a bearings array") {
        let key = (
            b["machine"].as_str().expect("machine").to_owned(),
            b["position"].as_str().expect("position").to_owned(),
        );
        let stage = b["stage"]
            .as_u64()
            .map(|s| u8::try_from(s).expect("a stage"));
        let replace_by = b["replace_by"].as_str().map(|t| {
            chrono::DateTime::parse_from_rfc3339(t)
                .expect("an RFC 3339 time")
                .date_naive()
        });
        out.insert(key, (stage, replace_by));
    }
    out
}

/// `(machine, position)` -> the current life's location name from `bearings --json` ("none" when
/// it names none).
fn cli_locations(db: &str) -> BTreeMap<(String, String), String> {
    let doc: serde_json::Value =
        serde_json::from_str(&ok(&["bearings", "--db", db, "--json"])).expect("bearings --json");
    doc["bearings"]
        .as_array()
        .expect("a bearings array")
        .iter()
        .map(|b| {
            (
                (
                    b["machine"].as_str().expect("machine").to_owned(),
                    b["position"].as_str().expect("position").to_owned(),
                ),
                b["location"].as_str().unwrap_or("none").to_owned(),
            )
        })
        .collect()
}

fn csv_rows(db: &str, out: &Path) -> Vec<BTreeMap<String, String>> {
    ok(&[
        "plan",
        "export",
        "--db",
        db,
        "--format",
        "csv",
        "--out",
        &out.display().to_string(),
        "--overwrite",
    ]);
    let mut reader = csv::Reader::from_path(out).expect("the CSV opens");
    let headers = reader.headers().expect("a header row").clone();
    reader
        .records()
        .map(|r| {
            let r = r.expect("a CSV row");
            headers
                .iter()
                .zip(r.iter())
                .map(|(h, v)| (h.to_owned(), v.to_owned()))
                .collect()
        })
        .collect()
}

#[test]
fn every_view_and_export_gives_each_demo_bearing_the_same_call() {
    let tmp = tempfile::tempdir().expect("a temporary folder");
    let db_path = demo_copy(tmp.path());
    let db = db_path.display().to_string();
    let cli = cli_answers(&db);
    assert!(cli.len() >= 20, "the demo has {} bearings", cli.len());
    let staged = cli
        .values()
        .filter(|(s, _)| s.is_some_and(|s| s >= 2))
        .count();
    assert!(
        staged >= 3,
        "the demo shows at least three defective bearings"
    );

    // The planner's CSV: every bearing row carries the same stage, replace-by and life location as the
    // command line.
    let rows = csv_rows(&db, &tmp.path().join("plan.csv"));
    let located = cli_locations(&db);
    let mut in_csv = 0;
    for row in &rows {
        let key = (row["machine_id"].clone(), row["position"].clone());
        let (stage, replace_by) = cli
            .get(&key)
            .unwrap_or_else(|| panic!("{key:?} is in the CSV but not in `bearings`"));
        if row["stage"].is_empty() {
            continue;
        }
        in_csv += 1;
        assert_eq!(
            row["stage"],
            stage.map_or_else(String::new, |s| s.to_string()),
            "{key:?}: CSV stage vs bearings --json"
        );
        assert_eq!(
            row["replace_by"],
            replace_by.map_or_else(String::new, |d| d.to_string()),
            "{key:?}: CSV replace-by vs bearings --json"
        );
        // "outer race (87 %)" -> "outer race"; the CSV says "unclear" where the command line says
        // "unknown".
        let csv_location = match row["location"].split(" (").next().unwrap_or_default() {
            "unclear" => "unknown",
            other => other,
        };
        assert_eq!(
            csv_location, located[&key],
            "{key:?}: CSV location {:?} vs bearings --json",
            row["location"]
        );
    }
    assert!(
        in_csv >= staged,
        "{in_csv} CSV rows with a stage, {staged} bearings at stage 2+"
    );

    // The window's data layer, on the same database.
    let backend = spallcast_app::default_backend();
    let mut source = backend
        .open(&db_path, &mut |_| {})
        .expect("the window opens the database");
    let tree = source.plant().expect("the plant tree");
    let attention = source.attention().expect("the attention list");
    let mut compared = 0;
    for node in tree.bearings() {
        let key = (node.key.machine_id.clone(), node.key.position.clone());
        let (stage, replace_by) = cli[&key];
        assert_eq!(node.stage, stage, "{key:?}: tree (and header) stage vs CLI");
        let history = source.bearing(&node.key).expect("a bearing's history");
        assert_eq!(
            history.stage_call.as_ref().map(|c| c.stage),
            stage,
            "{key:?}: evidence panel stage vs CLI"
        );
        if let Some(call) = &history.stage_call {
            assert!(call.points.contains(&call.point), "{key:?}: {call:?}");
        }
        assert_eq!(
            history.forecast.as_ref().map(|f| f.replace_by),
            replace_by,
            "{key:?}: evidence panel replace-by vs CLI"
        );
        if let Some(due) = attention.due.iter().find(|d| d.key == node.key) {
            assert_eq!(due.stage, stage, "{key:?}: due list stage vs CLI");
            assert_eq!(Some(due.replace_by), replace_by, "{key:?}: due list date");
        }
        compared += 1;
    }
    assert_eq!(compared, cli.len(), "every bearing compared");
    // "Due soonest": by replace-by day, and on one day the later stage first.
    for w in attention.due.windows(2) {
        assert!(
            (w[0].replace_by, std::cmp::Reverse(w[0].stage))
                <= (w[1].replace_by, std::cmp::Reverse(w[1].stage)),
            "due list order: {:?} before {:?}",
            w[0],
            w[1]
        );
    }

    mark_done_then_undo(source.as_mut(), &cli, &db);
}

/// Marks the most urgent bearing's replacement done through the window's data layer (it leaves stage
/// 4/3 everywhere), then takes it back (its call returns everywhere).
fn mark_done_then_undo(
    source: &mut dyn spallcast_app::source::PlantSource,
    cli: &Answers,
    db: &str,
) {
    // Mark the most urgent bearing's replacement done: it leaves stage 4/3 everywhere.
    let (worst_key, _) = cli.iter().max_by_key(|(_, (s, _))| *s).expect("a bearing");
    let key = BearingKey {
        machine_id: worst_key.0.clone(),
        position: worst_key.1.clone(),
    };
    let today = chrono::Utc::now().date_naive();
    let board = source.plan(today).expect("the plan");
    let need = board
        .needs
        .iter()
        .find(|n| n.life.machine_id == key.machine_id && n.life.position == key.position)
        .expect("the worst bearing needs a slot");
    let life_id = need.life.life_id;
    let outage_id = board.outages.first().expect("the demo has outages").id;
    let (msg, board, _) = source.change_plan(today, &[PlanChange::Assign { life_id, outage_id }]);
    let board = board.unwrap_or_else(|e| panic!("{msg}: {e}"));
    let entry = board
        .entries
        .iter()
        .find(|e| e.life.life_id == life_id)
        .expect("the planned entry");
    let (msg, board, outcome) = source.change_plan(
        today,
        &[PlanChange::MarkDone {
            entry_id: entry.id,
            replaced_on: today,
            found: "outer race spall".to_owned(),
        }],
    );
    board.unwrap_or_else(|e| panic!("{msg}: {e}"));
    let tree = source.plant().expect("the plant tree again");
    let node = tree
        .bearing(&key)
        .expect("the bearing is still in the tree");
    assert_eq!(node.stage, None, "the new bearing has no call yet");
    let attention = source.attention().expect("the attention list again");
    assert!(
        attention.due.iter().all(|d| d.key != key),
        "a bearing just replaced is not due: {:?}",
        attention.due
    );
    let history = source.bearing(&key).expect("its history");
    assert!(history.stage_call.is_none(), "{:?}", history.stage_call);
    assert_eq!(
        cli_answers(db)[worst_key].0,
        None,
        "the command line agrees after the replacement"
    );

    // Undo (issue 17 item 8): the removed bearing's life and its call come back everywhere.
    let spallcast_app::plan_view::StepOutcome::Changed(Some(step)) = outcome else {
        panic!("mark done gives a step to undo: {outcome:?}");
    };
    let (msg, board, outcome) = source.undo_plan(today, &step);
    board.unwrap_or_else(|e| panic!("{msg}: {e}"));
    assert_eq!(
        outcome,
        spallcast_app::plan_view::StepOutcome::Undone,
        "{msg}"
    );
    let node_stage = source
        .plant()
        .expect("the plant tree after the undo")
        .bearing(&key)
        .and_then(|n| n.stage);
    assert_eq!(
        node_stage, cli[worst_key].0,
        "the tree shows the old call again"
    );
    assert_eq!(
        source
            .bearing(&key)
            .expect("its history")
            .stage_call
            .map(|c| c.stage),
        cli[worst_key].0
    );
    assert_eq!(
        cli_answers(db)[worst_key],
        cli[worst_key],
        "the command line agrees after the undo"
    );
}

/// The IEEE PHM 2012 challenge score of one remaining-life prediction (Nectoux et al. 2012, the
/// challenge description; transcribed in ../shared/REFERENCES.md section 10): `Er = 100 (actual -
/// predicted) / actual`, `A = exp(-ln 0.5 Er / 5)` for `Er <= 0`, `exp(+ln 0.5 Er / 20)` for `Er > 0`.
fn phm_score(actual: f64, predicted: f64) -> f64 {
    let er = 100.0 * (actual - predicted) / actual;
    if er <= 0.0 {
        (-(0.5f64.ln()) * er / 5.0).exp()
    } else {
        (0.5f64.ln() * er / 20.0).exp()
    }
}

fn time(v: &serde_json::Value) -> Option<chrono::DateTime<chrono::FixedOffset>> {
    v.as_str()
        .map(|t| chrono::DateTime::parse_from_rfc3339(t).expect("an RFC 3339 time"))
}

/// Issue 14 items 4 and 5: `bearing --json`, and `backtest` replaying a replaced life against its
/// recorded replacement. The demo's RW-P1 PDE ran through every stage and was replaced (demo-plant
/// README); its first life must replay with errors measured against that date and scores that follow
/// the published formula.
#[test]
fn bearing_json_and_backtest_replay_the_replaced_life() {
    let tmp = tempfile::tempdir().expect("a temporary folder");
    let db = demo_copy(tmp.path()).display().to_string();
    let doc: serde_json::Value =
        serde_json::from_str(&ok(&["bearing", "RW-P1/PDE", "--db", &db, "--json"])).expect("JSON");
    assert_eq!(doc["times"], "UTC");
    let lives = doc["lives"].as_array().expect("lives");
    assert_eq!(lives.len(), 2, "the replaced life and the current one");
    assert!(
        lives[0]["life"]["removed"].is_string(),
        "{}",
        lives[0]["life"]
    );
    assert!(lives[1]["life"]["removed"].is_null());
    let text = ok(&["bearing", "RW-P1/PDE", "--db", &db]);
    assert!(text.contains("times are UTC"), "{text}");

    let doc: serde_json::Value =
        serde_json::from_str(&ok(&["backtest", "RW-P1/PDE", "--db", &db, "--json"])).expect("JSON");
    let lives = doc["lives"].as_array().expect("lives");
    assert_eq!(lives.len(), 2);
    let old = &lives[0];
    let replaced =
        chrono::NaiveDate::parse_from_str(old["replaced"].as_str().expect("replaced"), "%Y-%m-%d")
            .expect("a date");
    let replaced_s = replaced
        .and_hms_opt(0, 0, 0)
        .expect("midnight")
        .and_utc()
        .timestamp() as f64;
    let mut scored = 0;
    let mut max_stage = 0;
    for point in old["points"].as_array().expect("points") {
        for row in point["rows"].as_array().expect("rows") {
            let t = time(&row["taken_at"]).expect("a reading time").timestamp() as f64;
            assert!(
                t < replaced_s,
                "a reading of the old life after its replacement: {row}"
            );
            max_stage = max_stage.max(row["stage"].as_u64().expect("a stage"));
            if let Some(eol) = time(&row["end_of_life"]) {
                let eol_s = eol.timestamp() as f64;
                let err = row["end_of_life_error_days"].as_f64().expect("an error");
                assert!(
                    // The JSON times are whole seconds: agree to a second.
                    (err - (eol_s - replaced_s) / 86_400.0).abs() < 1.01 / 86_400.0,
                    "{row}"
                );
                let score = row["end_of_life_score"].as_f64().expect("a score");
                let want = phm_score(replaced_s - t, eol_s - t);
                assert!(
                    (score - want).abs() < 1e-4,
                    "score {score} vs {want}: {row}"
                );
                assert!(score > 0.0 && score <= 1.0);
                scored += 1;
            }
        }
    }
    assert!(
        max_stage >= 3,
        "the replaced life reached stage 3 or 4 before it came out"
    );
    assert!(scored > 0, "at least one end-of-life projection was scored");
    // The current life has nothing to score.
    for point in lives[1]["points"].as_array().expect("points") {
        assert!(point["mean_end_of_life_score"].is_null(), "{point}");
    }
    let all: serde_json::Value =
        serde_json::from_str(&ok(&["backtest", "--all", "--db", &db, "--json"])).expect("JSON");
    let bearings: std::collections::BTreeSet<&str> = all["lives"]
        .as_array()
        .expect("lives")
        .iter()
        .map(|l| l["bearing"].as_str().expect("a bearing"))
        .collect();
    assert!(
        bearings.contains("RW-P1/PDE") && bearings.contains("AE-F1/FDE"),
        "{bearings:?}"
    );
    assert!(bearings.len() >= 20, "every bearing: {}", bearings.len());
}

/// Issue 17 item 8 from the command line: a note on a bearing shows in `bearing` and in the
/// planner's CSV; baseline marks are stored, shown and cleared, and the bearing's calls are
/// recomputed.
#[test]
fn notes_and_baseline_marks_from_the_command_line() {
    let tmp = tempfile::tempdir().expect("a temporary folder");
    let db_path = demo_copy(tmp.path());
    let db = db_path.display().to_string();
    let cli = cli_answers(&db);
    let (worst, _) = cli.iter().max_by_key(|(_, (s, _))| *s).expect("a bearing");
    let bearing = format!("{}/{}", worst.0, worst.1);
    let today = chrono::Utc::now().date_naive().to_string();
    let out = ok(&[
        "note",
        &bearing,
        "--db",
        &db,
        "--kind",
        "lubrication",
        "--text",
        "regreased, 2 shots",
        "--on",
        &today,
    ]);
    assert!(out.contains("added"), "{out}");
    let bad = spallcast(&[
        "note", &bearing, "--db", &db, "--kind", "oil", "--text", "x",
    ]);
    assert!(!bad.status.success(), "an unknown kind is refused");
    let doc: serde_json::Value =
        serde_json::from_str(&ok(&["bearing", &bearing, "--db", &db, "--json"])).expect("JSON");
    assert_eq!(doc["notes"][0]["text"], "regreased, 2 shots");
    assert_eq!(doc["notes"][0]["kind"], "lubrication");
    let rows = csv_rows(&db, &tmp.path().join("plan.csv"));
    let row = rows
        .iter()
        .find(|r| r["machine_id"] == worst.0 && r["position"] == worst.1)
        .expect("the worst bearing is in the planner's list");
    assert_eq!(
        row["bearing_notes"],
        format!("{today} lubrication: regreased, 2 shots")
    );

    // Baseline: the first two readings of the current life's first point.
    let life = doc["lives"]
        .as_array()
        .expect("lives")
        .last()
        .expect("a life")
        .clone();
    let ids: Vec<i64> = life["points"][0]["reading_ids"]
        .as_array()
        .expect("reading ids")
        .iter()
        .take(2)
        .map(|v| v.as_i64().expect("an id"))
        .collect();
    assert_eq!(ids.len(), 2);
    let list = format!("{},{}", ids[0], ids[1]);
    let out = ok(&["baseline", &bearing, "--db", &db, "--readings", &list]);
    assert!(out.contains("recomputed"), "{out}");
    let doc: serde_json::Value =
        serde_json::from_str(&ok(&["bearing", &bearing, "--db", &db, "--json"])).expect("JSON");
    let marked: Vec<i64> = doc["baseline_readings"]
        .as_array()
        .expect("baseline readings")
        .iter()
        .map(|v| v.as_i64().expect("an id"))
        .collect();
    assert_eq!(marked, ids);
    ok(&["baseline", &bearing, "--db", &db, "--clear"]);
    let doc: serde_json::Value =
        serde_json::from_str(&ok(&["bearing", &bearing, "--db", &db, "--json"])).expect("JSON");
    assert_eq!(doc["baseline_readings"], serde_json::json!([]));
    // Readings of another bearing are refused with the reason.
    let other = cli
        .keys()
        .find(|k| *k != worst)
        .map(|k| format!("{}/{}", k.0, k.1))
        .expect("another bearing");
    let bad = spallcast(&["baseline", &other, "--db", &db, "--readings", &list]);
    assert!(!bad.status.success());
    assert!(
        String::from_utf8_lossy(&bad.stderr).contains("not a reading of this bearing"),
        "{}",
        String::from_utf8_lossy(&bad.stderr)
    );
}

/// Issue 13 item 3: one location per bearing life, accumulated over every point and reading, and
/// the same in `bearing --json` and `bearings --json`. Checked against the simulator's truth written
/// beside the demo database (`.truth.csv`): every life whose truth reached stage 2 (defect tones in the
/// envelope spectrum, common practice, no source) must be located at its true defect, and a life
/// whose truth never left stage 0 must not be given a kinematic location.
/// One row of the simulator's truth for a (machine, bearing): date, true stage, true fault.
type TruthRow = (NaiveDate, u64, String);

#[test]
fn each_demo_bearing_life_is_located_at_its_true_defect() {
    let built = demo_built();
    let mut truth_path = built.as_os_str().to_owned();
    truth_path.push(".truth.csv");
    let mut reader = csv::Reader::from_path(PathBuf::from(truth_path)).expect("the demo truth");
    let mut truth: BTreeMap<(String, String), Vec<TruthRow>> = BTreeMap::new();
    for row in reader.deserialize::<BTreeMap<String, String>>() {
        let row = row.expect("a truth row");
        let date = NaiveDate::parse_from_str(&row["date"], "%Y-%m-%d").expect("a date");
        let stage: u64 = row["stage"].parse().expect("a stage");
        truth
            .entry((row["machine"].clone(), row["bearing"].clone()))
            .or_default()
            .push((date, stage, row["fault"].clone()));
    }
    let tmp = tempfile::tempdir().expect("a temporary folder");
    let db = demo_copy(tmp.path()).display().to_string();
    let summary: serde_json::Value =
        serde_json::from_str(&ok(&["bearings", "--db", &db, "--json"])).expect("bearings --json");
    let mut located = 0;
    let mut healthy_lives = 0;
    for b in summary["bearings"].as_array().expect("a bearings array") {
        let machine = b["machine"].as_str().expect("machine");
        let position = b["position"].as_str().expect("position");
        let id = format!("{machine}/{position}");
        let doc: serde_json::Value =
            serde_json::from_str(&ok(&["bearing", &id, "--db", &db, "--json"])).expect("JSON");
        let lives = doc["lives"].as_array().expect("lives");
        let rows = truth
            .get(&(machine.to_owned(), position.to_owned()))
            .cloned()
            .unwrap_or_default();
        for (i, life) in lives.iter().enumerate() {
            let installed = NaiveDate::parse_from_str(
                life["life"]["installed"].as_str().expect("installed"),
                "%Y-%m-%d",
            )
            .expect("a date");
            let removed = life["life"]["removed"]
                .as_str()
                .map(|d| NaiveDate::parse_from_str(d, "%Y-%m-%d").expect("a date"));
            let in_life: Vec<_> = rows
                .iter()
                .filter(|(d, _, _)| *d >= installed && removed.is_none_or(|r| *d < r))
                .collect();
            let got = life["location"]["location"].as_str().expect("a location");
            let worst = in_life.iter().map(|r| r.1).max().unwrap_or(0);
            if worst >= 2 {
                let fault = in_life
                    .iter()
                    .find(|r| r.1 >= 2)
                    .map(|r| r.2.as_str())
                    .expect("a faulty row");
                let want = match fault {
                    "OuterRace" => "outer race",
                    "InnerRace" => "inner race",
                    "RollingElement" => "rolling element",
                    "Cage" => "cage",
                    other => panic!("unknown truth fault {other}"),
                };
                assert_eq!(got, want, "{id} life {i}: {}", life["location"]);
                located += 1;
            } else if worst == 0 && !in_life.is_empty() {
                assert!(
                    matches!(got, "none" | "unknown"),
                    "{id} life {i} is healthy in the truth but located at {got}: {}",
                    life["location"]
                );
                healthy_lives += 1;
            }
            if i + 1 == lives.len() {
                // The replacement list shows the current life's location.
                assert_eq!(b["location"].as_str().unwrap_or("none"), got, "{id}");
            }
        }
    }
    assert!(located >= 6, "faulty lives located: {located}");
    assert!(
        healthy_lives >= 10,
        "healthy lives checked: {healthy_lives}"
    );
}
