//! The location call: each family judged by its own physics, a margin over the runner-up, and
//! "unclear" rather than a confident wrong race.
//!
//! - outer race: BPFO harmonics (fixed defect in the load zone: no 1x modulation needed);
//! - inner race: BPFI harmonics (the defect turns with the shaft; ±1x sidebands support it);
//! - rolling element: the 2×BSF family (even BSF harmonics), ±FTF sidebands support it;
//! - cage: a comb of FTF harmonics ([`CAGE_HARMONICS`]) *and no* 2×BSF family ([`BALL_TRAIN_DB`]): a
//!   damaged ball carried through the load zone at cage speed also puts FTF into the envelope.
//!
//! A present family ([`PRESENT_DB`], [`PRESENT_HARMONICS`]) is named only when it beats the best other
//! eligible family by [`MARGIN_DB`] and is also the strongest present family in at least one other
//! candidate band (impacts are broadband and excite a resonance region, so a real defect is not confined
//! to one narrow band; a coincidence in one band is); otherwise the call is "unclear" with both
//! candidates named.

use serde::{Deserialize, Serialize};

use super::Finding;
use super::rules::{
    BALL_TRAIN_DB, CAGE_HARMONICS, CORROBORATING_BANDS, MARGIN_DB, PRESENT_DB, PRESENT_HARMONICS,
};
use crate::kinematics::FaultKind;

/// The location decision.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct LocationCall {
    /// "outer race", "inner race", "rolling element", "cage", "unclear" or "none".
    pub diagnosis: String,
    /// 0–1: how well the evidence supports the stated result (a heuristic, not a calibrated
    /// probability). For "unclear", the support for the leading candidate.
    pub confidence: f64,
    /// The leading candidate and the runner-up (locations), best first.
    pub candidates: Vec<String>,
    /// Plain-language reason.
    pub reason: String,
}

fn present(f: &Finding) -> bool {
    f.score_db >= PRESENT_DB.value && f64::from(f.harmonics) >= PRESENT_HARMONICS.value
}

/// Decides the location from the envelope findings (any order). `usable` names the problem of a clipped
/// or silent recording, which never gets a location; `corroborating_bands` is `None` for a user band.
pub(crate) fn locate(
    findings: &[Finding],
    usable: Option<&str>,
    corroborating_bands: Option<usize>,
) -> LocationCall {
    if let Some(why) = usable {
        return LocationCall {
            diagnosis: "none".to_owned(),
            confidence: 0.0,
            candidates: Vec::new(),
            reason: format!("no location: {why}"),
        };
    }
    let get = |k: FaultKind| findings.iter().find(|f| f.kind == k);
    // A 2xBSF family (a comb, not one line) behind the FTF lines.
    let ball = get(FaultKind::RollingElement)
        .filter(|f| f64::from(f.harmonics) >= PRESENT_HARMONICS.value)
        .map_or(0.0, |f| f.score_db);
    // Cage is eligible only as a comb of FTF harmonics with no ball-train family behind it.
    let cage_ok =
        |f: &Finding| f64::from(f.harmonics) >= CAGE_HARMONICS.value && ball < BALL_TRAIN_DB.value;
    let mut ranked: Vec<&Finding> = findings
        .iter()
        .filter(|f| f.kind != FaultKind::Cage || cage_ok(f))
        .collect();
    ranked.sort_by(|a, b| b.score_db.total_cmp(&a.score_db));
    let cage_note = get(FaultKind::Cage)
        .filter(|c| !cage_ok(c) && present(c))
        .map(|c| {
            if ball >= BALL_TRAIN_DB.value {
                format!(
                    "; FTF lines ({:.1} dB) read as a ball train modulated at the cage rate (2xBSF family {ball:.1} dB)",
                    c.score_db
                )
            } else {
                format!(
                    "; FTF lines ({:.1} dB) show only {} harmonics, not a cage-defect comb",
                    c.score_db, c.harmonics
                )
            }
        })
        .unwrap_or_default();
    let Some(best) = ranked.first().copied() else {
        return LocationCall {
            diagnosis: "none".to_owned(),
            confidence: 0.5,
            candidates: Vec::new(),
            reason: "no fault family could be scored".to_owned(),
        };
    };
    let runner = ranked.get(1).copied();
    let runner_db = runner.map_or(0.0, |r| r.score_db);
    let margin = best.score_db - runner_db;
    let candidates: Vec<String> = ranked.iter().take(2).map(|f| f.fault.clone()).collect();
    let m = MARGIN_DB.value;
    let d = PRESENT_DB.value;
    if !present(best) {
        // Confidence in "none": how far the best family stays below the bar.
        let confidence = ((d - best.score_db) / d).clamp(0.0, 1.0).mul_add(0.5, 0.5);
        return LocationCall {
            diagnosis: "none".to_owned(),
            confidence,
            candidates,
            reason: format!(
                "no fault family reaches {d:.0} dB with {:.0} harmonics (best: {} {:.1} dB, {} harmonics){cage_note}",
                PRESENT_HARMONICS.value, best.fault, best.score_db, best.harmonics
            ),
        };
    }
    if margin < m {
        return LocationCall {
            diagnosis: "unclear".to_owned(),
            confidence: (0.5 * margin / m).clamp(0.0, 0.5),
            candidates,
            reason: format!(
                "{} ({:.1} dB) does not beat {} ({:.1} dB) by the {m:.0} dB margin{cage_note}",
                best.fault,
                best.score_db,
                runner.map_or("nothing", |r| r.fault.as_str()),
                runner_db
            ),
        };
    }
    if corroborating_bands.is_some_and(|c| (c as f64) < CORROBORATING_BANDS.value) {
        return LocationCall {
            diagnosis: "unclear".to_owned(),
            confidence: 0.25,
            candidates,
            reason: format!(
                "{} family at {:.1} dB shows in one candidate band only; impacts excite broad resonance regions, so a real defect shows in more than one{cage_note}",
                best.fault, best.score_db
            ),
        };
    }
    let confidence = 0.5
        + 0.25 * ((margin - m) / m).clamp(0.0, 1.0)
        + 0.25 * ((best.score_db - d) / d).clamp(0.0, 1.0);
    let support = match best.kind {
        FaultKind::InnerRace if best.sidebands > 0 => ", with ±1x sidebands",
        FaultKind::RollingElement if best.sidebands > 0 => ", with ±FTF sidebands",
        _ => "",
    };
    LocationCall {
        diagnosis: best.fault.clone(),
        confidence,
        candidates,
        reason: format!(
            "{} family at {:.1} dB with {} harmonics{support}, {margin:.1} dB over {}{cage_note}",
            best.fault,
            best.score_db,
            best.harmonics,
            runner.map_or("nothing", |r| r.fault.as_str()),
        ),
    }
}
