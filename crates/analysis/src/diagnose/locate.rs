//! The location call: each family judged by its own physics, a margin over the runner-up, and
//! "unclear" rather than a confident wrong race.
//!
//! - outer race: BPFO harmonics (fixed defect in the load zone: no 1x modulation needed);
//! - inner race: BPFI harmonics (the defect turns with the shaft; ±1x sidebands support it);
//! - rolling element: the 2×BSF family (even BSF harmonics), ±FTF sidebands support it;
//! - cage: a comb of FTF harmonics ([`CAGE_HARMONICS`]) *and no* 2×BSF family ([`BALL_TRAIN_DB`]): a
//!   damaged ball carried through the load zone at cage speed also puts FTF into the envelope, and an
//!   FTF comb with a deep minimum ([`CAGE_NOTCH_DB`]) has the shape of that load-zone window, so it is
//!   "unclear" (cage or rolling element).
//!
//! Families whose combs share lines are told apart by what the lines cannot show: the FTF line for the
//! outer race and the rolling elements ([`COMB_OVERLAP`]), each family's own sidebands for the inner
//! race and the rolling elements ([`INNER_ELEMENT_SIDEBANDS`]).
//!
//! A present family ([`PRESENT_DB`], [`PRESENT_HARMONICS`]) is named only when it beats the best other
//! eligible family by [`MARGIN_DB`] and is also the strongest present family in other candidate bands:
//! at least one ([`CORROBORATING_BANDS`]) and a large share of those where any family shows
//! ([`CORROBORATING_SHARE`]) (impacts are broadband and excite a resonance region, so a real defect is
//! not confined to one narrow band; a coincidence in one band is); otherwise the call is "unclear" with
//! both candidates named.

use std::borrow::Cow;

use serde::{Deserialize, Serialize};

use super::Finding;
use super::rules::{
    BALL_TRAIN_DB, CAGE_HARMONICS, CAGE_NOTCH_DB, COMB_OVERLAP, CORROBORATING_BANDS,
    CORROBORATING_SHARE, INNER_ELEMENT_SIDEBANDS, MARGIN_DB, PRESENT_DB, PRESENT_HARMONICS,
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

/// Whether the combs of two defect rates read the same envelope lines ([`COMB_OVERLAP`]).
pub(crate) fn combs_coincide(a_hz: f64, b_hz: f64) -> bool {
    let lo = a_hz.min(b_hz);
    lo > 0.0 && (a_hz - b_hz).abs() / lo < COMB_OVERLAP.value
}

/// Whether the inner-race and 2xBSF combs read the same lines: their rates coincide, or one is twice
/// the other (every second line of the slower comb), within [`COMB_OVERLAP`]
/// ([`INNER_ELEMENT_SIDEBANDS`]).
pub(crate) fn inner_element_share_lines(a_hz: f64, b_hz: f64) -> bool {
    let (lo, hi) = (a_hz.min(b_hz), a_hz.max(b_hz));
    combs_coincide(lo, hi) || combs_coincide(2.0 * lo, hi)
}

/// Whether two locations' families count as one in the band search: the same kind, the outer race
/// and the rolling elements when their combs coincide, or the inner race and the rolling elements when
/// their combs share lines ([`inner_element_share_lines`]).
pub(crate) fn same_lines(a: FaultKind, a_hz: f64, b: FaultKind, b_hz: f64) -> bool {
    let pair = |x: FaultKind, y: FaultKind| (a == x && b == y) || (a == y && b == x);
    a == b
        || (pair(FaultKind::OuterRace, FaultKind::RollingElement) && combs_coincide(a_hz, b_hz))
        || (pair(FaultKind::InnerRace, FaultKind::RollingElement)
            && inner_element_share_lines(a_hz, b_hz))
}

/// The level at which the family search counts a line (its default `line_db`).
fn line_db() -> f64 {
    crate::findings::SearchParams::default().line_db
}

fn present(f: &Finding) -> bool {
    f.score_db >= PRESENT_DB.value && f64::from(f.harmonics) >= PRESENT_HARMONICS.value
}

/// What [`resolve_coinciding`] found.
enum Coinciding {
    /// The two leading families are not outer race and rolling element on coinciding combs.
    No,
    /// Rolling element or outer race (its finding, with the pair's score), and the reason's addition.
    Resolved(Finding, String),
    /// No FTF modulation to tell them apart: why.
    Unclear(String),
}

/// When the two leading families are the outer race and the rolling elements on coinciding combs
/// ([`COMB_OVERLAP`]) and neither beats the other by [`MARGIN_DB`], they read the same lines: the
/// FTF line (smooth load-zone modulation gives mainly the first FTF harmonic, see [`CAGE_HARMONICS`])
/// at [`PRESENT_DB`] marks a rolling element carried through the load zone at cage speed; no FTF line
/// at all (under the search's line level) marks a defect fixed in the load zone, the outer race; in
/// between the call is unclear.
fn resolve_coinciding(ranked: &[&Finding], cage: Option<&Finding>) -> Coinciding {
    let (Some(best), Some(second)) = (ranked.first(), ranked.get(1)) else {
        return Coinciding::No;
    };
    if !(present(best)
        && best.kind != second.kind
        && same_lines(
            best.kind,
            best.defect_rate_hz,
            second.kind,
            second.defect_rate_hz,
        )
        && best.score_db - second.score_db < MARGIN_DB.value)
    {
        return Coinciding::No;
    }
    if best.kind == FaultKind::InnerRace || second.kind == FaultKind::InnerRace {
        return resolve_by_sidebands(best, second);
    }
    let gap = 100.0 * (best.defect_rate_hz - second.defect_rate_hz).abs()
        / best.defect_rate_hz.min(second.defect_rate_hz);
    let line_db = cage
        .and_then(|c| c.harmonic_db.first().copied())
        .unwrap_or(0.0);
    let (kind, why) = if line_db >= PRESENT_DB.value {
        (
            FaultKind::RollingElement,
            format!(
                "the FTF line at {line_db:.1} dB shows a rolling element carried through the load zone at cage speed"
            ),
        )
    } else if line_db < self::line_db() {
        (
            FaultKind::OuterRace,
            format!(
                "no FTF line ({line_db:.1} dB): the impacts are not modulated at cage speed, as from a defect fixed in the load zone"
            ),
        )
    } else {
        return Coinciding::Unclear(format!(
            "the outer-race and 2xBSF combs coincide for this bearing (BPFO and 2xBSF {gap:.1} % apart), so their lines ({:.1} dB) fit both, and the FTF line ({line_db:.1} dB) is too weak to tell them apart",
            best.score_db
        ));
    };
    let chosen = if best.kind == kind { best } else { second };
    Coinciding::Resolved(
        Finding {
            score_db: best.score_db,
            ..(*chosen).clone()
        },
        format!("; BPFO and 2xBSF are {gap:.1} % apart, so the comb fits both, and {why}"),
    )
}

/// The inner race and the rolling elements on combs that share lines, neither beating the other by
/// the margin: the lines cannot tell them apart, each family's own modulation can (±1x for a defect
/// turning with the shaft, ±FTF for an element carried round by the cage). The one that shows its
/// sidebands while the other shows none is named; otherwise the usual margin rule applies.
fn resolve_by_sidebands(best: &Finding, second: &Finding) -> Coinciding {
    let has = |f: &Finding| f64::from(f.sidebands) >= INNER_ELEMENT_SIDEBANDS.value;
    let (chosen, other) = match (has(best), has(second)) {
        (true, false) if second.sidebands == 0 => (best, second),
        (false, true) if best.sidebands == 0 => (second, best),
        _ => return Coinciding::No,
    };
    let (inner, element) = if best.kind == FaultKind::InnerRace {
        (best, second)
    } else {
        (second, best)
    };
    let modulation = |f: &Finding| {
        if f.kind == FaultKind::InnerRace {
            "±1x"
        } else {
            "±FTF"
        }
    };
    Coinciding::Resolved(
        Finding {
            score_db: best.score_db,
            ..chosen.clone()
        },
        format!(
            "; the inner-race and 2xBSF combs share lines here (BPFI {:.1} Hz, 2xBSF {:.1} Hz), and the {} family shows its {} sidebands ({}) while the {} family shows none of its {}",
            inner.defect_rate_hz,
            element.defect_rate_hz,
            chosen.fault,
            modulation(chosen),
            chosen.sidebands,
            other.fault,
            modulation(other),
        ),
    )
}

/// The deepest notch in the first five harmonics of a comb: how far one of the 2nd-4th harmonics
/// stands under the mean of its two neighbours, dB (0 when there are too few harmonics).
pub(crate) fn comb_notch_db(harmonic_db: &[f64]) -> f64 {
    harmonic_db
        .iter()
        .take(5)
        .collect::<Vec<_>>()
        .windows(3)
        .map(|w| 0.5 * (w[0] + w[2]) - w[1])
        .fold(0.0, f64::max)
}

/// How the other candidate bands read: in how many the chosen family leads while present, and in how
/// many any family is present.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Corroboration {
    /// Bands where the chosen family is the strongest and present.
    pub agreeing: usize,
    /// Bands where some family is present.
    pub present: usize,
}

/// Why the other candidate bands do not bear out the chosen family ([`CORROBORATING_BANDS`],
/// [`CORROBORATING_SHARE`]), or `None` when they do.
fn uncorroborated(best: &Finding, c: Corroboration) -> Option<String> {
    if (c.agreeing as f64) < CORROBORATING_BANDS.value {
        return Some(format!(
            "{} family at {:.1} dB shows in one candidate band only; impacts excite broad resonance regions, so a real defect shows in more than one",
            best.fault, best.score_db
        ));
    }
    (c.present > 0 && (c.agreeing as f64) < CORROBORATING_SHARE.value * c.present as f64).then(|| {
        format!(
            "{} family at {:.1} dB leads in only {} of the {} other candidate bands where a fault family shows (at least {:.0} % needed); one defect excites its resonance region as a whole, so bands that disagree mean the evidence does not settle the location",
            best.fault,
            best.score_db,
            c.agreeing,
            c.present,
            100.0 * CORROBORATING_SHARE.value
        )
    })
}

/// Decides the location from the envelope findings (any order). `usable` names the problem of a clipped
/// or silent recording, which never gets a location; `corroboration` is `None` for a user band.
pub(crate) fn locate(
    findings: &[Finding],
    usable: Option<&str>,
    corroboration: Option<Corroboration>,
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
    // Outer race and rolling element on coinciding combs that score alike: FTF modulation decides.
    let (best, runner, coincide_note) = match resolve_coinciding(&ranked, get(FaultKind::Cage)) {
        Coinciding::No => (Cow::Borrowed(best), ranked.get(1).copied(), String::new()),
        Coinciding::Resolved(chosen, note) => (Cow::Owned(chosen), ranked.get(2).copied(), note),
        Coinciding::Unclear(why) => {
            return LocationCall {
                diagnosis: "unclear".to_owned(),
                confidence: 0.25,
                candidates: ranked.iter().take(2).map(|f| f.fault.clone()).collect(),
                reason: format!("{why}{cage_note}"),
            };
        }
    };
    let best: &Finding = &best;
    if best.kind == FaultKind::Cage && present(best) {
        let notch = comb_notch_db(&best.harmonic_db);
        if notch >= CAGE_NOTCH_DB.value {
            let mut candidates = vec![best.fault.clone()];
            if let Some(ball) = get(FaultKind::RollingElement) {
                candidates.push(ball.fault.clone());
            }
            return LocationCall {
                diagnosis: "unclear".to_owned(),
                confidence: 0.25,
                candidates,
                reason: format!(
                    "FTF comb at {:.1} dB with {} harmonics, but one harmonic stands {notch:.1} dB under its neighbours: the shape of a load-zone window, a damaged rolling element carried round at cage speed, as much as a cage defect, and no 2xBSF comb settles it{cage_note}",
                    best.score_db, best.harmonics
                ),
            };
        }
    }
    let runner_db = runner.map_or(0.0, |r| r.score_db);
    let margin = best.score_db - runner_db;
    let candidates: Vec<String> = if coincide_note.is_empty() {
        ranked.iter().take(2).map(|f| f.fault.clone()).collect()
    } else {
        std::iter::once(best.fault.clone())
            .chain(runner.map(|r| r.fault.clone()))
            .collect()
    };
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
    if let Some(why) = corroboration.and_then(|c| uncorroborated(best, c)) {
        return LocationCall {
            diagnosis: "unclear".to_owned(),
            confidence: 0.25,
            candidates,
            reason: format!("{why}{cage_note}"),
        };
    }
    let confidence = 0.5
        + 0.25 * ((margin - m) / m).clamp(0.0, 1.0)
        + 0.25 * ((best.score_db - d) / d).clamp(0.0, 1.0);
    // A call resolved between coinciding combs rests on the FTF line, not on the comb: capped.
    let confidence = if coincide_note.is_empty() {
        confidence
    } else {
        confidence.min(0.8)
    };
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
            "{} family at {:.1} dB with {} harmonics{support}, {margin:.1} dB over {}{coincide_note}{cage_note}",
            best.fault,
            best.score_db,
            best.harmonics,
            runner.map_or("nothing", |r| r.fault.as_str()),
        ),
    }
}
