//! Which outage a bearing should go into, and what is wrong with a chosen slot.
//!
//! The rule behind the dates is a trade fact (common practice, no source; REFERENCES §9): the best time
//! to change a damaged rolling bearing is between stage 2 and stage 3, while the damage can still be
//! seen on the removed part and before secondary damage starts. The forecast turns that window into two
//! dates per bearing life: `replace_by` (the end of the best window) and `risk_from` (from when failure in
//! service becomes likely). This module only compares those dates with the outage calendar.

use chrono::NaiveDate;

use crate::model::{BearingNeed, Outage};

/// Something the planner should know about a slot, said in words by its `Display`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SlotWarning {
    /// The outage does not take the bearing's machine down.
    MachineNotDown {
        /// Outage name.
        outage: String,
        /// Machine id.
        machine_id: String,
        /// The machine's area.
        area: String,
    },
    /// The outage starts after the bearing's `risk_from` date.
    AfterRiskFrom {
        /// Outage name.
        outage: String,
        /// Outage start.
        start: NaiveDate,
        /// Bearing label ("machine position").
        bearing: String,
        /// The bearing's risk-from date.
        risk_from: NaiveDate,
    },
    /// The outage starts after `replace_by` but not after `risk_from`: later than the best window.
    AfterReplaceBy {
        /// Outage name.
        outage: String,
        /// Outage start.
        start: NaiveDate,
        /// Bearing label.
        bearing: String,
        /// The bearing's replace-by date.
        replace_by: NaiveDate,
    },
    /// The outage is already over.
    AlreadyOver {
        /// Outage name.
        outage: String,
        /// Its last day.
        end: NaiveDate,
    },
    /// No planned outage takes the machine down between today and the replace-by date.
    NoOutageFits {
        /// Bearing label.
        bearing: String,
        /// The bearing's replace-by date.
        replace_by: NaiveDate,
    },
}

impl std::fmt::Display for SlotWarning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::MachineNotDown {
                outage,
                machine_id,
                area,
            } => write!(
                f,
                "\"{outage}\" does not take machine {machine_id} down (neither its area {area} nor the machine \
                 is listed in the outage)"
            ),
            Self::AfterRiskFrom {
                outage,
                start,
                bearing,
                risk_from,
            } => write!(
                f,
                "\"{outage}\" starts {start}, after {bearing} is at risk of failing in service (from \
                 {risk_from}); plan an earlier stop"
            ),
            Self::AfterReplaceBy {
                outage,
                start,
                bearing,
                replace_by,
            } => write!(
                f,
                "\"{outage}\" starts {start}, after the replace-by date of {bearing} ({replace_by}); later than \
                 the best window"
            ),
            Self::AlreadyOver { outage, end } => {
                write!(f, "\"{outage}\" is already over (ended {end})")
            }
            Self::NoOutageFits {
                bearing,
                replace_by,
            } => write!(
                f,
                "no planned outage takes {bearing} down before its replace-by date {replace_by}: an unplanned \
                 stop is needed"
            ),
        }
    }
}

/// True when `outage` can take the replacement: it takes the machine down, is not over by `today`, and
/// starts on or before the bearing's `replace_by` date.
pub fn fits(need: &BearingNeed, outage: &Outage, today: NaiveDate) -> bool {
    can_take(need, outage, today) && outage.start <= need.forecast.replace_by
}

/// The outage takes the bearing's machine down and is not over by `today` (whatever its timing).
fn can_take(need: &BearingNeed, outage: &Outage, today: NaiveDate) -> bool {
    outage.takes_down(&need.life.machine_id, &need.life.area) && outage.end >= today
}

/// The suggested outage for a bearing: the LAST outage that fits (see [`fits`]), so the bearing runs as
/// long as it safely can while still coming out inside the best window. `None` means no outage fits and
/// an unplanned stop is needed (see [`need_warnings`]). Ties on the start date go to the longer outage.
pub fn suggest<'a>(
    need: &BearingNeed,
    outages: &'a [Outage],
    today: NaiveDate,
) -> Option<&'a Outage> {
    outages
        .iter()
        .filter(|o| fits(need, o, today))
        .max_by(|a, b| {
            a.start
                .cmp(&b.start)
                .then(a.end.cmp(&b.end))
                .then(b.id.cmp(&a.id))
        })
}

/// When no outage fits ([`suggest`] is `None`): the next outage, not yet over, that takes the
/// bearing's machine down, so an overdue bearing is still offered a slot; [`slot_warnings`] for it say
/// how late it is. `None` when no coming outage takes the machine down at all.
pub fn next_down<'a>(
    need: &BearingNeed,
    outages: &'a [Outage],
    today: NaiveDate,
) -> Option<&'a Outage> {
    outages
        .iter()
        .filter(|o| can_take(need, o, today))
        .min_by(|a, b| {
            a.start
                .cmp(&b.start)
                .then(b.end.cmp(&a.end))
                .then(a.id.cmp(&b.id))
        })
}

/// Warnings for putting `need` into `outage`, in a fixed order (machine, timing); empty for a good slot.
pub fn slot_warnings(need: &BearingNeed, outage: &Outage, today: NaiveDate) -> Vec<SlotWarning> {
    let mut warnings = Vec::new();
    let life = &need.life;
    if !outage.takes_down(&life.machine_id, &life.area) {
        warnings.push(SlotWarning::MachineNotDown {
            outage: outage.name.clone(),
            machine_id: life.machine_id.clone(),
            area: life.area.clone(),
        });
    }
    if outage.end < today {
        warnings.push(SlotWarning::AlreadyOver {
            outage: outage.name.clone(),
            end: outage.end,
        });
    }
    if outage.start > need.forecast.risk_from {
        warnings.push(SlotWarning::AfterRiskFrom {
            outage: outage.name.clone(),
            start: outage.start,
            bearing: life.label(),
            risk_from: need.forecast.risk_from,
        });
    } else if outage.start > need.forecast.replace_by {
        warnings.push(SlotWarning::AfterReplaceBy {
            outage: outage.name.clone(),
            start: outage.start,
            bearing: life.label(),
            replace_by: need.forecast.replace_by,
        });
    }
    warnings
}

/// Warnings about a bearing that has no slot yet: [`SlotWarning::NoOutageFits`] when nothing fits.
pub fn need_warnings(need: &BearingNeed, outages: &[Outage], today: NaiveDate) -> Vec<SlotWarning> {
    if suggest(need, outages, today).is_some() {
        Vec::new()
    } else {
        vec![SlotWarning::NoOutageFits {
            bearing: need.life.label(),
            replace_by: need.forecast.replace_by,
        }]
    }
}

#[cfg(test)]
mod tests {
    //! Crafted calendars. The dates encode the trade rule "replace between stage 2 and stage 3"
    //! (common practice, no source; REFERENCES §9) as `replace_by` / `risk_from`.
    use super::*;
    use crate::model::{BearingLife, Forecast};

    fn d(s: &str) -> NaiveDate {
        s.parse().unwrap()
    }

    fn need(machine: &str, area: &str, replace_by: &str, risk_from: &str) -> BearingNeed {
        BearingNeed {
            life: BearingLife {
                life_id: 7,
                machine_id: machine.into(),
                machine_name: format!("{machine} name"),
                area: area.into(),
                position: "MNDE".into(),
                bearing_type: "TCX-209".into(),
                lubrication: "grease".into(),
                installed: d("2024-02-12"),
            },
            forecast: Forecast {
                stage: 2,
                evidence: "outer race tones".into(),
                replace_by: d(replace_by),
                risk_from: d(risk_from),
                location: None,
            },
        }
    }

    fn outage(
        id: i64,
        name: &str,
        start: &str,
        end: &str,
        areas: &[&str],
        machines: &[&str],
    ) -> Outage {
        Outage {
            id,
            name: name.into(),
            start: d(start),
            end: d(end),
            areas: areas.iter().map(|s| (*s).to_string()).collect(),
            machines: machines.iter().map(|s| (*s).to_string()).collect(),
        }
    }

    fn calendar() -> Vec<Outage> {
        vec![
            outage(
                1,
                "Winter intake stop",
                "2027-01-11",
                "2027-01-13",
                &["Intake"],
                &[],
            ),
            outage(
                2,
                "Spring intake shutdown",
                "2027-03-08",
                "2027-03-12",
                &["Intake"],
                &[],
            ),
            outage(
                3,
                "Filter hall stop",
                "2027-04-05",
                "2027-04-06",
                &["Filters"],
                &[],
            ),
            outage(
                4,
                "Summer shutdown",
                "2027-07-05",
                "2027-07-16",
                &["Intake", "Filters"],
                &[],
            ),
            outage(
                5,
                "Blower swap",
                "2027-03-29",
                "2027-03-30",
                &["Filters"],
                &["IN-P1"],
            ),
        ]
    }

    #[test]
    fn suggests_the_last_covering_outage_before_replace_by() {
        let today = d("2026-12-01");
        // Intake pump: Jan and Mar intake stops and the Mar 29 stop (by machine) fit before Apr 20;
        // the last of them is the blower swap, which lists the machine itself.
        let n = need("IN-P1", "Intake", "2027-04-20", "2027-06-01");
        assert_eq!(suggest(&n, &calendar(), today).map(|o| o.id), Some(5));
        // Another intake machine, not listed by id: the spring shutdown.
        let n = need("IN-P2", "Intake", "2027-04-20", "2027-06-01");
        assert_eq!(suggest(&n, &calendar(), today).map(|o| o.id), Some(2));
        // Replace-by on the spring shutdown's first day still fits (work can start that day).
        let n = need("IN-P2", "Intake", "2027-03-08", "2027-06-01");
        assert_eq!(suggest(&n, &calendar(), today).map(|o| o.id), Some(2));
        // One day earlier it does not: back to January.
        let n = need("IN-P2", "Intake", "2027-03-07", "2027-06-01");
        assert_eq!(suggest(&n, &calendar(), today).map(|o| o.id), Some(1));
        assert!(need_warnings(&n, &calendar(), today).is_empty());
    }

    #[test]
    fn past_outages_are_not_suggested() {
        let n = need("IN-P2", "Intake", "2027-03-07", "2027-06-01");
        // On 14 Jan the January stop is over; nothing else for the intake before 7 Mar.
        let today = d("2027-01-14");
        assert_eq!(suggest(&n, &calendar(), today), None);
        // On its last day it still counts.
        assert_eq!(
            suggest(&n, &calendar(), d("2027-01-13")).map(|o| o.id),
            Some(1)
        );
    }

    /// Issue 17 item 6: an overdue bearing was offered nothing; it gets the next outage that takes
    /// its machine down, with the warning that it is after the replace-by date.
    #[test]
    fn an_overdue_bearing_is_offered_the_next_outage_that_takes_its_machine_down() {
        let n = need("IN-P2", "Intake", "2027-01-05", "2027-06-01");
        let today = d("2027-01-14");
        assert_eq!(suggest(&n, &calendar(), today), None);
        let cal = calendar();
        let next = next_down(&n, &cal, today).expect("an intake outage is still to come");
        assert!(next.start > n.forecast.replace_by && next.end >= today);
        assert!(
            calendar()
                .iter()
                .filter(|o| o.takes_down("IN-P2", "Intake") && o.end >= today)
                .all(|o| o.start >= next.start),
            "the next one, not a later one"
        );
        let w = slot_warnings(&n, next, today);
        assert!(
            w.iter()
                .any(|w| matches!(w, SlotWarning::AfterReplaceBy { .. })),
            "{w:?}"
        );
        // A machine no outage takes down gets nothing.
        assert_eq!(
            next_down(
                &need("XX-Z9", "Nowhere", "2027-01-05", "2027-06-01"),
                &calendar(),
                today
            ),
            None
        );
    }

    #[test]
    fn no_outage_fits_asks_for_an_unplanned_stop() {
        let today = d("2026-12-01");
        // Filters area: nothing before 1 Feb.
        let n = need("FI-B1", "Filters", "2027-02-01", "2027-03-01");
        assert_eq!(suggest(&n, &calendar(), today), None);
        let w = need_warnings(&n, &calendar(), today);
        assert_eq!(
            w,
            vec![SlotWarning::NoOutageFits {
                bearing: "FI-B1 MNDE".into(),
                replace_by: d("2027-02-01")
            }]
        );
        let text = w[0].to_string();
        assert!(text.contains("unplanned stop"), "{text}");
        assert!(text.contains("2027-02-01"), "{text}");
        // An empty calendar never fits.
        assert_eq!(need_warnings(&n, &[], today).len(), 1);
    }

    #[test]
    fn warns_when_the_outage_does_not_take_the_machine_down() {
        let today = d("2026-12-01");
        let n = need("IN-P2", "Intake", "2027-04-20", "2027-06-01");
        let cal = calendar();
        let w = slot_warnings(&n, &cal[2], today); // Filter hall stop.
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(
            matches!(&w[0], SlotWarning::MachineNotDown { machine_id, .. } if machine_id == "IN-P2")
        );
        assert!(
            w[0].to_string()
                .contains("does not take machine IN-P2 down"),
            "{}",
            w[0]
        );
        // Listed by machine id: no warning even though the area is not down.
        let n1 = need("IN-P1", "Intake", "2027-04-20", "2027-06-01");
        assert!(slot_warnings(&n1, &cal[4], today).is_empty());
    }

    #[test]
    fn warns_when_the_outage_starts_after_risk_from() {
        let today = d("2026-12-01");
        let n = need("IN-P2", "Intake", "2027-02-01", "2027-05-01");
        let cal = calendar();
        // Summer shutdown starts 5 Jul, after risk-from 1 May.
        let w = slot_warnings(&n, &cal[3], today);
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(matches!(w[0], SlotWarning::AfterRiskFrom { .. }));
        assert!(w[0].to_string().contains("at risk of failing"), "{}", w[0]);
        // Starting exactly on risk-from is late for the window but not yet past the risk date.
        let n = need("IN-P2", "Intake", "2027-02-01", "2027-07-05");
        let w = slot_warnings(&n, &cal[3], today);
        assert!(
            matches!(w.as_slice(), [SlotWarning::AfterReplaceBy { .. }]),
            "{w:?}"
        );
        assert!(
            w[0].to_string().contains("later than the best window"),
            "{}",
            w[0]
        );
    }

    #[test]
    fn a_good_slot_has_no_warning_and_both_problems_are_reported_together() {
        let today = d("2026-12-01");
        let cal = calendar();
        let n = need("IN-P2", "Intake", "2027-04-20", "2027-06-01");
        assert!(slot_warnings(&n, &cal[1], today).is_empty());
        // Wrong machine and too late at once.
        let n = need("IN-P2", "Intake", "2027-01-01", "2027-02-01");
        let w = slot_warnings(&n, &cal[2], today);
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(matches!(w[0], SlotWarning::MachineNotDown { .. }));
        assert!(matches!(w[1], SlotWarning::AfterRiskFrom { .. }));
    }

    #[test]
    fn an_outage_already_over_is_flagged() {
        let n = need("IN-P2", "Intake", "2027-04-20", "2027-06-01");
        let w = slot_warnings(&n, &calendar()[0], d("2027-02-01"));
        assert!(
            matches!(w.as_slice(), [SlotWarning::AlreadyOver { .. }]),
            "{w:?}"
        );
    }
}
