//! `spallcast note` (a note on a bearing or one of its readings) and `spallcast baseline` (which
//! readings form a life's baseline). Both write to the plant database; the notes show in `spallcast
//! bearing`, the window's life trend and the planner's CSV, and a baseline change is taken up by the
//! next command that reads stage calls (they are recomputed for that bearing).
use std::path::PathBuf;
use std::process::ExitCode;

use anyhow::{Context as _, bail};
use chrono::NaiveDate;
use spallcast_store::{NewNote, NoteKind, Store};

/// Arguments of `spallcast note`.
#[derive(Debug, clap::Args)]
pub struct NoteArgs {
    /// The bearing: `MACHINE/POSITION`, a point id on it, or its number.
    pub id: String,
    /// The plant database.
    #[arg(long)]
    pub db: PathBuf,
    /// The note.
    #[arg(long)]
    pub text: String,
    /// What it records: observation, lubrication or maintenance.
    #[arg(long, default_value = "observation")]
    pub kind: String,
    /// The day it refers to (default: today, UTC).
    #[arg(long, value_name = "YYYY-MM-DD")]
    pub on: Option<NaiveDate>,
    /// A reading of this bearing the note is about (its number, as `spallcast bearing --json` shows).
    #[arg(long)]
    pub reading: Option<i64>,
}

/// Arguments of `spallcast baseline`.
#[derive(Debug, clap::Args)]
pub struct BaselineArgs {
    /// The bearing: `MACHINE/POSITION`, a point id on it, or its number.
    pub id: String,
    /// The plant database.
    #[arg(long)]
    pub db: PathBuf,
    /// The readings (numbers, comma-separated) that form their life's baseline, replacing any earlier
    /// marks on that life.
    #[arg(long, value_delimiter = ',', required_unless_present = "clear")]
    pub readings: Vec<i64>,
    /// Forget the marks: every life's baseline is its first readings again.
    #[arg(long, conflicts_with = "readings")]
    pub clear: bool,
}

/// The position id `wanted` names, and its `MACHINE/POSITION`.
fn position_of(store: &Store, db: &std::path::Path, wanted: &str) -> anyhow::Result<(i64, String)> {
    let s = crate::bearings_cmd::resolve_bearing(store, db, wanted)?;
    Ok((s.position_id, format!("{}/{}", s.machine, s.position)))
}

fn open_for_writing(db: &std::path::Path) -> anyhow::Result<Store> {
    if !db.is_file() {
        bail!(
            "{} does not exist: import a route or create the demo first",
            db.display()
        );
    }
    Ok(Store::open(db)?)
}

/// Runs `spallcast note`.
pub fn run_note(args: &NoteArgs) -> anyhow::Result<ExitCode> {
    let Some(kind) = NoteKind::parse(&args.kind) else {
        bail!(
            "--kind {:?}: use observation, lubrication or maintenance",
            args.kind
        );
    };
    let mut store = open_for_writing(&args.db)?;
    let (position_id, key) = position_of(&store, &args.db, &args.id)?;
    let on_day = args.on.unwrap_or_else(|| chrono::Utc::now().date_naive());
    let id = store
        .add_note(&NewNote {
            position_id,
            reading_id: args.reading,
            on_day,
            kind,
            text: args.text.clone(),
        })
        .with_context(|| format!("adding a note to {key} in {}", args.db.display()))?;
    println!("note {id} ({kind}, {on_day}) added to {key}");
    Ok(ExitCode::SUCCESS)
}

/// Runs `spallcast baseline`.
pub fn run_baseline(args: &BaselineArgs) -> anyhow::Result<ExitCode> {
    let mut store = open_for_writing(&args.db)?;
    let (position_id, key) = position_of(&store, &args.db, &args.id)?;
    let ids: &[i64] = if args.clear { &[] } else { &args.readings };
    store
        .set_baseline(position_id, ids)
        .with_context(|| format!("marking the baseline of {key} in {}", args.db.display()))?;
    // Recompute this bearing's calls now, so the next look shows them.
    drop(store);
    crate::refresh::open_and_refresh(&args.db, false)?;
    if ids.is_empty() {
        println!(
            "{key}: baseline marks cleared; each life's first readings form its baseline again"
        );
    } else {
        println!(
            "{key}: readings {} form their life's baseline; stage calls recomputed",
            ids.iter()
                .map(i64::to_string)
                .collect::<Vec<_>>()
                .join(", ")
        );
    }
    Ok(ExitCode::SUCCESS)
}
