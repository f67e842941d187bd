//! A snapshot of the plan: outages, bearings needing a slot, and the replacements placed so far.

use chrono::NaiveDate;

use crate::model::{BearingNeed, Outage, PlanEntry, PlanStatus};
use crate::rules::{SlotWarning, need_warnings, slot_warnings, suggest};

/// Everything the calendar view and the exports show, read once from the store.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PlanBoard {
    /// The day the plan is looked at from (injected, so tests and reports are reproducible).
    pub today: NaiveDate,
    /// Outages, sorted by start date then name.
    pub outages: Vec<Outage>,
    /// Current bearing lives with a forecast (any stage), in any order.
    pub needs: Vec<BearingNeed>,
    /// Plan entries of any status.
    pub entries: Vec<PlanEntry>,
    /// The analyst's notes on each bearing life (by life id), oldest first, as
    /// `YYYY-MM-DD kind: text` lines.
    pub notes: std::collections::BTreeMap<i64, Vec<String>>,
}

impl PlanBoard {
    /// Sorts outages by start (then name) so every consumer sees the same order.
    pub fn normalise(&mut self) {
        self.outages
            .sort_by(|a, b| a.start.cmp(&b.start).then_with(|| a.name.cmp(&b.name)));
    }

    /// The outage with this id.
    pub fn outage(&self, id: i64) -> Option<&Outage> {
        self.outages.iter().find(|o| o.id == id)
    }

    /// The entry for this life that is planned or done, if any.
    pub fn active_entry(&self, life_id: i64) -> Option<&PlanEntry> {
        self.entries
            .iter()
            .find(|e| e.life.life_id == life_id && e.status != PlanStatus::Cancelled)
    }

    /// Bearings that need a slot (no planned or done entry), sorted by `replace_by`, then machine and
    /// position.
    pub fn open_needs(&self) -> Vec<&BearingNeed> {
        let mut open: Vec<&BearingNeed> = self
            .needs
            .iter()
            .filter(|n| self.active_entry(n.life.life_id).is_none())
            .collect();
        open.sort_by(|a, b| {
            a.forecast
                .replace_by
                .cmp(&b.forecast.replace_by)
                .then_with(|| a.life.machine_id.cmp(&b.life.machine_id))
                .then_with(|| a.life.position.cmp(&b.life.position))
        });
        open
    }

    /// Replacements in an outage that are planned or done, sorted by machine then position.
    pub fn tasks_in(&self, outage_id: i64) -> Vec<&PlanEntry> {
        let mut tasks: Vec<&PlanEntry> = self
            .entries
            .iter()
            .filter(|e| e.outage_id == outage_id && e.status != PlanStatus::Cancelled)
            .collect();
        tasks.sort_by(|a, b| {
            a.life
                .machine_id
                .cmp(&b.life.machine_id)
                .then_with(|| a.life.position.cmp(&b.life.position))
        });
        tasks
    }

    /// The suggested outage for a bearing (see [`crate::rules::suggest`]).
    pub fn suggestion(&self, need: &BearingNeed) -> Option<&Outage> {
        suggest(need, &self.outages, self.today)
    }

    /// For a bearing no outage fits (overdue, or nothing before its replace-by date): the next outage
    /// that takes its machine down ([`crate::rules::next_down`]), offered with its warnings.
    pub fn late_offer(&self, need: &BearingNeed) -> Option<&Outage> {
        if self.suggestion(need).is_some() {
            return None;
        }
        crate::rules::next_down(need, &self.outages, self.today)
    }

    /// Warnings on a plan entry: the slot checks when the entry is still planned and has a forecast.
    pub fn entry_warnings(&self, entry: &PlanEntry) -> Vec<SlotWarning> {
        if entry.status != PlanStatus::Planned {
            return Vec::new();
        }
        match (&entry.forecast, self.outage(entry.outage_id)) {
            (Some(forecast), Some(outage)) => slot_warnings(
                &BearingNeed {
                    life: entry.life.clone(),
                    forecast: forecast.clone(),
                },
                outage,
                self.today,
            ),
            _ => Vec::new(),
        }
    }

    /// Warnings for a bearing with no slot yet.
    pub fn open_need_warnings(&self, need: &BearingNeed) -> Vec<SlotWarning> {
        need_warnings(need, &self.outages, self.today)
    }

    /// The outages whose end is on or after `today` and whose start is before `today + horizon_days`,
    /// plus any earlier outage that still holds a planned replacement.
    pub fn coming_outages(&self, horizon_days: i64) -> Vec<&Outage> {
        let until = self.today + chrono::Duration::days(horizon_days);
        self.outages
            .iter()
            .filter(|o| {
                (o.end >= self.today && o.start <= until)
                    || self
                        .entries
                        .iter()
                        .any(|e| e.outage_id == o.id && e.status == PlanStatus::Planned)
            })
            .collect()
    }
}
