//! Demo route generator: reads `demo-plant/plant.toml` and `scenario.toml`, simulates every
//! route day and writes route folders (WAV recordings, `route.csv`, `truth.csv`).

use std::path::{Path, PathBuf};

use chrono::{NaiveDate, NaiveTime, TimeZone};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;

use crate::error::SimError;
use crate::model::{Condition, FaultKind, Stage};
use crate::signal::simulate;

mod dated;
mod plan;
mod spec;
mod write;

pub use dated::{DatedDemo, dated_demo, shift_dates};
use plan::{Plan, PointJob, condition_on, fnv1a, machine_rpm, parse_offset, plan, scenario_err};
use write::{write_manifests, write_wav};

/// The demo plant file, embedded at compile time.
pub const PLANT_TOML: &str = include_str!("../../../../demo-plant/plant.toml");
/// The demo scenario (the truth), embedded at compile time.
pub const SCENARIO_TOML: &str = include_str!("../../../../demo-plant/scenario.toml");

/// Number of samples in a recording a bad sensor produced (rejected by import: fewer than 256).
pub const BAD_RECORDING_SAMPLES: usize = 10;

/// The `demo-plant` folder of the source tree.
pub fn demo_dir_default() -> PathBuf {
    PathBuf::from(concat!(env!("CARGO_MANIFEST_DIR"), "/../../demo-plant"))
}

/// What [`generate_demo_routes`] wrote.
#[derive(Debug, Clone, PartialEq)]
pub struct DemoSummary {
    /// One folder per route day, in date order (`out_dir/route-YYYY-MM-DD`).
    pub route_dirs: Vec<PathBuf>,
    /// Recordings written, the bad one included.
    pub recordings: usize,
    /// Recordings deliberately written unreadable (the import should reject them).
    pub bad_recordings: usize,
    /// The truth of every recording, in day then plant order (also written to `truth.csv`).
    pub truth: Vec<TruthRow>,
}

/// The true state behind one recording.
#[derive(Debug, Clone, PartialEq)]
pub struct TruthRow {
    /// Route day.
    pub date: NaiveDate,
    /// File name inside the route folder.
    pub file: String,
    /// Point id.
    pub point: String,
    /// Machine id.
    pub machine: String,
    /// Bearing position.
    pub bearing: String,
    /// Shaft speed at the point, r/min.
    pub rpm: f64,
    /// Sample rate of the recording, Hz.
    pub sample_rate_hz: f64,
    /// Failure stage (0 = healthy).
    pub stage: Stage,
    /// The defect, when stage > 0.
    pub fault: Option<FaultKind>,
    /// In-stage severity 0..1.
    pub severity: f64,
    /// Set when the recording was written bad on purpose.
    pub note: Option<String>,
}

struct Reading {
    truth: TruthRow,
    taken_at: String,
}

fn route_dir(out_dir: &Path, date: NaiveDate) -> PathBuf {
    out_dir.join(format!("route-{}", date.format("%Y-%m-%d")))
}

/// Generate the demo routes from the files in `demo_dir` (`plant.toml`, `scenario.toml`).
pub fn generate_demo_routes(demo_dir: &Path, out_dir: &Path) -> Result<DemoSummary, SimError> {
    let read = |name: &str| {
        let path = demo_dir.join(name);
        std::fs::read_to_string(&path).map_err(|source| SimError::Io { path, source })
    };
    generate_demo_routes_from_str(&read("plant.toml")?, &read("scenario.toml")?, out_dir)
}

/// Generate the demo routes from plant and scenario text (e.g. [`PLANT_TOML`], [`SCENARIO_TOML`]).
///
/// Writes `out_dir/route-YYYY-MM-DD/` per route day with one WAV (float32, mono) per point,
/// `route.csv` (`file`, `point`, `taken_at`, `rpm`, `units`) and `truth.csv` (file, point, stage, fault,
/// severity, note). Output is deterministic; recordings are simulated in parallel.
pub fn generate_demo_routes_from_str(
    plant_toml: &str,
    scenario_toml: &str,
    out_dir: &Path,
) -> Result<DemoSummary, SimError> {
    let plan = plan(plant_toml, scenario_toml)?;
    let mut route_dirs = Vec::new();
    let mut work = Vec::new();
    for day in &plan.scenario.route_days {
        let offset = parse_offset(&day.offset).ok_or_else(|| {
            scenario_err(format!(
                "route day {}: bad offset {:?}",
                day.date, day.offset
            ))
        })?;
        let start = NaiveTime::parse_from_str(&day.start, "%H:%M").map_err(|e| {
            scenario_err(format!(
                "route day {}: bad start {:?}: {e}",
                day.date, day.start
            ))
        })?;
        let dir = route_dir(out_dir, day.date);
        std::fs::create_dir_all(&dir).map_err(|source| SimError::Io {
            path: dir.clone(),
            source,
        })?;
        route_dirs.push(dir);
        for (i, job) in plan.jobs.iter().enumerate() {
            let local = day.date.and_time(start) + chrono::Duration::minutes(2 * i as i64);
            let taken_at = offset
                .from_local_datetime(&local)
                .single()
                .ok_or_else(|| scenario_err(format!("route day {}: bad local time", day.date)))?;
            work.push((day.date, job, taken_at.to_rfc3339()));
        }
    }
    let readings: Vec<Reading> = work
        .par_iter()
        .map(|(date, job, taken_at)| make_reading(&plan, out_dir, *date, job, taken_at))
        .collect::<Result<_, _>>()?;
    for dir in &route_dirs {
        write_manifests(
            dir,
            readings
                .iter()
                .filter(|r| route_dir(out_dir, r.truth.date) == *dir),
        )?;
    }
    let bad = readings.iter().filter(|r| r.truth.note.is_some()).count();
    Ok(DemoSummary {
        route_dirs,
        recordings: readings.len(),
        bad_recordings: bad,
        truth: readings.into_iter().map(|r| r.truth).collect(),
    })
}

fn truth_for(plan: &Plan, date: NaiveDate, job: &PointJob) -> Result<(TruthRow, u64), SimError> {
    let machine = plan
        .machines
        .get(&job.machine)
        .ok_or_else(|| scenario_err(format!("unknown machine {}", job.machine)))?;
    let date_text = date.format("%Y-%m-%d").to_string();
    let seed = fnv1a(&[
        &plan.scenario.seed.to_le_bytes(),
        job.point.as_bytes(),
        date_text.as_bytes(),
    ]);
    // Small day-to-day speed variation of an induction machine under varying load (±0.2 %).
    let wobble = ChaCha8Rng::seed_from_u64(seed ^ 0x5eed).random_range(-0.002..0.002);
    let rpm = machine_rpm(&plan.scenario, &machine.id, machine.nominal_rpm, date)
        * job.ratio
        * (1.0 + wobble);
    let condition = condition_on(plan, job, date);
    let bad = plan
        .scenario
        .bad_recordings
        .iter()
        .any(|b| b.date == date && b.point == job.point);
    let healthy = condition.stage == Stage::HEALTHY;
    let truth = TruthRow {
        date,
        file: format!("{}.wav", job.point),
        point: job.point.clone(),
        machine: job.machine.clone(),
        bearing: job.bearing.clone(),
        rpm,
        sample_rate_hz: job.sample_rate_hz,
        stage: condition.stage,
        fault: (!healthy).then_some(condition.fault),
        severity: if healthy { 0.0 } else { condition.severity },
        note: bad
            .then(|| format!("sensor fault: flat recording of {BAD_RECORDING_SAMPLES} samples")),
    };
    Ok((truth, seed))
}

/// The truth of every demo recording (same rows as [`generate_demo_routes_from_str`] returns),
/// computed without simulating or writing anything.
pub fn demo_truth_from_str(
    plant_toml: &str,
    scenario_toml: &str,
) -> Result<Vec<TruthRow>, SimError> {
    let plan = plan(plant_toml, scenario_toml)?;
    let mut rows = Vec::new();
    for day in &plan.scenario.route_days {
        for job in &plan.jobs {
            rows.push(truth_for(&plan, day.date, job)?.0);
        }
    }
    Ok(rows)
}

fn make_reading(
    plan: &Plan,
    out_dir: &Path,
    date: NaiveDate,
    job: &PointJob,
    taken_at: &str,
) -> Result<Reading, SimError> {
    let (truth, seed) = truth_for(plan, date, job)?;
    let path = route_dir(out_dir, date).join(&truth.file);
    if truth.note.is_some() {
        write_wav(&path, &[0.0; BAD_RECORDING_SAMPLES], job.sample_rate_hz)?;
    } else {
        let mut params = job.params.clone();
        params.shaft_hz = truth.rpm / 60.0;
        let condition = truth.fault.map_or_else(Condition::healthy, |f| {
            Condition::new(f, truth.stage, truth.severity)
        });
        let samples = simulate(&params, &condition, job.sample_rate_hz, job.samples, seed)?;
        write_wav(&path, &samples, job.sample_rate_hz)?;
    }
    Ok(Reading {
        truth,
        taken_at: taken_at.to_owned(),
    })
}
