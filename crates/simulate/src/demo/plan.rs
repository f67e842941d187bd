//! The scenario resolved against the plant: one job per measurement point, faults with their
//! progressions, and the condition of a bearing on a given day.

use std::collections::BTreeMap;

use chrono::{FixedOffset, NaiveDate};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;

use super::spec::{BearingTypeSpec, MachineSpec, PlantFile, Scenario};
use crate::error::SimError;
use crate::model::{
    BearingFactors, Condition, FaultKind, MachineParams, Resonance, StructuralMode,
};
use crate::progression::{Progression, REFERENCE_RPM};

pub(super) struct PointJob {
    pub(super) point: String,
    pub(super) machine: String,
    pub(super) bearing: String,
    pub(super) params: MachineParams,
    pub(super) ratio: f64,
    pub(super) sample_rate_hz: f64,
    pub(super) samples: usize,
}

pub(super) struct ResolvedFault {
    pub(super) machine: String,
    pub(super) bearing: String,
    pub(super) kind: FaultKind,
    pub(super) onset: NaiveDate,
    pub(super) replaced: Option<NaiveDate>,
    pub(super) progression: Progression,
    pub(super) ratio: f64,
}

/// 64-bit FNV-1a, used to derive stable seeds from names (std's hasher is not stable).
pub(super) fn fnv1a(parts: &[&[u8]]) -> u64 {
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

pub(super) fn toml_err(file: &str, e: &toml::de::Error) -> SimError {
    SimError::Toml {
        file: file.to_owned(),
        message: e.to_string(),
    }
}

pub(super) fn scenario_err(message: String) -> SimError {
    SimError::Scenario {
        file: "scenario.toml".to_owned(),
        message,
    }
}

pub(super) fn factors_of(t: &BearingTypeSpec) -> Result<BearingFactors, SimError> {
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
pub(super) fn machine_params(
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

pub(super) fn parse_offset(text: &str) -> Option<FixedOffset> {
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
pub(super) fn machine_rpm(
    scenario: &Scenario,
    machine: &str,
    nominal: f64,
    date: NaiveDate,
) -> f64 {
    scenario
        .speed_changes
        .iter()
        .filter(|c| c.from <= date && c.machines.iter().any(|m| m == machine))
        .max_by_key(|c| c.from)
        .map_or(nominal, |c| c.rpm)
}

/// Equivalent days (at the reference speed) run between `onset` and `date`, day by day.
pub(super) fn equivalent_days(
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

pub(super) struct Plan {
    pub(super) jobs: Vec<PointJob>,
    pub(super) machines: BTreeMap<String, MachineSpec>,
    pub(super) faults: Vec<ResolvedFault>,
    pub(super) scenario: Scenario,
}

#[allow(
    clippy::too_many_lines,
    reason = "one linear pass resolving plant and scenario references"
)]
pub(super) fn plan(plant_toml: &str, scenario_toml: &str) -> Result<Plan, SimError> {
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

pub(super) fn condition_on(plan: &Plan, job: &PointJob, date: NaiveDate) -> Condition {
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
