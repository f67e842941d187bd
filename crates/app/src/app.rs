//! The application state: persisted choices, loaded data, caches, jobs and panels, and the frame loop.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::time::Duration;

use eframe::egui;

use crate::actions::Action;
use crate::cache::{ReadingCache, Slot};
use crate::model::{Attention, BearingHistory, BearingKey, ImportSummary, PlantTree};
use crate::panels::bearing_ui::EvidencePanel;
use crate::panels::changes_ui::ChangesPanel;
use crate::panels::spectra_ui::SpectraPanel;
use crate::panels::tree_ui::PlantTreePanel;
use crate::panels::trend_ui::TrendPanel;
use crate::panels::waveform_ui::WaveformPanel;
use crate::path_prompt::{Asked, PathPurpose};
use crate::plan_view::PlanPanel;
use crate::screenshot::ScreenshotPlan;
use crate::settings::{PersistedState, View};
use crate::source::Backend;
use crate::worker::{DataWorker, ImportJob, Request};

/// Key of the persisted state in eframe's storage.
const STATE_KEY: &str = "spallcast-state";

/// Longest time spent per frame taking replies off the worker channels.
const DRAIN_BUDGET: Duration = Duration::from_millis(8);

/// How often the window asks whether another process (a command-line import, a second window) changed
/// the database.
const CHANGE_POLL: Duration = Duration::from_secs(3);

/// How the window starts.
#[derive(Debug, Clone, Default)]
pub struct StartOptions {
    /// Database to open.
    pub db_path: Option<PathBuf>,
    /// View to show first (overrides the saved one).
    pub start_view: Option<View>,
    /// Save a screenshot here once the data has loaded, then close.
    pub screenshot: Option<PathBuf>,
    /// Skip the first-run cautions notice (screenshots, tests that do not test it).
    pub cautions_acknowledged: bool,
    /// The day the outage plan is drawn from (default: today, local time).
    pub today: Option<chrono::NaiveDate>,
    /// Never try the native file dialogs: "Open database…" and "Import route folder…" ask for a typed
    /// path (tests; set from `SPALLCAST_NO_FILE_DIALOG` for a desktop whose portal misbehaves).
    pub no_file_dialog: bool,
}

/// A line for the status bar.
#[derive(Debug, Clone, PartialEq)]
pub struct StatusMessage {
    /// The text.
    pub text: String,
    /// Whether it reports a failure.
    pub is_error: bool,
}

/// The Spallcast window.
#[allow(
    clippy::struct_excessive_bools,
    reason = "independent in-flight flags of separate background requests, not a state machine"
)]
pub struct SpallcastApp {
    /// Choices saved between runs.
    pub state: PersistedState,
    pub(crate) backend: Arc<dyn Backend>,
    pub(crate) ctx: egui::Context,
    pub(crate) worker: Option<DataWorker>,
    pub(crate) import: Option<ImportJob>,
    pub(crate) import_summary: Option<Result<ImportSummary, String>>,
    pub(crate) plant: Option<PlantTree>,
    pub(crate) attention: Option<Attention>,
    pub(crate) plant_loading: bool,
    pub(crate) selected: Option<BearingKey>,
    pub(crate) history: Option<BearingHistory>,
    pub(crate) history_loading: bool,
    pub(crate) cache: ReadingCache,
    pub(crate) status: Option<StatusMessage>,
    pub(crate) last_spectra_time: Option<Duration>,
    pub(crate) tree: PlantTreePanel,
    pub(crate) changes: ChangesPanel,
    pub(crate) spectra: SpectraPanel,
    pub(crate) trend: TrendPanel,
    pub(crate) waveform: WaveformPanel,
    pub(crate) evidence: EvidencePanel,
    pub(crate) plan: Option<PlanPanel>,
    pub(crate) plan_loading: bool,
    pub(crate) today: chrono::NaiveDate,
    pub(crate) last_change_check: std::time::Instant,
    pub(crate) change_check_pending: bool,
    pub(crate) screenshot: Option<ScreenshotPlan>,
    /// The typed-path prompt, when the file dialog could not be shown.
    pub(crate) path_prompt: Option<crate::path_prompt::PathPrompt>,
    /// A note or baseline change is on its way to the data thread.
    pub(crate) annotating: bool,
    /// A plot being saved: its PNG waits for the window's screenshot.
    pub(crate) pending_png: Option<crate::plot_export::PendingPng>,
    no_file_dialog: bool,
    persist: bool,
}

impl SpallcastApp {
    /// Builds the app; opens `options.db_path` on a worker thread at once.
    pub fn new(
        cc: &eframe::CreationContext<'_>,
        backend: Arc<dyn Backend>,
        options: StartOptions,
    ) -> Self {
        crate::assets::install_fonts(&cc.egui_ctx);
        let persist = options.screenshot.is_none();
        let mut state: PersistedState = if persist {
            cc.storage
                .and_then(|s| eframe::get_value(s, STATE_KEY))
                .unwrap_or_default()
        } else {
            PersistedState::default()
        };
        if let Some(view) = options.start_view {
            state.view = view;
        }
        if options.cautions_acknowledged {
            state.cautions_acknowledged = true;
        }
        let mut app = Self {
            state,
            backend,
            ctx: cc.egui_ctx.clone(),
            worker: None,
            import: None,
            import_summary: None,
            plant: None,
            attention: None,
            plant_loading: false,
            selected: None,
            history: None,
            history_loading: false,
            cache: ReadingCache::default(),
            status: None,
            last_spectra_time: None,
            tree: PlantTreePanel::default(),
            changes: ChangesPanel,
            spectra: SpectraPanel::default(),
            trend: TrendPanel::default(),
            waveform: WaveformPanel::default(),
            evidence: EvidencePanel::default(),
            plan: None,
            plan_loading: false,
            today: options
                .today
                .unwrap_or_else(|| chrono::Local::now().date_naive()),
            last_change_check: std::time::Instant::now(),
            change_check_pending: false,
            screenshot: options.screenshot.map(ScreenshotPlan::new),
            pending_png: None,
            path_prompt: None,
            annotating: false,
            no_file_dialog: options.no_file_dialog,
            persist,
        };
        if let Some(db) = options.db_path {
            app.open_database(&db);
        }
        app
    }

    /// The database shown, if any.
    pub fn db_path(&self) -> Option<&Path> {
        self.worker.as_ref().map(DataWorker::db_path)
    }

    /// The plant tree, once loaded.
    pub fn plant(&self) -> Option<&PlantTree> {
        self.plant.as_ref()
    }

    /// The attention lists, once loaded.
    pub fn attention(&self) -> Option<&Attention> {
        self.attention.as_ref()
    }

    /// The selected bearing.
    pub fn selected_bearing(&self) -> Option<&BearingKey> {
        self.selected.as_ref()
    }

    /// The selected bearing's history, once loaded.
    pub fn history(&self) -> Option<&BearingHistory> {
        self.history.as_ref()
    }

    /// The display units chosen (saved between runs).
    pub fn units(&self) -> crate::settings::UnitPrefs {
        self.state.units
    }

    /// The spectra view (selection, last frame's summary, cursor readout).
    pub fn spectra_panel(&self) -> &SpectraPanel {
        &self.spectra
    }

    /// The spectra view, for driving it from tests.
    pub fn spectra_panel_mut(&mut self) -> &mut SpectraPanel {
        &mut self.spectra
    }

    /// The life-trend view.
    pub fn trend_panel(&self) -> &TrendPanel {
        &self.trend
    }

    /// The waveform view.
    pub fn waveform_panel(&self) -> &WaveformPanel {
        &self.waveform
    }

    /// Spectra and waveform caches.
    pub fn cache(&self) -> &ReadingCache {
        &self.cache
    }

    /// The status-bar message.
    pub fn status(&self) -> Option<&StatusMessage> {
        self.status.as_ref()
    }

    /// The last import's outcome, until dismissed.
    pub fn import_summary(&self) -> Option<&Result<ImportSummary, String>> {
        self.import_summary.as_ref()
    }

    /// The outage-plan calendar, once loaded.
    pub fn plan_panel(&self) -> Option<&PlanPanel> {
        self.plan.as_ref()
    }

    /// The outage-plan calendar, for driving it from tests.
    pub fn plan_panel_mut(&mut self) -> Option<&mut PlanPanel> {
        self.plan.as_mut()
    }

    /// Whether an import is running.
    pub fn importing(&self) -> bool {
        self.import.is_some()
    }

    /// Whether any background work is in flight (loading, computing, importing).
    pub fn is_busy(&self) -> bool {
        self.plant_loading
            || self.annotating
            || self.plan_loading
            || self.history_loading
            || self.import.is_some()
            || self.cache.any_pending()
    }

    /// Applies one action.
    pub fn apply(&mut self, action: Action) {
        match action {
            Action::OpenDatabaseDialog => {
                let start = self
                    .state
                    .recent_databases
                    .first()
                    .cloned()
                    .unwrap_or_default();
                match crate::path_prompt::ask(
                    PathPurpose::OpenDatabase,
                    &start,
                    self.no_file_dialog,
                    || {
                        rfd::FileDialog::new()
                            .set_title("Open a Spallcast database")
                            .add_filter("Spallcast database", &["sqlite", "db", "sqlite3"])
                            .pick_file()
                    },
                ) {
                    Asked::Chosen(path) => self.open_database(&path),
                    Asked::Prompt(prompt) => self.path_prompt = Some(prompt),
                    Asked::Cancelled => {}
                }
            }
            Action::OpenDatabase(path) => self.open_database(&path),
            Action::ImportDialog => {
                let start = self
                    .state
                    .recent_folders
                    .first()
                    .cloned()
                    .unwrap_or_default();
                match crate::path_prompt::ask(
                    PathPurpose::ImportFolder,
                    &start,
                    self.no_file_dialog,
                    || {
                        rfd::FileDialog::new()
                            .set_title("Choose a route folder (with route.csv)")
                            .pick_folder()
                    },
                ) {
                    Asked::Chosen(folder) => self.start_import(&folder),
                    Asked::Prompt(prompt) => self.path_prompt = Some(prompt),
                    Asked::Cancelled => {}
                }
            }
            Action::ImportFolder(folder) => self.start_import(&folder),
            Action::ExportPlotDialog => {
                let Some(name) = self.plot_file_name() else {
                    self.set_status("no plot on screen to save".to_owned(), true);
                    return;
                };
                let start = std::path::Path::new(&self.state.export_folder).join(&name);
                let folder = self.state.export_folder.clone();
                match crate::path_prompt::ask(
                    PathPurpose::ExportPlot,
                    &start.display().to_string(),
                    self.no_file_dialog,
                    || {
                        let mut d = rfd::FileDialog::new()
                            .set_title("Save the plot (a PNG and an SVG of this name)")
                            .add_filter("PNG image", &["png"])
                            .set_file_name(format!("{name}.png"));
                        if !folder.is_empty() {
                            d = d.set_directory(&folder);
                        }
                        d.save_file()
                    },
                ) {
                    Asked::Chosen(path) => self.export_plot(&path),
                    Asked::Prompt(prompt) => self.path_prompt = Some(prompt),
                    Asked::Cancelled => {}
                }
            }
            Action::ExportPlot(path) => self.export_plot(&path),
            Action::SelectBearing(key) => self.select_bearing(key),
            Action::OpenBearingView(key, view) => {
                self.select_bearing(key);
                self.state.view = view;
            }
            Action::ShowView(view) => self.state.view = view,
            Action::NeedSpectra(ids) => {
                let Some(worker) = &self.worker else { return };
                for id in ids {
                    if !self.cache.spectra.contains_key(&id) && worker.send(Request::Spectra(id)) {
                        self.cache.spectra.insert(id, Slot::Pending);
                    }
                }
            }
            Action::NeedWaveform(id) => {
                let Some(worker) = &self.worker else { return };
                if !self.cache.waveforms.contains_key(&id) && worker.send(Request::Waveform(id)) {
                    self.cache.waveforms.insert(id, Slot::Pending);
                }
            }
            Action::Annotate(change) => {
                if let (Some(worker), Some(key)) = (&self.worker, self.selected.clone()) {
                    self.annotating = worker.send(Request::Annotate(key, change));
                }
            }
            Action::StepMonth(step) => {
                if let Some(history) = &self.history
                    && !self.spectra.step_month(history, step)
                {
                    self.set_status("no reading that way on this point".to_owned(), false);
                }
            }
            Action::AcknowledgeCautions => self.state.cautions_acknowledged = true,
            Action::DismissImportSummary => self.import_summary = None,
            Action::ChangePlan(changes) => {
                if let Some(worker) = &self.worker
                    && worker.send(Request::ChangePlan(self.today, changes))
                {
                    self.plan_loading = true;
                }
            }
            Action::UndoPlan(step) => {
                if let Some(worker) = &self.worker
                    && worker.send(Request::UndoPlan(self.today, Box::new(step)))
                {
                    self.plan_loading = true;
                }
            }
        }
    }

    /// Reads the outage plan when its view is shown and it is not loaded yet.
    pub(crate) fn ensure_plan(&mut self) {
        if self.state.view != View::OutagePlan || self.plan.is_some() || self.plan_loading {
            return;
        }
        self.request_plan();
    }

    pub(crate) fn request_plan(&mut self) {
        if let Some(worker) = &self.worker {
            self.plan_loading = worker.send(Request::Plan(self.today));
        }
    }

    /// Every few seconds, asks the data thread whether another process changed the database; when it
    /// did, the plant, the shown bearing and the plan are read again.
    pub(crate) fn poll_for_changes(&mut self) {
        if self.change_check_pending || self.last_change_check.elapsed() < CHANGE_POLL {
            return;
        }
        if let Some(worker) = &self.worker {
            self.change_check_pending = worker.send(Request::CheckForChanges);
            self.last_change_check = std::time::Instant::now();
        }
    }

    /// Reads the plant (and with it the shown bearing) and the plan again.
    pub(crate) fn reload_all(&mut self) {
        if let Some(worker) = &self.worker {
            self.plant_loading = worker.send(Request::Plant);
        }
        if self.plan.is_some() {
            self.request_plan();
        }
    }

    /// Closes the current database and opens `path` on a new data thread.
    pub fn open_database(&mut self, path: &Path) {
        self.worker = None;
        self.plant = None;
        self.attention = None;
        self.selected = None;
        self.history = None;
        self.history_loading = false;
        self.plan = None;
        self.plan_loading = false;
        self.change_check_pending = false;
        self.cache.clear();
        crate::path_prompt::remember(&mut self.state.recent_databases, path);
        match DataWorker::start(self.backend.clone(), path, self.ctx.clone()) {
            Ok(worker) => {
                self.plant_loading = worker.send(Request::Plant);
                self.worker = Some(worker);
                self.set_status(format!("opening {}", path.display()), false);
            }
            Err(e) => {
                self.plant_loading = false;
                self.set_status(format!("could not start the data thread: {e}"), true);
            }
        }
    }

    fn start_import(&mut self, folder: &Path) {
        if self.import.is_some() {
            self.set_status(
                "an import is already running; wait for it to finish".to_owned(),
                true,
            );
            return;
        }
        let Some(db) = self.db_path().map(Path::to_path_buf) else {
            self.set_status(
                "open a database before importing a route folder".to_owned(),
                true,
            );
            return;
        };
        crate::path_prompt::remember(&mut self.state.recent_folders, folder);
        match ImportJob::start(self.backend.clone(), &db, folder, self.ctx.clone()) {
            Ok(job) => {
                self.import = Some(job);
                self.import_summary = None;
                self.set_status(format!("importing {}", folder.display()), false);
            }
            Err(e) => self.set_status(format!("could not start the import thread: {e}"), true),
        }
    }

    fn select_bearing(&mut self, key: BearingKey) {
        if self.selected.as_ref() == Some(&key) && (self.history.is_some() || self.history_loading)
        {
            return;
        }
        self.selected = Some(key.clone());
        self.history = None;
        self.history_loading = self
            .worker
            .as_ref()
            .is_some_and(|w| w.send(Request::Bearing(key)));
        if self.state.view == View::Changes {
            self.state.view = View::Spectra;
        }
    }

    pub(crate) fn set_status(&mut self, text: String, is_error: bool) {
        self.status = Some(StatusMessage { text, is_error });
    }

    /// Takes replies off the worker channels and applies them.
    pub(crate) fn receive(&mut self) {
        let mut replies = self
            .worker
            .as_ref()
            .map(|w| w.drain(DRAIN_BUDGET))
            .unwrap_or_default();
        if let Some(job) = &self.import {
            replies.extend(job.drain(DRAIN_BUDGET));
        }
        for reply in replies {
            self.on_reply(reply);
        }
    }

    pub(crate) fn db_label(&self) -> String {
        self.db_path().and_then(Path::file_name).map_or_else(
            || "database".to_owned(),
            |n| n.to_string_lossy().into_owned(),
        )
    }

    /// When a bearing view is shown and nothing is selected, selects the bearing at the most advanced
    /// stage (the first in tree order on a tie, or the first bearing when no stage is stored).
    pub(crate) fn auto_select(&mut self) {
        if self.selected.is_some() || !self.state.view.is_bearing_view() {
            return;
        }
        let Some(plant) = &self.plant else { return };
        let mut best: Option<(&crate::model::BearingNode, i16)> = None;
        for b in plant.bearings() {
            let rank = b.stage.map_or(-1, i16::from);
            if best.is_none_or(|(_, r)| rank > r) {
                best = Some((b, rank));
            }
        }
        if let Some((b, _)) = best {
            let key = b.key.clone();
            self.select_bearing(key);
        }
    }
}

impl eframe::App for SpallcastApp {
    fn logic(&mut self, ctx: &egui::Context, _frame: &mut eframe::Frame) {
        self.receive();
        self.auto_select();
        self.ensure_plan();
        self.poll_for_changes();
        // Wake up for the next check even when nothing else happens.
        ctx.request_repaint_after(CHANGE_POLL);
    }

    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        let mut actions =
            crate::shortcuts::read(ui.ctx(), self.plant.as_ref(), self.selected.as_ref());
        actions.extend(self.layout_ui(ui));
        for action in actions {
            self.apply(action);
        }
        self.poll_plot_export();
        let busy = self.is_busy();
        let ctx = ui.ctx().clone();
        if let Some(plan) = &mut self.screenshot {
            plan.tick(&ctx, busy);
        }
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        if self.persist {
            eframe::set_value(storage, STATE_KEY, &self.state);
        }
    }
}
