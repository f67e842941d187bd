//! Background work: one named data thread per open database, one named import thread per import.
//!
//! The UI thread sends [`Request`]s and drains [`Reply`]s each frame under a time budget; workers call
//! `request_repaint` after every reply so the window wakes up to show it.

use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::mpsc::{self, Receiver, Sender};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use chrono::NaiveDate;
use eframe::egui;
use spallcast_plan::PlanBoard;
use spallcast_plan::source::{PlanChange, PlanUndo};

use crate::plan_view::StepOutcome;

use crate::model::{
    Annotation, Attention, BearingHistory, BearingKey, ImportProgress, ImportSummary, PlantTree,
    ReadingId, SharedSpectra, UpdateProgress, Waveform,
};
use crate::source::{Backend, PlantSource};

/// Work for the data thread.
#[derive(Debug, Clone, PartialEq)]
pub enum Request {
    /// Load the plant tree and the attention lists.
    Plant,
    /// Load one bearing's history.
    Bearing(BearingKey),
    /// Load a reading's samples and compute its spectra.
    Spectra(ReadingId),
    /// Load a reading's samples for the waveform view.
    Waveform(ReadingId),
    /// Read the outage plan as of a day.
    Plan(NaiveDate),
    /// Apply the planner's changes, then read the plan again.
    ChangePlan(NaiveDate, Vec<PlanChange>),
    /// Take back the last plan step, then read the plan again.
    UndoPlan(NaiveDate, Box<PlanUndo>),
    /// Has another process changed the database?
    CheckForChanges,
    /// Change the analyst's records on a bearing (a note, the baseline marks).
    Annotate(BearingKey, Annotation),
}

/// Results from the workers.
#[derive(Debug)]
pub enum Reply {
    /// The database could not be opened.
    OpenFailed(String),
    /// Bringing the database up to date as it opens.
    Updating(UpdateProgress),
    /// Plant tree and attention lists.
    Plant(Result<(PlantTree, Attention), String>),
    /// One bearing's history.
    Bearing(BearingKey, Result<BearingHistory, String>),
    /// A reading's spectra, and how long loading plus computing took.
    Spectra(ReadingId, Result<SharedSpectra, String>, Duration),
    /// A reading's samples.
    Waveform(ReadingId, Result<Arc<Waveform>, String>),
    /// Import progress.
    ImportProgress(ImportProgress),
    /// Import finished.
    ImportDone(Result<ImportSummary, String>),
    /// The outage plan.
    Plan(Result<PlanBoard, String>),
    /// A note or baseline change was stored (or refused), in words.
    Annotated(BearingKey, Result<String, String>),
    /// The planner's changes were applied (or a step taken back): what was done, in words, the plan
    /// read again, and what became of the undo list.
    PlanChanged(String, Result<PlanBoard, String>, StepOutcome),
    /// Whether another process changed the database since the last check.
    ChangedElsewhere(bool),
}

/// The data thread of one open database. Dropping it closes the channel and joins the thread.
pub struct DataWorker {
    requests: Option<Sender<Request>>,
    replies: Receiver<Reply>,
    handle: Option<JoinHandle<()>>,
    db_path: PathBuf,
}

impl DataWorker {
    /// Starts the thread `spallcast-data`, which opens `db_path` and then serves requests in order.
    pub fn start(
        backend: Arc<dyn Backend>,
        db_path: &Path,
        ctx: egui::Context,
    ) -> std::io::Result<Self> {
        let (req_tx, req_rx) = mpsc::channel::<Request>();
        let (reply_tx, reply_rx) = mpsc::channel::<Reply>();
        let path = db_path.to_path_buf();
        let handle = std::thread::Builder::new()
            .name("spallcast-data".to_owned())
            .spawn(move || serve(backend.as_ref(), &path, &req_rx, &reply_tx, &ctx))?;
        Ok(Self {
            requests: Some(req_tx),
            replies: reply_rx,
            handle: Some(handle),
            db_path: db_path.to_path_buf(),
        })
    }

    /// The database this worker reads.
    pub fn db_path(&self) -> &Path {
        &self.db_path
    }

    /// Queues a request; `false` when the thread has stopped.
    pub fn send(&self, request: Request) -> bool {
        self.requests
            .as_ref()
            .is_some_and(|tx| tx.send(request).is_ok())
    }

    /// Replies received so far, draining for at most `budget`.
    pub fn drain(&self, budget: Duration) -> Vec<Reply> {
        drain(&self.replies, budget)
    }
}

impl Drop for DataWorker {
    fn drop(&mut self) {
        // Closing the request channel ends the serve loop after its current request.
        self.requests = None;
        if let Some(handle) = self.handle.take() {
            // A panic on the worker already reached stderr; nothing more to do with it here.
            let _ = handle.join();
        }
    }
}

fn serve(
    backend: &dyn Backend,
    db_path: &Path,
    requests: &Receiver<Request>,
    replies: &Sender<Reply>,
    ctx: &egui::Context,
) {
    let mut updating = |p: UpdateProgress| {
        let _ = replies.send(Reply::Updating(p));
        ctx.request_repaint();
    };
    let mut source = match backend.open(db_path, &mut updating) {
        Ok(source) => source,
        Err(err) => {
            let _ = replies.send(Reply::OpenFailed(format!("{err:#}")));
            ctx.request_repaint();
            return;
        }
    };
    while let Ok(request) = requests.recv() {
        let reply = handle(backend, source.as_mut(), request);
        if replies.send(reply).is_err() {
            return;
        }
        ctx.request_repaint();
    }
}

fn handle(backend: &dyn Backend, source: &mut dyn PlantSource, request: Request) -> Reply {
    let text = |err: anyhow::Error| format!("{err:#}");
    match request {
        Request::Plant => Reply::Plant(
            source
                .plant()
                .and_then(|p| Ok((p, source.attention()?)))
                .map_err(text),
        ),
        Request::Bearing(key) => {
            let result = source.bearing(&key).map_err(text);
            Reply::Bearing(key, result)
        }
        Request::Spectra(id) => {
            let started = Instant::now();
            let result = source
                .waveform(id)
                .and_then(|w| backend.spectra(&w))
                .map(Arc::new)
                .map_err(text);
            Reply::Spectra(id, result, started.elapsed())
        }
        Request::Waveform(id) => {
            Reply::Waveform(id, source.waveform(id).map(Arc::new).map_err(text))
        }
        Request::Plan(today) => Reply::Plan(source.plan(today).map_err(text)),
        Request::ChangePlan(today, changes) => {
            let (message, board, outcome) = source.change_plan(today, &changes);
            Reply::PlanChanged(message, board.map_err(text), outcome)
        }
        Request::UndoPlan(today, step) => {
            let (message, board, outcome) = source.undo_plan(today, &step);
            Reply::PlanChanged(message, board.map_err(text), outcome)
        }
        // A failed check is not worth a message: the next one tries again.
        Request::CheckForChanges => {
            Reply::ChangedElsewhere(source.changed_elsewhere().unwrap_or(false))
        }
        Request::Annotate(key, change) => {
            Reply::Annotated(key.clone(), source.annotate(&key, &change).map_err(text))
        }
    }
}

fn drain(replies: &Receiver<Reply>, budget: Duration) -> Vec<Reply> {
    let started = Instant::now();
    let mut out = Vec::new();
    // Empty or disconnected: nothing more this frame.
    while let Ok(reply) = replies.try_recv() {
        out.push(reply);
        if started.elapsed() > budget {
            break;
        }
    }
    out
}

/// A running route import on its own thread.
pub struct ImportJob {
    replies: Receiver<Reply>,
    handle: Option<JoinHandle<()>>,
    /// The folder being imported.
    pub folder: PathBuf,
    /// Latest progress.
    pub progress: ImportProgress,
}

impl ImportJob {
    /// Starts the thread `spallcast-import`.
    pub fn start(
        backend: Arc<dyn Backend>,
        db_path: &Path,
        folder: &Path,
        ctx: egui::Context,
    ) -> std::io::Result<Self> {
        let (tx, rx) = mpsc::channel::<Reply>();
        let db = db_path.to_path_buf();
        let dir = folder.to_path_buf();
        let handle = std::thread::Builder::new()
            .name("spallcast-import".to_owned())
            .spawn(move || {
                let progress_tx = tx.clone();
                let progress_ctx = ctx.clone();
                let mut report = move |p: ImportProgress| {
                    let _ = progress_tx.send(Reply::ImportProgress(p));
                    progress_ctx.request_repaint();
                };
                let result = backend
                    .import_route(&db, &dir, &mut report)
                    .map_err(|e| format!("{e:#}"));
                let _ = tx.send(Reply::ImportDone(result));
                ctx.request_repaint();
            })?;
        Ok(Self {
            replies: rx,
            handle: Some(handle),
            folder: folder.to_path_buf(),
            progress: ImportProgress { done: 0, total: 0 },
        })
    }

    /// Replies received so far, draining for at most `budget`.
    pub fn drain(&self, budget: Duration) -> Vec<Reply> {
        drain(&self.replies, budget)
    }
}

impl Drop for ImportJob {
    fn drop(&mut self) {
        if let Some(handle) = self.handle.take() {
            // Wait for the import to finish: stopping it half-way is the store's job, not a thread kill.
            let _ = handle.join();
        }
    }
}
