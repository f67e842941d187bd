//! The plain records the store's queries return (plant tree, readings, lives, trends, import log).
//! Moved out of `queries.rs` unchanged, to keep that file under 600 lines.

use chrono::{DateTime, FixedOffset, NaiveDate};
use serde::Serialize;

use crate::analyzer::FaultFactors;
use crate::planning::StageCall;
use crate::plant::{Direction, IsoSupport, Lubrication, MachineKind};
use std::collections::BTreeMap;

/// The plant hierarchy: areas → machines → bearing positions → points.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlantTree {
    /// Site name ("" before a plant file was applied).
    pub site_name: String,
    /// Areas in plant-file order.
    pub areas: Vec<AreaNode>,
}

/// An area in the tree.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AreaNode {
    /// Database id.
    pub id: i64,
    /// Name.
    pub name: String,
    /// Machines in plant-file order.
    pub machines: Vec<MachineNode>,
}

/// A machine in the tree.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MachineNode {
    /// Database id.
    pub id: i64,
    /// Machine id from the plant file.
    pub tag: String,
    /// Display name.
    pub name: String,
    /// Kind.
    pub kind: MachineKind,
    /// Nominal r/min.
    pub nominal_rpm: f64,
    /// ISO 20816-3 group.
    pub iso_group: u8,
    /// ISO 20816-3 support.
    pub iso_support: IsoSupport,
    /// Bearing positions in plant-file order.
    pub bearings: Vec<BearingNode>,
}

/// A bearing position in the tree.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BearingNode {
    /// Database id of the position.
    pub position_id: i64,
    /// Position name (e.g. "MNDE").
    pub position: String,
    /// Description.
    pub description: String,
    /// Bearing type designation.
    pub bearing_type: String,
    /// Fault factors of the bearing type (orders; BSF 1x convention).
    pub factors: Option<FaultFactors>,
    /// Lubrication.
    pub lubrication: Lubrication,
    /// Nominal r/min (the position's, else the machine's).
    pub nominal_rpm: f64,
    /// The current (open) life, if any.
    pub current_life_id: Option<i64>,
    /// Points in plant-file order.
    pub points: Vec<PointNode>,
}

/// A measurement point in the tree.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PointNode {
    /// Database id.
    pub id: i64,
    /// Point id from the plant file.
    pub tag: String,
    /// Direction.
    pub direction: Direction,
    /// Sensor type.
    pub sensor: String,
    /// Sensitivity, mV/g.
    pub sensitivity_mv_per_g: Option<f64>,
}

/// One installed bearing of a position.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LifeInfo {
    /// Database id.
    pub id: i64,
    /// Bearing position id.
    pub position_id: i64,
    /// Installation date.
    pub installed: NaiveDate,
    /// Replacement date (None for the current life).
    pub removed: Option<NaiveDate>,
    /// Condition found at removal.
    pub found_condition: Option<String>,
}

/// Latest state of one bearing position.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BearingState {
    /// Bearing position id.
    pub position_id: i64,
    /// Area name.
    pub area: String,
    /// Machine id (tag).
    pub machine: String,
    /// Machine name.
    pub machine_name: String,
    /// Position name.
    pub position: String,
    /// Lubrication.
    pub lubrication: Lubrication,
    /// The current life.
    pub life: Option<LifeInfo>,
    /// The latest reading of the position (any point), if any.
    pub last_reading_id: Option<i64>,
    /// When it was taken.
    pub last_reading_at: Option<DateTime<FixedOffset>>,
    /// The latest stage call on any reading of the position.
    pub latest_stage: Option<StageCall>,
}

/// One point of a trend series.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TrendPoint {
    /// Reading id.
    pub reading_id: i64,
    /// When the reading was taken.
    pub taken_at: DateTime<FixedOffset>,
    /// Point id (tag) it was taken at.
    pub point: String,
    /// Direction of that point.
    pub direction: Direction,
    /// The scalar's value.
    pub value: f64,
}

/// Metadata of a reading.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReadingMeta {
    /// Reading id.
    pub id: i64,
    /// Point database id.
    pub point_id: i64,
    /// Point id (tag).
    pub point: String,
    /// Direction of the point.
    pub direction: Direction,
    /// Bearing position id.
    pub position_id: i64,
    /// Machine id (tag).
    pub machine: String,
    /// Position name.
    pub position: String,
    /// Bearing life the reading belongs to.
    pub life_id: Option<i64>,
    /// When taken, with the original offset.
    pub taken_at: DateTime<FixedOffset>,
    /// Local date of `taken_at` (the route day).
    pub route_day: NaiveDate,
    /// Shaft speed, Hz.
    pub shaft_hz: f64,
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Units of the source file (`g`, `m/s2`, `mV`); the stored waveform is always in g.
    pub units: String,
    /// Number of samples.
    pub sample_count: usize,
    /// Source file (relative to the route folder).
    pub source_file: String,
    /// SHA-256 of the source file, hex.
    pub content_sha256: String,
    /// `Some("clipped")` etc. when the reading is suspect.
    pub suspect: Option<String>,
    /// Fraction of samples on a clipping plateau.
    pub clipped_fraction: f64,
    /// Analyzer version of the stored results.
    pub analysis_version: Option<String>,
    /// The analyst marked it as part of its life's baseline.
    pub baseline: bool,
}

/// A waveform with its metadata.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Waveform {
    /// Metadata.
    pub meta: ReadingMeta,
    /// Samples in g.
    pub samples_g: Vec<f32>,
}

/// A route day and its reading count.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct RouteDay {
    /// Local date.
    pub day: NaiveDate,
    /// Readings taken that day.
    pub readings: usize,
}

/// One life of a position and its readings (oldest first).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LifeReadings {
    /// The life.
    pub life: LifeInfo,
    /// Its readings, by time.
    pub readings: Vec<ReadingMeta>,
}

/// Stored analysis of a reading.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AnalysisRecord {
    /// Reading id.
    pub reading_id: i64,
    /// Analyzer version.
    pub version: String,
    /// The JSON document.
    pub document: serde_json::Value,
    /// The analyzer's diagnosis label, if it gave one.
    pub diagnosis: Option<String>,
    /// The scalars.
    pub scalars: BTreeMap<String, f64>,
}

/// One file's entry in the import log.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImportLogEntry {
    /// Import run id.
    pub run_id: i64,
    /// Route folder of the run.
    pub folder: String,
    /// When the run started (UTC RFC 3339).
    pub started_at: String,
    /// File as named in route.csv (or `route.csv:<line>` for a bad manifest row).
    pub file: String,
    /// Point id given, if any.
    pub point: Option<String>,
    /// `imported`, `duplicate` or `rejected`.
    pub outcome: String,
    /// Why, for rejections.
    pub reason: Option<String>,
}
