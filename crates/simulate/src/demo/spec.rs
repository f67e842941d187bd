//! The demo input files as read: a partial plant-file reader (the fields the simulator needs)
//! and the scenario.

use chrono::NaiveDate;
use serde::Deserialize;

use crate::model::{FaultKind, Lubrication};

#[derive(Deserialize)]
pub(super) struct PlantFile {
    #[serde(default)]
    pub(super) bearing_types: Vec<BearingTypeSpec>,
    #[serde(default)]
    pub(super) areas: Vec<AreaSpec>,
}

#[derive(Deserialize)]
pub(super) struct FactorsSpec {
    pub(super) ftf: f64,
    pub(super) bsf: f64,
    pub(super) bpfo: f64,
    pub(super) bpfi: f64,
}

#[derive(Deserialize)]
pub(super) struct BearingTypeSpec {
    pub(super) designation: String,
    pub(super) rolling_elements: Option<u32>,
    pub(super) element_diameter_mm: Option<f64>,
    pub(super) pitch_diameter_mm: Option<f64>,
    pub(super) contact_angle_deg: Option<f64>,
    pub(super) factors: Option<FactorsSpec>,
}

#[derive(Deserialize)]
pub(super) struct AreaSpec {
    #[serde(default)]
    pub(super) machines: Vec<MachineSpec>,
}

#[derive(Deserialize)]
pub(super) struct MachineSpec {
    pub(super) id: String,
    pub(super) kind: String,
    pub(super) nominal_rpm: f64,
    #[serde(default)]
    pub(super) bearings: Vec<BearingSpec>,
    #[serde(default)]
    pub(super) points: Vec<PointSpec>,
}

#[derive(Deserialize)]
pub(super) struct BearingSpec {
    pub(super) position: String,
    pub(super) bearing_type: String,
    pub(super) lubrication: Lubrication,
    pub(super) installed: NaiveDate,
}

#[derive(Deserialize)]
pub(super) struct PointSpec {
    pub(super) id: String,
    pub(super) bearing: String,
    pub(super) direction: String,
}

// ----- scenario -----

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct Scenario {
    pub(super) seed: u64,
    pub(super) default_sample_rate_hz: f64,
    pub(super) default_samples: usize,
    pub(super) route_days: Vec<RouteDaySpec>,
    #[serde(default)]
    pub(super) sampling: Vec<SamplingSpec>,
    #[serde(default)]
    pub(super) shaft_ratios: Vec<ShaftRatioSpec>,
    #[serde(default)]
    pub(super) speed_changes: Vec<SpeedChangeSpec>,
    #[serde(default)]
    pub(super) faults: Vec<FaultSpec>,
    #[serde(default)]
    pub(super) bad_recordings: Vec<BadRecordingSpec>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct RouteDaySpec {
    pub(super) date: NaiveDate,
    pub(super) start: String,
    pub(super) offset: String,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct SamplingSpec {
    pub(super) point: String,
    pub(super) sample_rate_hz: f64,
    pub(super) samples: usize,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct ShaftRatioSpec {
    pub(super) machine: String,
    pub(super) bearing: String,
    pub(super) ratio: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct SpeedChangeSpec {
    pub(super) machines: Vec<String>,
    pub(super) from: NaiveDate,
    pub(super) rpm: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct FaultSpec {
    pub(super) machine: String,
    pub(super) bearing: String,
    pub(super) fault: FaultKind,
    pub(super) onset: NaiveDate,
    pub(super) stage_days: Option<[f64; 4]>,
    #[serde(default)]
    pub(super) progression_seed: u64,
    pub(super) replaced: Option<NaiveDate>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct BadRecordingSpec {
    pub(super) date: NaiveDate,
    pub(super) point: String,
}
