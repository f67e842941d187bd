//! The plant file: a human-editable TOML description of the site, its bearing types, hierarchy and
//! outages. Format documented in the crate README; unknown keys are an error naming the file and key.

use std::path::Path;

use chrono::NaiveDate;
use serde::{Deserialize, Serialize};

use crate::analyzer::FaultFactors;
use crate::error::{Result, StoreError};

/// A whole plant file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PlantFile {
    /// The site.
    pub site: SiteDef,
    /// Bearing types referred to by bearing positions.
    #[serde(default)]
    pub bearing_types: Vec<BearingTypeDef>,
    /// Areas with their machines.
    #[serde(default)]
    pub areas: Vec<AreaDef>,
    /// Planned outages.
    #[serde(default)]
    pub outages: Vec<OutageDef>,
}

/// `[site]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SiteDef {
    /// Site name.
    pub name: String,
    /// Default UTC offset (`"+01:00"`) for dates without one.
    #[serde(default = "default_offset")]
    pub timezone_offset: String,
}

fn default_offset() -> String {
    "+00:00".to_owned()
}

/// `[[bearing_types]]`: geometry, or factors in orders.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BearingTypeDef {
    /// Designation, unique in the plant.
    pub designation: String,
    /// Free text, e.g. "deep-groove ball".
    #[serde(default)]
    pub kind: String,
    /// Number of rolling elements.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rolling_elements: Option<u32>,
    /// Rolling-element diameter, mm.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub element_diameter_mm: Option<f64>,
    /// Pitch diameter, mm.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pitch_diameter_mm: Option<f64>,
    /// Contact angle, degrees.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub contact_angle_deg: Option<f64>,
    /// Fault factors in orders (BSF in the 1x convention), instead of geometry.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub factors: Option<FaultFactors>,
}

impl BearingTypeDef {
    /// The fault factors: given ones, else computed from the geometry.
    pub fn fault_factors(&self) -> Option<FaultFactors> {
        if let Some(f) = self.factors {
            return Some(f);
        }
        FaultFactors::from_geometry(
            self.rolling_elements?,
            self.element_diameter_mm?,
            self.pitch_diameter_mm?,
            self.contact_angle_deg.unwrap_or(0.0),
        )
    }
}

/// `[[areas]]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AreaDef {
    /// Area name, unique in the plant.
    pub name: String,
    /// Machines of the area.
    #[serde(default)]
    pub machines: Vec<MachineDef>,
}

/// Kind of machine.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum MachineKind {
    /// A pump.
    Pump,
    /// A fan.
    Fan,
    /// A motor.
    Motor,
    /// A gearbox.
    Gearbox,
    /// Anything else.
    Other,
}

/// ISO 20816-3 support class and lubrication: shared vocabulary (`spallcast-model`), with the words
/// of the plant file and the database as `as_str`/`parse`.
pub use spallcast_model::{Lubrication, Support as IsoSupport};

/// Measurement direction.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub enum Direction {
    /// Horizontal.
    H,
    /// Vertical.
    V,
    /// Axial.
    A,
}

macro_rules! text_enum {
    ($t:ty { $($v:ident = $s:literal),* $(,)? }) => {
        impl $t {
            /// The word used in the plant file and the database.
            pub fn as_str(self) -> &'static str {
                match self { $(Self::$v => $s),* }
            }
            /// Parses the word used in the plant file and the database.
            pub fn parse(s: &str) -> Option<Self> {
                match s { $($s => Some(Self::$v),)* _ => None }
            }
        }
        impl std::fmt::Display for $t {
            fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str(self.as_str())
            }
        }
    };
}
text_enum!(MachineKind { Pump = "pump", Fan = "fan", Motor = "motor", Gearbox = "gearbox", Other = "other" });
text_enum!(Direction { H = "H", V = "V", A = "A" });

/// `[[areas.machines]]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct MachineDef {
    /// Machine id, unique across the plant.
    pub id: String,
    /// Display name.
    pub name: String,
    /// Kind of machine.
    pub kind: MachineKind,
    /// Nominal shaft speed, r/min.
    pub nominal_rpm: f64,
    /// ISO 20816-3 machine group (1 or 2).
    pub iso_group: u8,
    /// ISO 20816-3 support class.
    pub iso_support: IsoSupport,
    /// Bearing positions.
    #[serde(default)]
    pub bearings: Vec<BearingDef>,
    /// Measurement points.
    #[serde(default)]
    pub points: Vec<PointDef>,
}

/// `[[areas.machines.bearings]]`: one bearing position.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BearingDef {
    /// Position name, unique within the machine.
    pub position: String,
    /// Description.
    #[serde(default)]
    pub description: String,
    /// Designation of the bearing type.
    pub bearing_type: String,
    /// Lubrication.
    pub lubrication: Lubrication,
    /// Nominal shaft speed at this position, r/min (default: the machine's).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub nominal_rpm: Option<f64>,
    /// Date the current (or first) life began.
    pub installed: NaiveDate,
    /// Earlier lives, oldest first, each ended by a replacement.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub history: Vec<PastLifeDef>,
}

/// A past life of a bearing position.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PastLifeDef {
    /// Installation date.
    pub installed: NaiveDate,
    /// Replacement date.
    pub removed: NaiveDate,
    /// Condition found at removal.
    #[serde(default)]
    pub found: String,
}

/// `[[areas.machines.points]]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PointDef {
    /// Point id, unique across the plant; route.csv refers to it.
    pub id: String,
    /// Bearing position on this machine.
    pub bearing: String,
    /// Direction.
    pub direction: Direction,
    /// Sensor type, free text.
    #[serde(default = "default_sensor")]
    pub sensor: String,
    /// Sensor sensitivity, mV/g (needed for recordings in mV).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sensitivity_mv_per_g: Option<f64>,
}

fn default_sensor() -> String {
    "accelerometer".to_owned()
}

/// `[[outages]]`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutageDef {
    /// Outage name, unique.
    pub name: String,
    /// First day.
    pub start: NaiveDate,
    /// Last day.
    pub end: NaiveDate,
    /// Areas taken down.
    #[serde(default)]
    pub areas: Vec<String>,
    /// Extra machines taken down, by id.
    #[serde(default)]
    pub machines: Vec<String>,
}

impl PlantFile {
    /// Parses plant-file text; `path` is used in error messages only.
    pub fn parse(text: &str, path: &Path) -> Result<PlantFile> {
        let plant: PlantFile = toml::from_str(text).map_err(|e| StoreError::PlantFile {
            path: path.to_path_buf(),
            message: e.to_string(),
        })?;
        plant.check().map_err(|mut message| {
            if let Some(line) = plant
                .repeated_outage()
                .and_then(|index| table_name_line(text, "outages", index))
            {
                message = format!("line {line}: {message}");
            }
            StoreError::PlantFile {
                path: path.to_path_buf(),
                message,
            }
        })?;
        Ok(plant)
    }

    /// Reads and parses a plant file.
    pub fn read(path: &Path) -> Result<PlantFile> {
        let text = std::fs::read_to_string(path).map_err(|source| StoreError::Io {
            path: path.to_path_buf(),
            source,
        })?;
        Self::parse(&text, path)
    }

    /// The plant file as TOML text.
    pub fn to_toml(&self) -> Result<String> {
        toml::to_string_pretty(self)
            .map_err(|e| StoreError::Plant(format!("cannot write the plant file: {e}")))
    }

    /// Writes the plant file atomically: a temporary file beside it, synced, then renamed over it, so a
    /// full disk or a crash leaves the previous file whole (it is the analyst's hand-edited copy).
    pub fn write(&self, path: &Path) -> Result<()> {
        let text = self.to_toml()?;
        crate::write_file_atomic(path, text.as_bytes()).map_err(|source| StoreError::Io {
            path: path.to_path_buf(),
            source,
        })
    }

    /// Checks references and uniqueness; the message names the offending item.
    pub fn check(&self) -> std::result::Result<(), String> {
        use std::collections::HashSet;
        parse_offset(&self.site.timezone_offset).ok_or_else(|| {
            format!(
                "site.timezone_offset {:?} is not an offset like +01:00",
                self.site.timezone_offset
            )
        })?;
        let mut types = HashSet::new();
        for t in &self.bearing_types {
            check_id("bearing type designation", &t.designation)?;
            check_geometry(t)?;
            if !types.insert(t.designation.as_str()) {
                return Err(format!("bearing type {:?} is defined twice", t.designation));
            }
            if t.fault_factors().is_none_or(|f| !f.is_valid()) {
                return Err(format!(
                    "bearing type {:?} needs either valid geometry (rolling_elements, element_diameter_mm, \
                     pitch_diameter_mm, contact_angle_deg) or factors = {{ ftf, bsf, bpfo, bpfi }}",
                    t.designation
                ));
            }
        }
        let mut areas = HashSet::new();
        let mut machines = HashSet::new();
        let mut points = HashSet::new();
        for area in &self.areas {
            check_id("area name", &area.name)?;
            if !areas.insert(area.name.as_str()) {
                return Err(format!("area {:?} is defined twice", area.name));
            }
            for m in &area.machines {
                check_machine(m, &types, &mut machines, &mut points)?;
            }
        }
        let mut outages = HashSet::new();
        for o in &self.outages {
            check_id("outage name", &o.name)?;
            if !outages.insert(o.name.as_str()) {
                return Err(format!("outage name {:?} is used twice", o.name));
            }
            if o.end < o.start {
                return Err(format!("outage {:?} ends before it starts", o.name));
            }
            if let Some(a) = o.areas.iter().find(|a| !areas.contains(a.as_str())) {
                return Err(format!("outage {:?} names unknown area {a:?}", o.name));
            }
            if let Some(m) = o.machines.iter().find(|m| !machines.contains(m.as_str())) {
                return Err(format!("outage {:?} names unknown machine {m:?}", o.name));
            }
        }
        Ok(())
    }

    /// Index of the first outage whose name an earlier outage already has.
    fn repeated_outage(&self) -> Option<usize> {
        let mut seen = std::collections::HashSet::new();
        self.outages
            .iter()
            .position(|o| !seen.insert(o.name.as_str()))
    }
}

/// 1-based line of the `name = ...` key of the `index`-th `[[table]]` in plant-file text (`None` when
/// the tables are written another way, e.g. inline).
fn table_name_line(text: &str, table: &str, index: usize) -> Option<usize> {
    let header = format!("[[{table}]]");
    let mut current: Option<usize> = None;
    let mut count = 0;
    for (i, line) in text.lines().enumerate() {
        let t = line.trim();
        if t.starts_with(&header) {
            current = Some(count);
            count += 1;
        } else if t.starts_with('[') {
            current = None;
        } else if current == Some(index)
            && t.strip_prefix("name")
                .is_some_and(|rest| rest.trim_start().starts_with('='))
        {
            return Some(i + 1);
        }
    }
    None
}

/// An id or name: not empty or blank, and no control characters (NUL, line breaks, ...), which
/// would break route files, exports and the screen.
fn check_id(key: &str, value: &str) -> std::result::Result<(), String> {
    if value.trim().is_empty() {
        return Err(format!("{key} {value:?} is empty"));
    }
    if value.chars().any(char::is_control) {
        return Err(format!(
            "{key} {value:?} holds a control character (NUL, line break, tab, ...)"
        ));
    }
    Ok(())
}

/// Geometry given with a bearing type must be possible even when fault factors are given too (the
/// factors win for the analysis, but the geometry is shown and exported).
fn check_geometry(t: &BearingTypeDef) -> std::result::Result<(), String> {
    let name = &t.designation;
    let positive = |key: &str, v: Option<f64>| match v {
        Some(v) if !(v.is_finite() && v > 0.0) => Err(format!(
            "bearing type {name:?}: {key} = {v} must be a finite number above 0"
        )),
        _ => Ok(()),
    };
    positive("element_diameter_mm", t.element_diameter_mm)?;
    positive("pitch_diameter_mm", t.pitch_diameter_mm)?;
    if t.rolling_elements == Some(0) {
        return Err(format!(
            "bearing type {name:?}: rolling_elements must be at least 1"
        ));
    }
    if let Some(a) = t.contact_angle_deg
        && !(a.is_finite() && (0.0..90.0).contains(&a))
    {
        return Err(format!(
            "bearing type {name:?}: contact_angle_deg = {a} must be from 0 up to (not including) 90 degrees"
        ));
    }
    if let (Some(d), Some(pd)) = (t.element_diameter_mm, t.pitch_diameter_mm)
        && pd <= d
    {
        return Err(format!(
            "bearing type {name:?}: pitch_diameter_mm = {pd} must be larger than element_diameter_mm = {d}"
        ));
    }
    Ok(())
}

fn check_machine<'a>(
    m: &'a MachineDef,
    types: &std::collections::HashSet<&str>,
    machines: &mut std::collections::HashSet<&'a str>,
    points: &mut std::collections::HashSet<&'a str>,
) -> std::result::Result<(), String> {
    check_id("machine id", &m.id)?;
    if !machines.insert(m.id.as_str()) {
        return Err(format!("machine id {:?} is used twice", m.id));
    }
    if !(1..=2).contains(&m.iso_group) {
        return Err(format!("machine {:?}: iso_group must be 1 or 2", m.id));
    }
    if !(m.nominal_rpm.is_finite() && m.nominal_rpm > 0.0) {
        return Err(format!("machine {:?}: nominal_rpm must be positive", m.id));
    }
    let mut positions = std::collections::HashSet::new();
    for b in &m.bearings {
        check_id(
            &format!("machine {:?}: bearing position", m.id),
            &b.position,
        )?;
        if let Some(rpm) = b.nominal_rpm
            && !(rpm.is_finite() && rpm > 0.0)
        {
            return Err(format!(
                "machine {:?} {}: nominal_rpm = {rpm} must be positive",
                m.id, b.position
            ));
        }
        if !positions.insert(b.position.as_str()) {
            return Err(format!(
                "machine {:?}: bearing position {:?} is defined twice",
                m.id, b.position
            ));
        }
        if !types.contains(b.bearing_type.as_str()) {
            return Err(format!(
                "machine {:?} {}: unknown bearing_type {:?}",
                m.id, b.position, b.bearing_type
            ));
        }
        let mut previous_end: Option<NaiveDate> = None;
        for life in &b.history {
            if life.removed < life.installed || previous_end.is_some_and(|e| life.installed < e) {
                return Err(format!(
                    "machine {:?} {}: history dates are out of order",
                    m.id, b.position
                ));
            }
            previous_end = Some(life.removed);
        }
        if previous_end.is_some_and(|e| b.installed < e) {
            return Err(format!(
                "machine {:?} {}: installed is before the last removal in history",
                m.id, b.position
            ));
        }
    }
    for p in &m.points {
        check_id("point id", &p.id)?;
        if !points.insert(p.id.as_str()) {
            return Err(format!("point id {:?} is used twice", p.id));
        }
        if !positions.contains(p.bearing.as_str()) {
            return Err(format!(
                "point {:?}: machine {:?} has no bearing position {:?}",
                p.id, m.id, p.bearing
            ));
        }
        if p.sensitivity_mv_per_g
            .is_some_and(|s| !(s.is_finite() && s > 0.0))
        {
            return Err(format!(
                "point {:?}: sensitivity_mv_per_g must be positive",
                p.id
            ));
        }
    }
    Ok(())
}

/// Parses `+01:00` / `-05:30` / `Z` into a fixed offset.
pub(crate) fn parse_offset(text: &str) -> Option<chrono::FixedOffset> {
    if text == "Z" {
        return chrono::FixedOffset::east_opt(0);
    }
    let (sign, rest) = match text.as_bytes().first()? {
        b'+' => (1, &text[1..]),
        b'-' => (-1, &text[1..]),
        _ => return None,
    };
    let (h, m) = rest.split_once(':')?;
    let h: i32 = h.parse().ok()?;
    let m: i32 = m.parse().ok()?;
    if h > 23 || m > 59 {
        return None;
    }
    chrono::FixedOffset::east_opt(sign * (h * 3600 + m * 60))
}
