//! One fault location per bearing life: the evidence of every reading of every measurement point on
//! the bearing (H, V, A) accumulated in time order, so the location does not flip from month to month
//! and every view of the bearing shows the same one.
//!
//! Each reading's call that names a kinematic location adds its confidence to that location's weight.
//! The life's location is the location with the most weight once it holds
//! [`rules::LIFE_LOCATION_EVIDENCE`] reading-equivalents and at least [`rules::LIFE_LOCATION_RATIO`] times
//! the weight of the runner-up; otherwise it is [`Location::Unknown`] ("unclear") with both named.
//! Once a location stands it changes only when another one's weight overtakes it by the same ratio:
//! new evidence has to outweigh the old. The per-reading calls stay as the evidence behind it.

use serde::{Deserialize, Serialize};

use super::StageCall;
use super::indicators::Location;
use super::rules;

/// The location of one bearing life.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LifeLocation {
    /// The location, [`Location::Unknown`] when the evidence does not settle it, [`Location::None`]
    /// when no reading named one.
    pub location: Location,
    /// 0–1: the leading location's share of all located evidence, scaled down while that evidence is
    /// thin (a heuristic, not a calibrated probability).
    pub confidence: f64,
    /// Weight (sum of call confidences) and number of readings per location named, largest first.
    pub support: Vec<LocationSupport>,
    /// Plain-language reason.
    pub reason: String,
}

/// The evidence one location received over a life.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LocationSupport {
    /// The location.
    pub location: Location,
    /// Sum of the confidences of the calls that named it.
    pub weight: f64,
    /// Readings whose call named it.
    pub readings: usize,
}

/// Accumulates `calls` (of every point of one life, in any order: they are taken in time order) into
/// one location, with the hysteresis described in the module notes.
pub fn life_location<'a>(calls: impl IntoIterator<Item = &'a StageCall>) -> LifeLocation {
    let mut calls: Vec<&StageCall> = calls.into_iter().collect();
    calls.sort_by(|a, b| a.t_s.total_cmp(&b.t_s));
    let mut tally = LocationTally::default();
    for call in calls {
        tally.add(call);
    }
    tally.location()
}

/// The running form of [`life_location`]: add a life's calls in time order, read the location as it
/// stands after any of them. [`life_location`] is this tally after every call.
#[derive(Debug, Clone, Default)]
pub struct LocationTally {
    support: Vec<LocationSupport>,
    standing: Option<Location>,
}

impl LocationTally {
    /// Adds the next call in time order (calls naming no kinematic location add nothing).
    pub fn add(&mut self, call: &StageCall) {
        if !Location::KINEMATIC.contains(&call.location) {
            return;
        }
        let weight = call.confidence.clamp(0.0, 1.0);
        match self
            .support
            .iter_mut()
            .find(|s| s.location == call.location)
        {
            Some(s) => {
                s.weight += weight;
                s.readings += 1;
            }
            None => self.support.push(LocationSupport {
                location: call.location,
                weight,
                readings: 1,
            }),
        }
        self.support.sort_by(|a, b| b.weight.total_cmp(&a.weight));
        let Some(lead) = self.support.first() else {
            return;
        };
        let runner = self.support.get(1).map_or(0.0, |s| s.weight);
        let settles = lead.weight >= rules::LIFE_LOCATION_EVIDENCE.value
            && lead.weight >= rules::LIFE_LOCATION_RATIO.value * runner;
        match self.standing {
            None if settles => self.standing = Some(lead.location),
            Some(s) if s != lead.location => {
                // Another location leads: it takes over only when it outweighs the standing one by the
                // ratio.
                let standing_weight = self
                    .support
                    .iter()
                    .find(|x| x.location == s)
                    .map_or(0.0, |x| x.weight);
                if lead.weight >= rules::LIFE_LOCATION_RATIO.value * standing_weight {
                    self.standing = Some(lead.location);
                }
            }
            _ => {}
        }
    }

    /// The location as it stands after the calls added so far.
    pub fn location(&self) -> LifeLocation {
        let support = self.support.clone();
        let total: f64 = support.iter().map(|s| s.weight).sum();
        let describe = |s: &LocationSupport| {
            format!(
                "{} {:.1} from {} readings",
                s.location.name(),
                s.weight,
                s.readings
            )
        };
        let Some(lead) = support.first() else {
            return LifeLocation {
                location: Location::None,
                confidence: 0.0,
                support,
                reason: "no reading of this life named a fault location".to_owned(),
            };
        };
        let listed = support.iter().map(describe).collect::<Vec<_>>().join(", ");
        let Some(location) = self.standing else {
            return LifeLocation {
                location: Location::Unknown,
                confidence: 0.0,
                reason: format!(
                    "unclear: the readings do not settle it ({listed}); a location needs {:.1} reading-equivalents and {:.0} times the runner-up",
                    rules::LIFE_LOCATION_EVIDENCE.value,
                    rules::LIFE_LOCATION_RATIO.value
                ),
                support,
            };
        };
        let own = support
            .iter()
            .find(|s| s.location == location)
            .map_or(lead.weight, |s| s.weight);
        let thin = (own / (3.0 * rules::LIFE_LOCATION_EVIDENCE.value)).min(1.0);
        LifeLocation {
            location,
            confidence: if total > 0.0 { own / total * thin } else { 0.0 },
            reason: format!(
                "{} over this life, accumulated over every point's readings ({listed})",
                location.name()
            ),
            support,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn call(t: f64, location: Location, confidence: f64) -> StageCall {
        StageCall {
            index: 0,
            t_s: t,
            stage: 2,
            raw_stage: 2,
            location,
            confidence,
            evidence: Vec::new(),
            limits: Vec::new(),
            relative: crate::stage::RelativeIndicators::default(),
            damage_index_db: 0.0,
            in_baseline: false,
        }
    }

    #[test]
    fn accumulates_over_points_and_resists_single_flips() {
        use Location::{InnerRace, OuterRace, RollingElement, Unknown};
        // Two points of one bearing; one reading of one point calls the outer race among many rolling
        // element calls: the life stays "rolling element".
        let calls = [
            call(1.0, Unknown, 0.6),
            call(2.0, RollingElement, 0.7),
            call(2.1, RollingElement, 0.8),
            call(3.0, OuterRace, 0.9),
            call(4.0, RollingElement, 0.9),
            call(4.1, RollingElement, 0.9),
        ];
        let life = life_location(&calls);
        assert_eq!(life.location, RollingElement, "{}", life.reason);
        assert_eq!(life.support[0].readings, 4);
        assert!(life.confidence > 0.5 && life.confidence <= 1.0);
        // Evenly split evidence is unclear, with both named.
        let split = [call(1.0, InnerRace, 0.8), call(2.0, OuterRace, 0.8)];
        let life = life_location(&split);
        assert_eq!(life.location, Unknown, "{}", life.reason);
        assert!(life.reason.contains("inner race") && life.reason.contains("outer race"));
        // Nothing located: none.
        assert_eq!(
            life_location(&[call(1.0, Location::None, 0.9)]).location,
            Location::None
        );
        // A standing location gives way only to evidence that outweighs it by the ratio.
        let mut late = vec![call(1.0, OuterRace, 0.9), call(2.0, OuterRace, 0.9)];
        late.push(call(3.0, InnerRace, 0.9));
        late.push(call(4.0, InnerRace, 0.9));
        assert_eq!(life_location(&late).location, OuterRace);
        for t in 5..9 {
            late.push(call(f64::from(t), InnerRace, 0.9));
        }
        assert_eq!(life_location(&late).location, InnerRace);
        // The running tally after every call is the whole-life location.
        let mut tally = LocationTally::default();
        let mut running = Vec::new();
        for c in &late {
            tally.add(c);
            running.push(tally.location().location);
        }
        assert_eq!(tally.location(), life_location(&late));
        assert_eq!(running[1], OuterRace, "{running:?}");
        assert_eq!(running.last(), Some(&InnerRace));
    }
}
