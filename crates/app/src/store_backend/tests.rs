//! Reading the stage record as the pipeline stores it.

use super::*;

/// A stage record as the pipeline stores it (schema 1), with the given `replace_by` projection.
fn record(replace_by: &serde_json::Value) -> StageRecord {
    serde_json::from_value(serde_json::json!({
        "schema_version": 1,
        "point": "X-1",
        "call": { "index": 0, "t_s": 1_770_000_000.0, "stage": 2, "raw_stage": 2,
                  "location": "outer race", "confidence": 0.7,
                  "evidence": ["BPFO in the envelope"], "limits": ["one point only"],
                  "relative": {}, "damage_index_db": 4.0, "in_baseline": false },
        "forecast": { "as_of_s": 1_770_000_000.0, "stage": 2, "location": "outer race",
                      "confidence": 0.7, "evidence": [], "replace_by": replace_by,
                      "risk_from": null, "method": "trend", "assumptions": [] },
    }))
    .unwrap()
}

#[test]
fn evidence_as_the_pipeline_stores_it() {
    let v = record(
        &serde_json::json!({ "t_s": 1_780_000_000.0, "lo_s": 1_775_000_000.0, "hi_s": null }),
    );
    assert_eq!(
        v.sentences(),
        vec![
            "BPFO in the envelope".to_owned(),
            "one point only".to_owned()
        ]
    );
    let f = forecast_from(&v).unwrap();
    // 1_780_000_000 s after 1970-01-01T00:00Z is 2026-05-28T20:26:40Z (Unix time, by definition).
    assert_eq!(f.replace_by.to_string(), "2026-05-28");
    assert_eq!(f.earliest.to_string(), "2026-03-31");
    assert_eq!(f.latest, f.replace_by, "open interval: no upper date");
    let mut none = v.clone();
    none.forecast = None;
    assert!(forecast_from(&none).is_none());
    assert!(forecast_from(&record(&serde_json::Value::Null)).is_none());
}

#[test]
fn only_a_current_record_is_read() {
    // Shapes the old lenient reader accepted are "no record" now: the stage number still shows.
    let call = |evidence: serde_json::Value| spallcast_store::StageCall {
        reading_id: 1,
        stage: 2,
        version: "test".into(),
        evidence,
        called_at: chrono::Utc::now(),
    };
    assert!(record_of(&call(serde_json::json!(["a", "b"]))).is_none());
    assert!(record_of(&call(serde_json::json!({ "evidence": ["c"] }))).is_none());
    let current = record(&serde_json::Value::Null);
    assert!(record_of(&call(serde_json::to_value(&current).unwrap())).is_some());
    let mut future = current;
    future.schema_version = 2;
    assert!(record_of(&call(serde_json::to_value(&future).unwrap())).is_none());
}
