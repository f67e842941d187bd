//! View-model types: what the window shows, filled from the store by [`crate::source`].
//!
//! The panels read only these types, never the store or the analysis crate directly, so the views stay
//! thin and the data layer can change underneath them.

use std::collections::BTreeMap;
use std::sync::Arc;

use chrono::{DateTime, FixedOffset, NaiveDate};
use spallcast_analysis::FaultFactors;

/// Database id of one stored reading.
pub type ReadingId = i64;

/// Identifies one bearing position: the machine id (unique across the plant) and the position on it.
#[derive(
    Debug, Clone, PartialEq, Eq, Hash, PartialOrd, Ord, serde::Serialize, serde::Deserialize,
)]
pub struct BearingKey {
    /// Machine id, e.g. `IN-P1`.
    pub machine_id: String,
    /// Bearing position on the machine, e.g. `MNDE`.
    pub position: String,
}

impl BearingKey {
    /// `IN-P1 / MNDE`.
    pub fn display(&self) -> String {
        format!("{} / {}", self.machine_id, self.position)
    }
}

/// The plant hierarchy as the tree panel shows it.
#[derive(Debug, Clone, Default)]
pub struct PlantTree {
    /// Site name.
    pub site: String,
    /// Areas in plant-file order.
    pub areas: Vec<AreaNode>,
}

impl PlantTree {
    /// Every bearing in tree order.
    pub fn bearings(&self) -> impl Iterator<Item = &BearingNode> {
        self.areas
            .iter()
            .flat_map(|a| a.machines.iter())
            .flat_map(|m| m.bearings.iter())
    }

    /// The bearing with this key, if the plant has it.
    pub fn bearing(&self, key: &BearingKey) -> Option<&BearingNode> {
        self.bearings().find(|b| &b.key == key)
    }
}

/// One plant area.
#[derive(Debug, Clone)]
pub struct AreaNode {
    /// Area name.
    pub name: String,
    /// Machines in the area.
    pub machines: Vec<MachineNode>,
}

/// One machine.
#[derive(Debug, Clone)]
pub struct MachineNode {
    /// Machine id, unique across the plant.
    pub id: String,
    /// Human name.
    pub name: String,
    /// Bearing positions on the machine.
    pub bearings: Vec<BearingNode>,
}

/// One bearing position in the tree.
#[derive(Debug, Clone)]
pub struct BearingNode {
    /// Which bearing.
    pub key: BearingKey,
    /// Free-text description, e.g. "Motor non-drive end".
    pub description: String,
    /// The bearing's call on its current life (0 = no defect seen, 1..=4), `None` when there is none.
    pub stage: Option<u8>,
    /// Its measurement point ids.
    pub points: Vec<String>,
}

impl BearingNode {
    /// The label the tree shows (and tests find the bearing by): `MNDE  Motor non-drive end`.
    pub fn label(&self) -> String {
        if self.description.is_empty() {
            self.key.position.clone()
        } else {
            format!("{}  {}", self.key.position, self.description)
        }
    }
}

/// One stored reading of a bearing, without its samples.
#[derive(Debug, Clone)]
pub struct ReadingSummary {
    /// Database id.
    pub id: ReadingId,
    /// Measurement point id, e.g. `IN-P1-MNDE-H`.
    pub point: String,
    /// When it was taken.
    pub taken_at: DateTime<FixedOffset>,
    /// Shaft speed during the reading, r/min.
    pub rpm: f64,
    /// Named indicators computed at import (e.g. `accel_rms_g`, `velocity_rms_mm_s`).
    pub scalars: BTreeMap<String, f64>,
    /// Stage reached at this reading, when a stage call is stored for it.
    pub stage: Option<u8>,
    /// The damage index of that call, dB over the life's baseline (what the forecast projects).
    pub damage_db: Option<f64>,
    /// The analyst marked it as part of its life's baseline.
    pub baseline: bool,
    /// The replace-by date projected at this reading (its stored record's forecast), if any.
    pub replace_by: Option<NaiveDate>,
    /// The end-of-life date projected at this reading, if any.
    pub end_of_life: Option<NaiveDate>,
    /// That end of life is only a prior (no damage growth to project: a survival prior or the finished
    /// lives of the population), not a projection of this life's damage.
    pub end_of_life_is_prior: bool,
}

impl ReadingSummary {
    /// Shaft speed in Hz.
    pub fn shaft_hz(&self) -> f64 {
        self.rpm / 60.0
    }

    /// `2026-05-14`, the label of a reading in month lists.
    pub fn day_label(&self) -> String {
        self.taken_at.format("%Y-%m-%d").to_string()
    }

    /// `14 May 2026`, the name of a reading's curve in plot legends.
    pub fn legend_label(&self) -> String {
        self.taken_at.format("%-d %b %Y").to_string()
    }
}

/// The current stage call of a bearing with its evidence.
#[derive(Debug, Clone)]
pub struct StageCallView {
    /// Stage 0 (no defect seen) to 4.
    pub stage: u8,
    /// The point whose call governs (the highest stage among the bearing's points).
    pub point: String,
    /// When that point's reading was taken.
    pub taken_at: chrono::DateTime<chrono::Utc>,
    /// Every point with a call on the current life (what the call rests on).
    pub points: Vec<String>,
    /// Evidence sentences, in the order the stage logic gave them.
    pub evidence: Vec<String>,
    /// The life's fault location as it stands at its newest reading (the one `spallcast bearings`
    /// and the planner's exports show), when the stored record holds one.
    pub location: Option<spallcast_analysis::stage::LifeLocation>,
}

/// An analyst's note on a bearing or one of its readings.
#[derive(Debug, Clone, PartialEq)]
pub struct NoteView {
    /// The day it refers to.
    pub on_day: NaiveDate,
    /// observation, lubrication or maintenance.
    pub kind: String,
    /// The text.
    pub text: String,
    /// The reading it is about, if any.
    pub reading: Option<ReadingId>,
}

/// A change to the analyst's own records on a bearing.
#[derive(Debug, Clone, PartialEq)]
pub enum Annotation {
    /// Add a note.
    AddNote {
        /// The day it refers to.
        on_day: NaiveDate,
        /// observation, lubrication or maintenance.
        kind: String,
        /// The text.
        text: String,
        /// The reading it is about, if any.
        reading: Option<ReadingId>,
    },
    /// These readings (of one life) form its baseline; empty clears the marks.
    SetBaseline(Vec<ReadingId>),
}

/// A stored replacement forecast.
#[derive(Debug, Clone)]
pub struct ForecastView {
    /// Recommended replacement date.
    pub replace_by: NaiveDate,
    /// Lower end of the forecast interval.
    pub earliest: NaiveDate,
    /// Upper end of the forecast interval.
    pub latest: NaiveDate,
    /// When the risk of stage 4 begins (the damage index reaching the stage-4 level), if projected.
    pub risk_from: Option<NaiveDate>,
}

/// Everything the bearing views need about one bearing, except samples and spectra.
#[derive(Debug, Clone)]
pub struct BearingHistory {
    /// Which bearing.
    pub key: BearingKey,
    /// Fault factors in orders, when the bearing type is known.
    pub factors: Option<FaultFactors>,
    /// ISO 20816-3 machine group.
    pub iso_group: spallcast_analysis::MachineGroup,
    /// ISO 20816-3 support class.
    pub iso_support: spallcast_analysis::Support,
    /// Lubrication.
    pub lubrication: spallcast_analysis::forecast::Lubrication,
    /// Readings of every point on this bearing, oldest first.
    pub readings: Vec<ReadingSummary>,
    /// Start of each bearing life (the first is the first install), oldest first.
    pub lives_started: Vec<NaiveDate>,
    /// The bearing's call on its current life, if the pipeline stored one.
    pub stage_call: Option<StageCallView>,
    /// The forecast of that call, if the pipeline stored one.
    pub forecast: Option<ForecastView>,
    /// The analyst's notes on the bearing, oldest day first.
    pub notes: Vec<NoteView>,
}

impl BearingHistory {
    /// Point ids with readings, sorted.
    pub fn points(&self) -> Vec<String> {
        let mut points: Vec<String> = self.readings.iter().map(|r| r.point.clone()).collect();
        points.sort();
        points.dedup();
        points
    }

    /// Readings of one point, oldest first.
    pub fn readings_of<'a>(
        &'a self,
        point: &'a str,
    ) -> impl Iterator<Item = &'a ReadingSummary> + 'a {
        self.readings.iter().filter(move |r| r.point == point)
    }

    /// The reading with this id.
    pub fn reading(&self, id: ReadingId) -> Option<&ReadingSummary> {
        self.readings.iter().find(|r| r.id == id)
    }

    /// Start of the life the reading at `at` belongs to.
    pub fn life_start_for(&self, at: NaiveDate) -> Option<NaiveDate> {
        self.lives_started
            .iter()
            .copied()
            .filter(|d| *d <= at)
            .max()
    }
}

/// A recording's samples, in g.
#[derive(Debug, Clone)]
pub struct Waveform {
    /// Reading it belongs to.
    pub reading_id: ReadingId,
    /// Samples in g.
    pub samples_g: Vec<f32>,
    /// Sample rate, Hz.
    pub sample_rate_hz: f64,
    /// Shaft speed, Hz.
    pub shaft_hz: f64,
    /// Fault factors of the bearing, when known (they steer the envelope band choice).
    pub factors: Option<FaultFactors>,
}

/// Which spectrum of a reading.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, Hash, Default, serde::Serialize, serde::Deserialize,
)]
pub enum SpectrumKind {
    /// Acceleration amplitude spectrum, g peak.
    #[default]
    Acceleration,
    /// Velocity amplitude spectrum, mm/s RMS.
    Velocity,
    /// Squared envelope spectrum, g².
    Envelope,
}

impl SpectrumKind {
    /// All kinds in display order.
    pub const ALL: [Self; 3] = [Self::Acceleration, Self::Velocity, Self::Envelope];

    /// Button label.
    pub fn label(self) -> &'static str {
        match self {
            Self::Acceleration => "Acceleration",
            Self::Velocity => "Velocity",
            Self::Envelope => "Envelope",
        }
    }

    /// Amplitude axis title (the analysis crate's plot spectra: acceleration with the peak detector,
    /// velocity with the RMS detector, the squared envelope in g²).
    pub fn axis_title(self) -> &'static str {
        match self {
            Self::Acceleration => "acceleration, g peak",
            Self::Velocity => "velocity, mm/s RMS",
            Self::Envelope => "squared envelope, g²",
        }
    }

    /// Amplitude unit.
    pub fn unit(self) -> &'static str {
        match self {
            Self::Acceleration => "g",
            Self::Velocity => "mm/s",
            Self::Envelope => "g²",
        }
    }
}

/// One single-sided amplitude spectrum on a uniform grid: line `i` is at `i × df_hz`.
#[derive(Debug, Clone)]
pub struct Spectrum {
    /// Line spacing, Hz.
    pub df_hz: f64,
    /// Amplitude per line (peak amplitude, in the kind's unit).
    pub amplitude: Vec<f32>,
}

impl Spectrum {
    /// Frequency of the last line, Hz.
    pub fn max_hz(&self) -> f64 {
        self.df_hz * self.amplitude.len().saturating_sub(1) as f64
    }

    /// Amplitude of the line nearest `freq_hz`, if inside the spectrum.
    pub fn amplitude_at(&self, freq_hz: f64) -> Option<f32> {
        if !(freq_hz.is_finite() && freq_hz >= 0.0 && self.df_hz > 0.0) {
            return None;
        }
        self.amplitude
            .get((freq_hz / self.df_hz).round() as usize)
            .copied()
    }
}

/// The three spectra of one reading, computed once on a worker thread and cached.
#[derive(Debug, Clone)]
pub struct ReadingSpectra {
    /// Reading they belong to.
    pub reading_id: ReadingId,
    /// Shaft speed of the reading, Hz (for the orders axis).
    pub shaft_hz: f64,
    /// Acceleration spectrum.
    pub acceleration: Spectrum,
    /// Velocity spectrum.
    pub velocity: Spectrum,
    /// Envelope spectrum.
    pub envelope: Spectrum,
    /// Demodulation band used for the envelope, Hz.
    pub envelope_band_hz: Option<(f64, f64)>,
}

impl ReadingSpectra {
    /// The spectrum of one kind.
    pub fn get(&self, kind: SpectrumKind) -> &Spectrum {
        match kind {
            SpectrumKind::Acceleration => &self.acceleration,
            SpectrumKind::Velocity => &self.velocity,
            SpectrumKind::Envelope => &self.envelope,
        }
    }
}

/// A bearing whose stage or findings changed since the previous route day.
#[derive(Debug, Clone)]
pub struct ChangedBearing {
    /// Which bearing.
    pub key: BearingKey,
    /// Stage at the previous route day.
    pub stage_before: Option<u8>,
    /// Stage now.
    pub stage_now: Option<u8>,
    /// What changed, one short sentence.
    pub what: String,
}

/// A bearing with a forecast replacement date.
#[derive(Debug, Clone)]
pub struct DueBearing {
    /// Which bearing.
    pub key: BearingKey,
    /// Current stage.
    pub stage: Option<u8>,
    /// Recommended replacement date.
    pub replace_by: NaiveDate,
}

/// A file the import refused, with the reason.
#[derive(Debug, Clone)]
pub struct RejectedFile {
    /// File name as the manifest gave it.
    pub file: String,
    /// Why it was refused.
    pub reason: String,
}

/// The "what needs attention" lists.
#[derive(Debug, Clone, Default)]
pub struct Attention {
    /// Latest route day in the database.
    pub latest_day: Option<NaiveDate>,
    /// The route day before it.
    pub previous_day: Option<NaiveDate>,
    /// Bearings whose stage or findings changed between the two.
    pub changed: Vec<ChangedBearing>,
    /// Bearings with a forecast, soonest first.
    pub due: Vec<DueBearing>,
    /// Whether any forecast is stored at all (to tell "none due" from "none computed").
    pub forecasts_stored: bool,
    /// Files rejected by imports.
    pub rejected: Vec<RejectedFile>,
    /// Points read on the previous route day but not on the latest (missed on the last route), by id.
    pub not_collected: Vec<String>,
}

/// Progress of a running import.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ImportProgress {
    /// Rows handled so far.
    pub done: usize,
    /// Rows in the manifest.
    pub total: usize,
}

impl ImportProgress {
    /// Fraction done, 0..=1.
    pub fn fraction(self) -> f32 {
        if self.total == 0 {
            0.0
        } else {
            (self.done as f32 / self.total as f32).clamp(0.0, 1.0)
        }
    }
}

/// What an import did.
#[derive(Debug, Clone, Default)]
pub struct ImportSummary {
    /// Readings added.
    pub imported: usize,
    /// Readings already in the database (skipped).
    pub already_present: usize,
    /// Files refused, with reasons.
    pub rejected: Vec<RejectedFile>,
    /// Why the stage assessment after the import failed, if it did (the import stands; the calls are
    /// completed the next time the database is opened).
    pub assessment_failed: Option<String>,
}

/// Progress of bringing a database up to date as it is opened (re-analysis of readings from an
/// older analysis version, completion of missing or stale stage calls).
#[derive(Debug, Clone, PartialEq)]
pub struct UpdateProgress {
    /// What is being done, in words.
    pub what: String,
    /// Steps done.
    pub done: usize,
    /// Steps in all.
    pub total: usize,
}

/// Shared, immutable spectra as cached by the app.
pub type SharedSpectra = Arc<ReadingSpectra>;
