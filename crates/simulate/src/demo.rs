//! Demo route generator: reads `demo-plant/plant.toml` and `scenario.toml`, simulates every
//! route day and writes route folders (WAV recordings, `route.csv`, `truth.csv`).

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use chrono::{FixedOffset, NaiveDate, NaiveTime, TimeZone};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use serde::Deserialize;

use crate::error::SimError;
use crate::model::{
    BearingFactors, Condition, FaultKind, Lubrication, MachineParams, Resonance, Stage,
    StructuralMode,
};
use crate::progression::{Progression, REFERENCE_RPM};
use crate::signal::simulate;

/// The demo plant file, embedded at compile time.
pub const PLANT_TOML: &str = include_str!("../../../demo-plant/plant.toml");
/// The demo scenario (the truth), embedded at compile time.
pub const SCENARIO_TOML: &str = include_str!("../../../demo-plant/scenario.toml");

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

// ----- partial plant-file reader (fields the simulator needs; others ignored) -----

#[derive(Deserialize)]
struct PlantFile {
    #[serde(default)]
    bearing_types: Vec<BearingTypeSpec>,
    #[serde(default)]
    areas: Vec<AreaSpec>,
}

#[derive(Deserialize)]
struct FactorsSpec {
    ftf: f64,
    bsf: f64,
    bpfo: f64,
    bpfi: f64,
}

#[derive(Deserialize)]
struct BearingTypeSpec {
    designation: String,
    rolling_elements: Option<u32>,
    element_diameter_mm: Option<f64>,
    pitch_diameter_mm: Option<f64>,
    contact_angle_deg: Option<f64>,
    factors: Option<FactorsSpec>,
}

#[derive(Deserialize)]
struct AreaSpec {
    #[serde(default)]
    machines: Vec<MachineSpec>,
}

#[derive(Deserialize)]
struct MachineSpec {
    id: String,
    kind: String,
    nominal_rpm: f64,
    #[serde(default)]
    bearings: Vec<BearingSpec>,
    #[serde(default)]
    points: Vec<PointSpec>,
}

#[derive(Deserialize)]
struct BearingSpec {
    position: String,
    bearing_type: String,
    lubrication: Lubrication,
    installed: NaiveDate,
}

#[derive(Deserialize)]
struct PointSpec {
    id: String,
    bearing: String,
    direction: String,
}

// ----- scenario -----

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Scenario {
    seed: u64,
    default_sample_rate_hz: f64,
    default_samples: usize,
    route_days: Vec<RouteDaySpec>,
    #[serde(default)]
    sampling: Vec<SamplingSpec>,
    #[serde(default)]
    shaft_ratios: Vec<ShaftRatioSpec>,
    #[serde(default)]
    speed_changes: Vec<SpeedChangeSpec>,
    #[serde(default)]
    faults: Vec<FaultSpec>,
    #[serde(default)]
    bad_recordings: Vec<BadRecordingSpec>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RouteDaySpec {
    date: NaiveDate,
    start: String,
    offset: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SamplingSpec {
    point: String,
    sample_rate_hz: f64,
    samples: usize,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ShaftRatioSpec {
    machine: String,
    bearing: String,
    ratio: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SpeedChangeSpec {
    machines: Vec<String>,
    from: NaiveDate,
    rpm: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FaultSpec {
    machine: String,
    bearing: String,
    fault: FaultKind,
    onset: NaiveDate,
    stage_days: Option<[f64; 4]>,
    #[serde(default)]
    progression_seed: u64,
    replaced: Option<NaiveDate>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct BadRecordingSpec {
    date: NaiveDate,
    point: String,
}

// ----- resolved model -----

struct PointJob {
    point: String,
    machine: String,
    bearing: String,
    params: MachineParams,
    ratio: f64,
    sample_rate_hz: f64,
    samples: usize,
}

struct ResolvedFault {
    machine: String,
    bearing: String,
    kind: FaultKind,
    onset: NaiveDate,
    replaced: Option<NaiveDate>,
    progression: Progression,
    ratio: f64,
}

/// 64-bit FNV-1a, used to derive stable seeds from names (std's hasher is not stable).
fn fnv1a(parts: &[&[u8]]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for part in parts {
        for b in *part {
            h ^= u64::from(*b);
            h = h.wrapping_mul(0x0100_0000_01b3);
        }
        h ^= 0xff;
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

fn toml_err(file: &str, e: &toml::de::Error) -> SimError {
    SimError::Toml {
        file: file.to_owned(),
        message: e.to_string(),
    }
}

fn scenario_err(message: String) -> SimError {
    SimError::Scenario {
        file: "scenario.toml".to_owned(),
        message,
    }
}

fn factors_of(t: &BearingTypeSpec) -> Result<BearingFactors, SimError> {
    if let Some(f) = &t.factors {
        return Ok(BearingFactors {
            ftf: f.ftf,
            bsf: f.bsf,
            bpfo: f.bpfo,
            bpfi: f.bpfi,
        });
    }
    match (
        t.rolling_elements,
        t.element_diameter_mm,
        t.pitch_diameter_mm,
    ) {
        (Some(n), Some(d), Some(pd)) if n > 0 && d > 0.0 && pd > d => Ok(
            BearingFactors::from_geometry(n, d, pd, t.contact_angle_deg.unwrap_or(0.0)),
        ),
        _ => Err(SimError::Scenario {
            file: "plant.toml".to_owned(),
            message: format!(
                "bearing type {} has neither usable geometry nor factors",
                t.designation
            ),
        }),
    }
}

/// Machine background and resonances, drawn once per bearing position from its name, so a
/// machine looks the same month after month. Levels are illustrative (common practice, no
/// source): fans run with more 1x than pumps, motors least.
fn machine_params(
    machine: &MachineSpec,
    bearing: &str,
    direction: &str,
    factors: BearingFactors,
) -> MachineParams {
    let mut rng = ChaCha8Rng::seed_from_u64(fnv1a(&[machine.id.as_bytes(), bearing.as_bytes()]));
    let onex = match machine.kind.as_str() {
        "fan" => 0.035,
        "pump" => 0.02,
        "gearbox" => 0.012,
        _ => 0.015,
    } * if direction == "V" { 0.8 } else { 1.0 };
    let mut p = MachineParams::typical(machine.nominal_rpm / 60.0, factors);
    p.onex_g = onex * rng.random_range(0.8..1.2);
    p.twox_g = p.onex_g * rng.random_range(0.25..0.5);
    p.structural = vec![
        StructuralMode {
            resonance: Resonance {
                freq_hz: rng.random_range(250.0..600.0),
                damping_ratio: 0.05,
            },
            rms_g: rng.random_range(0.006..0.012),
        },
        StructuralMode {
            resonance: Resonance {
                freq_hz: rng.random_range(900.0..1800.0),
                damping_ratio: 0.06,
            },
            rms_g: rng.random_range(0.004..0.01),
        },
    ];
    p.bearing_resonance = Resonance {
        freq_hz: rng.random_range(2200.0..3800.0),
        damping_ratio: rng.random_range(0.035..0.05),
    };
    p.ultrasonic_resonance = Resonance {
        freq_hz: rng.random_range(26_000.0..34_000.0),
        damping_ratio: 0.02,
    };
    p.noise_floor_g = rng.random_range(0.002..0.003);
    p
}

fn parse_offset(text: &str) -> Option<FixedOffset> {
    let sign = match text.as_bytes().first()? {
        b'+' => 1,
        b'-' => -1,
        _ => return None,
    };
    let (h, m) = text.get(1..)?.split_once(':')?;
    let secs = h.parse::<i32>().ok()? * 3600 + m.parse::<i32>().ok()? * 60;
    FixedOffset::east_opt(sign * secs)
}

/// Machine speed on `date` (r/min): the last speed change on or before it, else nominal.
fn machine_rpm(scenario: &Scenario, machine: &str, nominal: f64, date: NaiveDate) -> f64 {
    scenario
        .speed_changes
        .iter()
        .filter(|c| c.from <= date && c.machines.iter().any(|m| m == machine))
        .max_by_key(|c| c.from)
        .map_or(nominal, |c| c.rpm)
}

/// Equivalent days (at the reference speed) run between `onset` and `date`, day by day.
fn equivalent_days(
    scenario: &Scenario,
    machine: &MachineSpec,
    ratio: f64,
    onset: NaiveDate,
    date: NaiveDate,
) -> f64 {
    let mut total = 0.0;
    let mut day = onset;
    while day < date {
        total +=
            machine_rpm(scenario, &machine.id, machine.nominal_rpm, day) * ratio / REFERENCE_RPM;
        let Some(next) = day.succ_opt() else { break };
        day = next;
    }
    total
}

struct Plan {
    jobs: Vec<PointJob>,
    machines: BTreeMap<String, MachineSpec>,
    faults: Vec<ResolvedFault>,
    scenario: Scenario,
}

#[allow(
    clippy::too_many_lines,
    reason = "one linear pass resolving plant and scenario references"
)]
fn plan(plant_toml: &str, scenario_toml: &str) -> Result<Plan, SimError> {
    let plant: PlantFile = toml::from_str(plant_toml).map_err(|e| toml_err("plant.toml", &e))?;
    let scenario: Scenario =
        toml::from_str(scenario_toml).map_err(|e| toml_err("scenario.toml", &e))?;
    let mut types = BTreeMap::new();
    for t in &plant.bearing_types {
        types.insert(t.designation.clone(), factors_of(t)?);
    }
    let ratio_of = |machine: &str, bearing: &str| {
        scenario
            .shaft_ratios
            .iter()
            .find(|r| r.machine == machine && r.bearing == bearing)
            .map_or(1.0, |r| r.ratio)
    };
    let mut jobs = Vec::new();
    let mut machines = BTreeMap::new();
    let mut lubrication = BTreeMap::new();
    for machine in plant.areas.into_iter().flat_map(|a| a.machines) {
        for point in &machine.points {
            let bearing = machine
                .bearings
                .iter()
                .find(|b| b.position == point.bearing)
                .ok_or_else(|| SimError::Scenario {
                    file: "plant.toml".to_owned(),
                    message: format!(
                        "point {} refers to unknown bearing {} on {}",
                        point.id, point.bearing, machine.id
                    ),
                })?;
            let factors = *types
                .get(&bearing.bearing_type)
                .ok_or_else(|| SimError::Scenario {
                    file: "plant.toml".to_owned(),
                    message: format!(
                        "bearing {} {} has unknown type {}",
                        machine.id, bearing.position, bearing.bearing_type
                    ),
                })?;
            let sampling = scenario.sampling.iter().find(|s| s.point == point.id);
            jobs.push(PointJob {
                point: point.id.clone(),
                machine: machine.id.clone(),
                bearing: bearing.position.clone(),
                params: machine_params(&machine, &bearing.position, &point.direction, factors),
                ratio: ratio_of(&machine.id, &bearing.position),
                sample_rate_hz: sampling
                    .map_or(scenario.default_sample_rate_hz, |s| s.sample_rate_hz),
                samples: sampling.map_or(scenario.default_samples, |s| s.samples),
            });
        }
        for b in &machine.bearings {
            lubrication.insert(
                (machine.id.clone(), b.position.clone()),
                (b.lubrication, b.installed),
            );
        }
        machines.insert(machine.id.clone(), machine);
    }
    for s in &scenario.sampling {
        if !jobs.iter().any(|j| j.point == s.point) {
            return Err(scenario_err(format!(
                "[[sampling]] names unknown point {}",
                s.point
            )));
        }
    }
    for b in &scenario.bad_recordings {
        if !jobs.iter().any(|j| j.point == b.point)
            || !scenario.route_days.iter().any(|d| d.date == b.date)
        {
            return Err(scenario_err(format!(
                "[[bad_recordings]] {} on {} is not a route reading",
                b.point, b.date
            )));
        }
    }
    let mut faults = Vec::new();
    for f in &scenario.faults {
        let Some(&(lube, installed)) = lubrication.get(&(f.machine.clone(), f.bearing.clone()))
        else {
            return Err(scenario_err(format!(
                "fault on unknown bearing {} {}",
                f.machine, f.bearing
            )));
        };
        if let Some(replaced) = f.replaced
            && replaced != installed
        {
            return Err(scenario_err(format!(
                "{} {} replaced on {replaced} but plant.toml says installed = {installed}",
                f.machine, f.bearing
            )));
        }
        let progression = f.stage_days.map_or_else(
            || Progression::draw(lube, f.progression_seed),
            Progression::from_stage_days,
        );
        faults.push(ResolvedFault {
            machine: f.machine.clone(),
            bearing: f.bearing.clone(),
            kind: f.fault,
            onset: f.onset,
            replaced: f.replaced,
            progression,
            ratio: ratio_of(&f.machine, &f.bearing),
        });
    }
    Ok(Plan {
        jobs,
        machines,
        faults,
        scenario,
    })
}

fn condition_on(plan: &Plan, job: &PointJob, date: NaiveDate) -> Condition {
    let Some(fault) = plan.faults.iter().find(|f| {
        f.machine == job.machine
            && f.bearing == job.bearing
            && f.onset <= date
            && f.replaced.is_none_or(|r| date < r)
    }) else {
        return Condition::healthy();
    };
    let Some(machine) = plan.machines.get(&fault.machine) else {
        return Condition::healthy();
    };
    let eq = equivalent_days(&plan.scenario, machine, fault.ratio, fault.onset, date);
    let (stage, severity) = fault.progression.at_equivalent_days(eq);
    Condition::new(fault.kind, stage, severity)
}

struct Reading {
    truth: TruthRow,
    taken_at: String,
}

fn write_wav(path: &Path, samples: &[f32], sample_rate_hz: f64) -> Result<(), SimError> {
    let wav_err = |source| SimError::Wav {
        path: path.to_owned(),
        source,
    };
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: sample_rate_hz.round() as u32,
        bits_per_sample: 32,
        sample_format: hound::SampleFormat::Float,
    };
    let mut w = hound::WavWriter::create(path, spec).map_err(wav_err)?;
    for s in samples {
        w.write_sample(*s).map_err(wav_err)?;
    }
    w.finalize().map_err(wav_err)
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

fn write_manifests<'a>(
    dir: &Path,
    readings: impl Iterator<Item = &'a Reading> + Clone,
) -> Result<(), SimError> {
    let route = dir.join("route.csv");
    let csv_err = |path: &Path| {
        let path = path.to_owned();
        move |source| SimError::Csv { path, source }
    };
    let mut w = csv::Writer::from_path(&route).map_err(csv_err(&route))?;
    w.write_record(["file", "point", "taken_at", "rpm", "units"])
        .map_err(csv_err(&route))?;
    for r in readings.clone() {
        let rpm = format!("{:.1}", r.truth.rpm);
        w.write_record([
            r.truth.file.as_str(),
            &r.truth.point,
            &r.taken_at,
            &rpm,
            "g",
        ])
        .map_err(csv_err(&route))?;
    }
    w.flush().map_err(|source| SimError::Io {
        path: route.clone(),
        source,
    })?;

    let truth = dir.join("truth.csv");
    let mut w = csv::Writer::from_path(&truth).map_err(csv_err(&truth))?;
    w.write_record(["file", "point", "stage", "fault", "severity", "note"])
        .map_err(csv_err(&truth))?;
    for r in readings {
        let t = &r.truth;
        let stage = t.stage.to_string();
        let severity = format!("{:.3}", t.severity);
        let fault = t.fault.map_or("none", FaultKind::label);
        w.write_record([
            t.file.as_str(),
            &t.point,
            &stage,
            fault,
            &severity,
            t.note.as_deref().unwrap_or(""),
        ])
        .map_err(csv_err(&truth))?;
    }
    w.flush().map_err(|source| SimError::Io {
        path: truth,
        source,
    })
}
