//! `spallcast rules` shows the analyst every threshold the calls rest on: both tables of the analysis
//! crate, each rule with its meaning and a source (a published source, a corpus it was checked on, or
//! "common practice, no source").

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    reason = "tests: a panic is a failure"
)]

use std::process::Command;

use spallcast_analysis::location_rules::LOCATION_RULES;
use spallcast_analysis::stage::rules::RULES;

#[test]
fn rules_lists_every_threshold_with_its_source() {
    let out = Command::new(env!("CARGO_BIN_EXE_spallcast"))
        .args(["rules", "--json"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    for (key, table) in [("location", &LOCATION_RULES[..]), ("stage_and_life", RULES)] {
        let shown = doc[key].as_array().unwrap();
        assert_eq!(shown.len(), table.len(), "{key}");
        for (row, rule) in shown.iter().zip(table) {
            assert_eq!(row["id"], rule.id);
            assert_eq!(row["value"].as_f64(), Some(rule.value), "{}", rule.id);
            assert!(
                row["source"].as_str().is_some_and(|s| s.len() > 10),
                "{} has no source",
                rule.id
            );
        }
    }
    // The time-scale-free windows are among them.
    assert!(RULES.iter().any(|r| r.id == "baseline_fraction"));

    let text = Command::new(env!("CARGO_BIN_EXE_spallcast"))
        .arg("rules")
        .output()
        .unwrap();
    assert!(text.status.success());
    let text = String::from_utf8(text.stdout).unwrap();
    for rule in LOCATION_RULES.iter().chain(RULES) {
        assert!(
            text.contains(rule.id),
            "{} missing from the text table",
            rule.id
        );
    }
    assert!(text.contains("advisory"), "the caution is shown");
}
