//! How the window takes each reply of its data and import threads.

use crate::app::SpallcastApp;
use crate::cache::Slot;
use crate::plan_view::PlanPanel;
use crate::worker::{Reply, Request};

impl SpallcastApp {
    pub(crate) fn on_reply(&mut self, reply: Reply) {
        match reply {
            Reply::OpenFailed(e) => {
                self.plant_loading = false;
                self.worker = None;
                self.set_status(format!("could not open the database: {e}"), true);
            }
            Reply::Updating(p) => {
                self.set_status(format!("{}: {}/{}", p.what, p.done, p.total), false);
            }
            Reply::Plant(result) => {
                self.plant_loading = false;
                match result {
                    Ok((plant, attention)) => {
                        let bearings = plant.bearings().count();
                        self.set_status(
                            format!("{}: {bearings} bearing positions", self.db_label()),
                            false,
                        );
                        self.plant = Some(plant);
                        self.attention = Some(attention);
                        if let Some(key) = self.selected.clone() {
                            // Reload the bearing shown (after an import its history grew).
                            self.history_loading = self
                                .worker
                                .as_ref()
                                .is_some_and(|w| w.send(Request::Bearing(key)));
                        }
                    }
                    Err(e) => self.set_status(format!("could not read the plant: {e}"), true),
                }
            }
            Reply::Bearing(key, result) => {
                if self.selected.as_ref() != Some(&key) {
                    return;
                }
                self.history_loading = false;
                match result {
                    Ok(history) => self.history = Some(history),
                    Err(e) => {
                        self.set_status(format!("could not load {}: {e}", key.display()), true);
                    }
                }
            }
            Reply::Spectra(id, result, took) => {
                let slot = match result {
                    Ok(s) => {
                        self.last_spectra_time = Some(took);
                        Slot::Ready(s)
                    }
                    Err(e) => Slot::Failed(e),
                };
                self.cache.spectra.insert(id, slot);
            }
            Reply::Waveform(id, result) => {
                let slot = match result {
                    Ok(w) => Slot::Ready(w),
                    Err(e) => Slot::Failed(e),
                };
                self.cache.waveforms.insert(id, slot);
            }
            Reply::ImportProgress(p) => {
                if let Some(job) = &mut self.import {
                    job.progress = p;
                }
            }
            Reply::ImportDone(result) => {
                self.import = None;
                match &result {
                    Ok(s) => {
                        let done = format!(
                            "import done: {} new, {} already present, {} rejected",
                            s.imported,
                            s.already_present,
                            s.rejected.len()
                        );
                        match &s.assessment_failed {
                            None => self.set_status(done, false),
                            Some(why) => self.set_status(
                                format!(
                                    "{done}; the stage assessment failed ({why}): the calls will be \
                                     completed when the database is next opened"
                                ),
                                true,
                            ),
                        }
                    }
                    Err(e) => self.set_status(format!("import failed: {e}"), true),
                }
                self.import_summary = Some(result);
                // New readings change stages, lists, histories and forecasts: reload them.
                self.reload_all();
            }
            Reply::Plan(result) => {
                self.plan_loading = false;
                match result {
                    Ok(board) => match &mut self.plan {
                        Some(panel) => panel.board = board,
                        None => {
                            self.plan = Some(PlanPanel::from_board(board));
                        }
                    },
                    Err(e) => self.set_status(format!("could not read the outage plan: {e}"), true),
                }
            }
            Reply::PlanChanged(message, board, outcome) => {
                self.plan_loading = false;
                if let Some(panel) = &mut self.plan {
                    panel.received(message, board, outcome);
                }
                // A replacement marked done starts a new life: the tree, the header and the due
                // list read the bearing's call again (the new bearing has none yet).
                if let Some(worker) = &self.worker
                    && !self.plant_loading
                {
                    self.plant_loading = worker.send(Request::Plant);
                }
            }
            Reply::Annotated(_key, result) => {
                self.annotating = false;
                match result {
                    Ok(message) => {
                        self.set_status(message, false);
                        // The tree, the due list and the bearing's history read the change back.
                        self.reload_all();
                    }
                    Err(e) => self.set_status(format!("not saved: {e}"), true),
                }
            }
            Reply::ChangedElsewhere(changed) => {
                self.change_check_pending = false;
                if changed && !self.plant_loading {
                    self.set_status(
                        "the database was changed by another program; reading it again".to_owned(),
                        false,
                    );
                    self.reload_all();
                }
            }
        }
    }
}
