//! The real [`Backend`]: the `SQLite` store for data, the analysis crate for spectra.
//!
//! - `spectra` ([`compute_spectra`]): a reading's three spectra from the analysis crate.
//! - [`plan_steps`]: the outage-plan calendar's asks carried out against a store on the calling thread.

use std::collections::{BTreeMap, HashMap};
use std::path::Path;
use std::sync::{Arc, Mutex};

pub mod plan_steps;
mod spectra;

pub use spectra::compute_spectra;

use anyhow::Context as _;
use spallcast_analysis::forecast::{Lubrication, Projection};
use spallcast_analysis::record::StageRecord;
use spallcast_analysis::{FaultFactors, MachineGroup, SpectrumEngine, Support};
use spallcast_model::units::date_of_unix_s;
use spallcast_plan::source::bearing_calls;
use spallcast_store::{ReadingAnalyzer, Store};

use crate::model::{
    Annotation, AreaNode, Attention, BearingHistory, BearingKey, BearingNode, ChangedBearing,
    DueBearing, ImportProgress, ImportSummary, MachineNode, NoteView, PlantTree, ReadingId,
    ReadingSpectra, ReadingSummary, RejectedFile, StageCallView, UpdateProgress, Waveform,
};
use crate::source::{Backend, PlantSource};

/// How route folders are imported: the store's import plus whatever runs after it (stage calls,
/// forecasts). Receives the database, the folder and a progress callback.
pub type RouteImporter = dyn Fn(&Path, &Path, &mut dyn FnMut(ImportProgress)) -> anyhow::Result<ImportSummary>
    + Send
    + Sync;

/// What is done to a database as it is opened, before the window reads it (re-analysis of stale
/// readings, completion of stale stage calls), with progress.
pub type OpenUpdater =
    dyn Fn(&mut Store, &mut dyn FnMut(UpdateProgress)) -> anyhow::Result<()> + Send + Sync;

/// Store plus analysis crate.
pub struct StoreBackend {
    importer: Arc<RouteImporter>,
    updater: Option<Arc<OpenUpdater>>,
    engine: Mutex<SpectrumEngine>,
}

impl StoreBackend {
    /// A backend whose imports call `importer`; databases are opened as they are.
    pub fn new(importer: Arc<RouteImporter>) -> Self {
        Self {
            importer,
            updater: None,
            engine: Mutex::new(SpectrumEngine::new()),
        }
    }

    /// The same backend, bringing each database up to date with `updater` as it is opened.
    #[must_use]
    pub fn with_updater(mut self, updater: Arc<OpenUpdater>) -> Self {
        self.updater = Some(updater);
        self
    }

    /// A backend that imports with the store's own route import and `analyzer`, and nothing after it.
    pub fn with_analyzer(analyzer: Arc<dyn ReadingAnalyzer + Send + Sync>) -> Self {
        Self::new(Arc::new(
            move |db: &Path, folder: &Path, progress: &mut dyn FnMut(ImportProgress)| {
                store_import(db, folder, analyzer.as_ref(), progress)
            },
        ))
    }
}

/// Imports `folder` into `db` with the store's route import and converts the summary.
pub fn store_import(
    db: &Path,
    folder: &Path,
    analyzer: &dyn ReadingAnalyzer,
    progress: &mut dyn FnMut(ImportProgress),
) -> anyhow::Result<ImportSummary> {
    let mut store = Store::open(db)?;
    let summary = store.import_route(folder, analyzer, &mut |done, total| {
        progress(ImportProgress { done, total });
    })?;
    Ok(summary_view(&summary))
}

/// The window's view of a store import summary.
pub fn summary_view(summary: &spallcast_store::ImportSummary) -> ImportSummary {
    ImportSummary {
        imported: summary.new_readings,
        already_present: summary.duplicates,
        assessment_failed: None,
        rejected: summary
            .rejected
            .iter()
            .map(|r| RejectedFile {
                file: r.file.clone(),
                reason: r.reason.clone(),
            })
            .collect(),
    }
}

impl Backend for StoreBackend {
    fn open(
        &self,
        db_path: &Path,
        progress: &mut dyn FnMut(UpdateProgress),
    ) -> anyhow::Result<Box<dyn PlantSource>> {
        let mut store = Store::open_existing(db_path)?;
        if let Some(update) = &self.updater {
            update(&mut store, progress)
                .with_context(|| format!("bringing {} up to date failed", db_path.display()))?;
        }
        // The baseline for `changed_elsewhere`: changes committed from now on by other connections.
        let data_version = Some(store.data_version()?);
        Ok(Box::new(StoreSource {
            store,
            positions: HashMap::new(),
            data_version,
        }))
    }

    fn import_route(
        &self,
        db_path: &Path,
        folder: &Path,
        progress: &mut dyn FnMut(ImportProgress),
    ) -> anyhow::Result<ImportSummary> {
        (self.importer)(db_path, folder, progress)
    }

    fn spectra(&self, waveform: &Waveform) -> anyhow::Result<ReadingSpectra> {
        let mut engine = self
            .engine
            .lock()
            .map_err(|_| anyhow::anyhow!("the spectrum engine was poisoned by a panic"))?;
        compute_spectra(&mut engine, waveform)
    }
}

/// What the source remembers about a bearing position between queries.
#[derive(Debug, Clone)]
struct PositionInfo {
    id: i64,
    factors: Option<FaultFactors>,
    iso_group: MachineGroup,
    iso_support: Support,
    lubrication: Lubrication,
}

/// A read connection to one database.
struct StoreSource {
    store: Store,
    positions: HashMap<BearingKey, PositionInfo>,
    /// `PRAGMA data_version` at the last check: it changes when another connection commits.
    data_version: Option<i64>,
}

impl StoreSource {
    fn position(&mut self, key: &BearingKey) -> anyhow::Result<PositionInfo> {
        if !self.positions.contains_key(key) {
            self.plant()?;
        }
        self.positions
            .get(key)
            .cloned()
            .with_context(|| format!("no bearing {} in this database", key.display()))
    }

    fn stage_of(&self, reading: ReadingId) -> anyhow::Result<Option<spallcast_store::StageCall>> {
        Ok(self.store.stage_call(reading)?)
    }

    /// The diagnosis string of a reading's stored analysis, if any.
    fn diagnosis_of(&self, reading: ReadingId) -> anyhow::Result<Option<String>> {
        Ok(self.store.analysis(reading)?.and_then(|a| a.diagnosis))
    }

    /// Highest stage and the diagnoses of a position's readings on one day.
    fn day_state(
        &self,
        readings: &[&spallcast_store::ReadingMeta],
    ) -> anyhow::Result<(Option<u8>, Vec<String>)> {
        let mut stage = None;
        let mut diagnoses = Vec::new();
        for r in readings {
            if let Some(call) = self.stage_of(r.id)? {
                stage = stage.max(Some(call.stage));
            }
            if let Some(d) = self.diagnosis_of(r.id)? {
                diagnoses.push(d);
            }
        }
        diagnoses.sort();
        diagnoses.dedup();
        Ok((stage, diagnoses))
    }
}

impl PlantSource for StoreSource {
    fn plant(&mut self) -> anyhow::Result<PlantTree> {
        let tree = self.store.plant_tree()?;
        // The bearing's call (the same rule as the command line and the planner's export); a
        // bearing just replaced has none until its new life is read.
        let stage_by_position: HashMap<i64, u8> = bearing_calls(&self.store)?
            .into_iter()
            .map(|(position, call)| (position, call.stage))
            .collect();
        self.positions.clear();
        let mut areas = Vec::with_capacity(tree.areas.len());
        for area in &tree.areas {
            let mut machines = Vec::with_capacity(area.machines.len());
            for machine in &area.machines {
                let mut bearings = Vec::with_capacity(machine.bearings.len());
                for b in &machine.bearings {
                    let key = BearingKey {
                        machine_id: machine.tag.clone(),
                        position: b.position.clone(),
                    };
                    self.positions.insert(
                        key.clone(),
                        PositionInfo {
                            id: b.position_id,
                            factors: b.factors.filter(FaultFactors::is_valid),
                            iso_group: MachineGroup::from_number(machine.iso_group)
                                .unwrap_or(MachineGroup::Medium),
                            iso_support: machine.iso_support,
                            lubrication: b.lubrication,
                        },
                    );
                    bearings.push(BearingNode {
                        key,
                        description: b.description.clone(),
                        stage: stage_by_position.get(&b.position_id).copied(),
                        points: b.points.iter().map(|p| p.tag.clone()).collect(),
                    });
                }
                machines.push(MachineNode {
                    id: machine.tag.clone(),
                    name: machine.name.clone(),
                    bearings,
                });
            }
            areas.push(AreaNode {
                name: area.name.clone(),
                machines,
            });
        }
        Ok(PlantTree {
            site: tree.site_name,
            areas,
        })
    }

    fn attention(&mut self) -> anyhow::Result<Attention> {
        let days = self.store.route_days()?;
        let latest_day = days.first().map(|d| d.day);
        let previous_day = days.get(1).map(|d| d.day);
        let mut changed = Vec::new();
        let mut not_collected = Vec::new();
        if let (Some(latest), Some(previous)) = (latest_day, previous_day) {
            let now = self.store.readings_of_day(latest)?;
            let before = self.store.readings_of_day(previous)?;
            let read_now: std::collections::BTreeSet<&str> =
                now.iter().map(|r| r.point.as_str()).collect();
            let missed: std::collections::BTreeSet<&str> = before
                .iter()
                .map(|r| r.point.as_str())
                .filter(|p| !read_now.contains(p))
                .collect();
            not_collected = missed.into_iter().map(str::to_owned).collect();
            let mut by_key: BTreeMap<
                BearingKey,
                (
                    Vec<&spallcast_store::ReadingMeta>,
                    Vec<&spallcast_store::ReadingMeta>,
                ),
            > = BTreeMap::new();
            for r in &now {
                let key = BearingKey {
                    machine_id: r.machine.clone(),
                    position: r.position.clone(),
                };
                by_key.entry(key).or_default().0.push(r);
            }
            for r in &before {
                let key = BearingKey {
                    machine_id: r.machine.clone(),
                    position: r.position.clone(),
                };
                if let Some(entry) = by_key.get_mut(&key) {
                    entry.1.push(r);
                }
            }
            for (key, (now_readings, before_readings)) in by_key {
                if before_readings.is_empty() {
                    continue;
                }
                let (stage_now, diag_now) = self.day_state(&now_readings)?;
                let (stage_before, diag_before) = self.day_state(&before_readings)?;
                let what = if stage_now != stage_before {
                    format!(
                        "stage {} to {}",
                        crate::palette::stage_text(stage_before),
                        crate::palette::stage_text(stage_now)
                    )
                } else if diag_now != diag_before {
                    format!(
                        "findings {} to {}",
                        list_or_none(&diag_before),
                        list_or_none(&diag_now)
                    )
                } else {
                    continue;
                };
                changed.push(ChangedBearing {
                    key,
                    stage_before,
                    stage_now,
                    what,
                });
            }
            changed.sort_by(|a, b| {
                b.stage_now
                    .cmp(&a.stage_now)
                    .then_with(|| a.key.cmp(&b.key))
            });
        }
        let mut due = Vec::new();
        let mut forecasts_stored = false;
        let calls = bearing_calls(&self.store)?;
        for state in self.store.latest_states()? {
            let Some(call) = calls.get(&state.position_id) else {
                continue;
            };
            if state.life.as_ref().is_none_or(|l| l.removed.is_some()) {
                continue;
            }
            if let Some(forecast) = call.record.as_ref().and_then(forecast_from) {
                forecasts_stored = true;
                due.push(DueBearing {
                    key: BearingKey {
                        machine_id: state.machine.clone(),
                        position: state.position.clone(),
                    },
                    stage: Some(call.stage),
                    replace_by: forecast.replace_by,
                });
            }
        }
        // Soonest first; on the same day the later stage first (it has less margin), then by name.
        due.sort_by(|a, b| {
            a.replace_by
                .cmp(&b.replace_by)
                .then_with(|| b.stage.cmp(&a.stage))
                .then_with(|| a.key.cmp(&b.key))
        });
        let rejected = self
            .store
            .rejected_files(100)?
            .into_iter()
            .map(|e| RejectedFile {
                file: e.file,
                reason: e.reason.unwrap_or_default(),
            })
            .collect();
        Ok(Attention {
            latest_day,
            previous_day,
            changed,
            due,
            forecasts_stored,
            rejected,
            not_collected,
        })
    }

    fn bearing(&mut self, key: &BearingKey) -> anyhow::Result<BearingHistory> {
        let info = self.position(key)?;
        let lives = self.store.lives(info.id)?;
        let metas = self.store.readings_of_position(info.id)?;
        let mut readings = Vec::with_capacity(metas.len());
        for meta in metas {
            let scalars = self
                .store
                .analysis(meta.id)?
                .map(|a| a.scalars)
                .unwrap_or_default();
            let call = self.stage_of(meta.id)?;
            let stage = call.as_ref().map(|c| c.stage);
            let record = call.as_ref().and_then(record_of);
            let damage_db = record
                .as_ref()
                .map(|r| r.call.damage_index_db)
                .filter(|d| d.is_finite());
            let forecast = record.as_ref().and_then(|r| r.forecast.as_ref());
            let projected = |p: Option<Projection>| p.and_then(|p| date_of_unix_s(p.t_s));
            let replace_by = projected(forecast.and_then(|f| f.replace_by));
            let end_of_life = projected(forecast.and_then(|f| f.end_of_life));
            let end_of_life_is_prior = forecast.is_some_and(|f| f.end_of_life_basis.is_prior());
            let baseline = meta.baseline;
            readings.push(ReadingSummary {
                id: meta.id,
                point: meta.point,
                taken_at: meta.taken_at,
                rpm: meta.shaft_hz * 60.0,
                scalars,
                stage,
                damage_db,
                baseline,
                replace_by,
                end_of_life,
                end_of_life_is_prior,
            });
        }
        readings.sort_by_key(|r| r.taken_at);
        // The bearing's one call: the governing point's latest call on the current life.
        let call = spallcast_plan::source::bearing_call(&self.store, info.id)?;
        let stage_call = call.as_ref().map(|c| StageCallView {
            stage: c.stage,
            point: c.point.clone(),
            taken_at: c.taken_at,
            points: c.points.clone(),
            evidence: c
                .record
                .as_ref()
                .map(StageRecord::sentences)
                .unwrap_or_default(),
            location: c.location.clone(),
        });
        let forecast = call
            .as_ref()
            .and_then(|c| c.record.as_ref())
            .and_then(forecast_from);
        let notes = self
            .store
            .notes(info.id)?
            .into_iter()
            .map(|n| NoteView {
                on_day: n.on_day,
                kind: n.kind.as_str().to_owned(),
                text: n.text,
                reading: n.reading_id,
            })
            .collect();
        Ok(BearingHistory {
            key: key.clone(),
            factors: info.factors,
            iso_group: info.iso_group,
            iso_support: info.iso_support,
            lubrication: info.lubrication,
            readings,
            lives_started: lives.iter().map(|l| l.installed).collect(),
            stage_call,
            forecast,
            notes,
        })
    }

    fn waveform(&mut self, reading: ReadingId) -> anyhow::Result<Waveform> {
        let mut found = self.store.waveforms(&[reading])?;
        let w = found
            .pop()
            .with_context(|| format!("reading {reading} has no stored waveform"))?;
        let key = BearingKey {
            machine_id: w.meta.machine.clone(),
            position: w.meta.position.clone(),
        };
        let factors = self.position(&key).ok().and_then(|p| p.factors);
        if w.samples_g.is_empty() {
            anyhow::bail!(
                "reading {reading} ({}) has no stored samples",
                w.meta.source_file
            );
        }
        Ok(Waveform {
            reading_id: reading,
            samples_g: w.samples_g,
            sample_rate_hz: w.meta.sample_rate_hz,
            shaft_hz: w.meta.shaft_hz,
            factors,
        })
    }

    fn plan(&mut self, today: chrono::NaiveDate) -> anyhow::Result<spallcast_plan::PlanBoard> {
        Ok(spallcast_plan::source::load_board(&self.store, today)?)
    }

    fn change_plan(
        &mut self,
        today: chrono::NaiveDate,
        changes: &[spallcast_plan::source::PlanChange],
    ) -> (
        String,
        anyhow::Result<spallcast_plan::PlanBoard>,
        crate::plan_view::StepOutcome,
    ) {
        let (message, board, outcome) =
            spallcast_plan::steps::apply_changes(&mut self.store, today, None, changes);
        (message, board.map_err(anyhow::Error::from), outcome)
    }

    fn undo_plan(
        &mut self,
        today: chrono::NaiveDate,
        step: &spallcast_plan::source::PlanUndo,
    ) -> (
        String,
        anyhow::Result<spallcast_plan::PlanBoard>,
        crate::plan_view::StepOutcome,
    ) {
        let (message, board, outcome) =
            spallcast_plan::steps::undo_step(&mut self.store, today, None, step);
        (message, board.map_err(anyhow::Error::from), outcome)
    }

    fn annotate(&mut self, key: &BearingKey, change: &Annotation) -> anyhow::Result<String> {
        let info = self.position(key)?;
        match change {
            Annotation::AddNote {
                on_day,
                kind,
                text,
                reading,
            } => {
                let kind = spallcast_store::NoteKind::parse(kind)
                    .with_context(|| format!("{kind:?} is not a kind of note"))?;
                self.store.add_note(&spallcast_store::NewNote {
                    position_id: info.id,
                    reading_id: *reading,
                    on_day: *on_day,
                    kind,
                    text: text.clone(),
                })?;
                Ok(format!(
                    "note ({kind}, {on_day}) added to {}",
                    key.display()
                ))
            }
            Annotation::SetBaseline(ids) => {
                self.store.set_baseline(info.id, ids)?;
                spallcast_pipeline::assess::complete_stage_calls(
                    &mut self.store,
                    &spallcast_analysis::stage::StageOptions::default(),
                    &mut |_, _| {},
                )?;
                Ok(if ids.is_empty() {
                    format!(
                        "{}: baseline marks cleared; stage calls recomputed",
                        key.display()
                    )
                } else {
                    format!(
                        "{}: {} readings form the baseline; stage calls recomputed",
                        key.display(),
                        ids.len()
                    )
                })
            }
        }
    }

    fn changed_elsewhere(&mut self) -> anyhow::Result<bool> {
        let version = self.store.data_version()?;
        let changed = self.data_version.is_some_and(|v| v != version);
        self.data_version = Some(version);
        Ok(changed)
    }
}

fn list_or_none(items: &[String]) -> String {
    if items.is_empty() {
        "none".to_owned()
    } else {
        items.join(", ")
    }
}

mod records;
pub use records::{forecast_from, record_of};

#[cfg(test)]
mod tests;
