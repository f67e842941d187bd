//! Persisted user choices (saved by eframe between runs), kept apart from loaded data, caches and jobs.

use serde::{Deserialize, Serialize};
use spallcast_analysis::FaultKind;

pub use crate::model::SpectrumKind;

/// The main views. Their names are Spallcast's own.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum View {
    /// What changed since the previous route day, what is due, what was rejected.
    #[default]
    Changes,
    /// One bearing's spectra, month over month, with fault-frequency markers.
    Spectra,
    /// One bearing's indicator trends over its life, stages, replacements and forecast.
    Trend,
    /// The time waveform of one reading.
    Waveform,
    /// The outage-plan calendar: planned outages with their replacements, bearings that need a slot.
    OutagePlan,
}

impl View {
    /// The views offered as tabs, in order.
    pub const TABS: [Self; 5] = [
        Self::Changes,
        Self::Spectra,
        Self::Trend,
        Self::Waveform,
        Self::OutagePlan,
    ];

    /// Tab label.
    pub fn label(self) -> &'static str {
        match self {
            Self::Changes => "Since last route",
            Self::Spectra => "Spectra",
            Self::Trend => "Life trend",
            Self::Waveform => "Waveform",
            Self::OutagePlan => "Outage plan",
        }
    }

    /// Parses the names accepted by `SPALLCAST_START_VIEW`: changes, spectra, trend, waveform, plan.
    pub fn from_name(name: &str) -> Option<Self> {
        match name.trim().to_ascii_lowercase().as_str() {
            "changes" | "overview" => Some(Self::Changes),
            "spectra" | "spectrum" => Some(Self::Spectra),
            "trend" | "trends" => Some(Self::Trend),
            "waveform" | "wave" => Some(Self::Waveform),
            "plan" | "outage" | "outage-plan" => Some(Self::OutagePlan),
            _ => None,
        }
    }

    /// Whether the view shows one bearing.
    pub fn is_bearing_view(self) -> bool {
        matches!(self, Self::Spectra | Self::Trend | Self::Waveform)
    }
}

/// Amplitude axis scale.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum AmplitudeScale {
    /// Linear amplitude.
    #[default]
    Linear,
    /// Base-10 logarithm of the amplitude.
    Log,
}

/// Frequency axis unit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum FreqAxis {
    /// Hertz.
    #[default]
    Hz,
    /// Cycles per minute (Hz × 60).
    Cpm,
    /// Orders of each reading's own shaft speed.
    Orders,
}

impl FreqAxis {
    /// Axis value of `freq_hz` for a reading at `shaft_hz`.
    pub fn from_hz(self, freq_hz: f64, shaft_hz: f64) -> f64 {
        freq_hz * self.per_hz(shaft_hz)
    }

    /// Hz of an axis value for a reading at `shaft_hz`.
    pub fn to_hz(self, value: f64, shaft_hz: f64) -> f64 {
        value / self.per_hz(shaft_hz)
    }

    /// Axis units per hertz.
    pub fn per_hz(self, shaft_hz: f64) -> f64 {
        match self {
            Self::Hz => 1.0,
            Self::Cpm => 60.0,
            Self::Orders => {
                if shaft_hz > 0.0 {
                    1.0 / shaft_hz
                } else {
                    f64::NAN
                }
            }
        }
    }

    /// Axis title.
    pub fn title(self) -> &'static str {
        match self {
            Self::Hz => "frequency, Hz",
            Self::Cpm => "frequency, CPM",
            Self::Orders => "orders of shaft speed",
        }
    }

    /// Button label.
    pub fn label(self) -> &'static str {
        match self {
            Self::Hz => "Hz",
            Self::Cpm => "CPM",
            Self::Orders => "Orders",
        }
    }
}

/// How several months are drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum Layout {
    /// All on one amplitude axis.
    #[default]
    Overlay,
    /// Offset upward in time order, newest on top.
    Stacked,
}

/// Marker toggles for one fault family.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct FaultToggle {
    /// Show the family's harmonics.
    pub harmonics: bool,
    /// Show the sideband families around each harmonic.
    pub sidebands: bool,
}

/// Fault-frequency marker choices.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(default)]
pub struct MarkerSettings {
    /// Shaft-speed harmonics (1x, 2x, ...).
    pub shaft: bool,
    /// Outer race (BPFO).
    pub outer: FaultToggle,
    /// Inner race (BPFI, ±1x sidebands).
    pub inner: FaultToggle,
    /// Rolling element (2×BSF, ±FTF sidebands).
    pub rolling: FaultToggle,
    /// Cage (FTF).
    pub cage: FaultToggle,
    /// Harmonics per family.
    pub harmonic_count: u32,
    /// Sideband pairs per harmonic.
    pub sideband_pairs: u32,
}

impl Default for MarkerSettings {
    fn default() -> Self {
        let on = FaultToggle {
            harmonics: true,
            sidebands: false,
        };
        Self {
            shaft: false,
            outer: on,
            inner: on,
            rolling: FaultToggle {
                harmonics: false,
                sidebands: false,
            },
            cage: FaultToggle {
                harmonics: false,
                sidebands: false,
            },
            harmonic_count: 5,
            sideband_pairs: 2,
        }
    }
}

impl MarkerSettings {
    /// The toggles of one fault family.
    pub fn toggle(&self, kind: FaultKind) -> FaultToggle {
        match kind {
            FaultKind::OuterRace => self.outer,
            FaultKind::InnerRace => self.inner,
            FaultKind::RollingElement => self.rolling,
            FaultKind::Cage => self.cage,
        }
    }

    /// The toggles of one fault family, for editing.
    pub fn toggle_mut(&mut self, kind: FaultKind) -> &mut FaultToggle {
        match kind {
            FaultKind::OuterRace => &mut self.outer,
            FaultKind::InnerRace => &mut self.inner,
            FaultKind::RollingElement => &mut self.rolling,
            FaultKind::Cage => &mut self.cage,
        }
    }
}

/// The checkbox label of a fault family's harmonics (also what tests click).
pub fn fault_label(kind: FaultKind) -> &'static str {
    match kind {
        FaultKind::OuterRace => "BPFO",
        FaultKind::InnerRace => "BPFI",
        FaultKind::RollingElement => "BSF (2×)",
        FaultKind::Cage => "FTF",
    }
}

/// Spectra view choices.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(default)]
pub struct SpectraSettings {
    /// Which spectrum.
    pub kind: SpectrumKind,
    /// Linear or log amplitude.
    pub scale: AmplitudeScale,
    /// Hz, CPM or orders.
    pub axis: FreqAxis,
    /// Overlaid or stacked.
    pub layout: Layout,
    /// Marker toggles.
    pub markers: MarkerSettings,
}

/// Acceleration display unit (the analysis works in g throughout).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum AccelUnit {
    /// Standard gravity.
    #[default]
    G,
    /// Metres per second squared (1 g = 9.806 65 m/s²).
    MetrePerS2,
}

/// Velocity display unit (the analysis works in mm/s throughout).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
pub enum VelocityUnit {
    /// Millimetres per second.
    #[default]
    MmPerS,
    /// Inches per second (1 in = 25.4 mm).
    InPerS,
}

/// The analyst's display units. Only what is drawn and read out changes; the store, the analysis and
/// the exports keep g and mm/s.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, Serialize, Deserialize)]
#[serde(default)]
pub struct UnitPrefs {
    /// Acceleration (and the squared envelope, in its square).
    pub accel: AccelUnit,
    /// Velocity.
    pub velocity: VelocityUnit,
}

impl UnitPrefs {
    /// Display value per stored value of a spectrum kind (g peak, mm/s RMS, g²).
    pub fn factor(self, kind: SpectrumKind) -> f64 {
        match kind {
            SpectrumKind::Acceleration => self.accel_factor(),
            SpectrumKind::Velocity => self.velocity_factor(),
            SpectrumKind::Envelope => self.accel_factor() * self.accel_factor(),
        }
    }

    /// Display value per g.
    pub fn accel_factor(self) -> f64 {
        match self.accel {
            AccelUnit::G => 1.0,
            AccelUnit::MetrePerS2 => spallcast_model::units::STANDARD_GRAVITY_M_S2,
        }
    }

    /// Display value per mm/s.
    pub fn velocity_factor(self) -> f64 {
        match self.velocity {
            VelocityUnit::MmPerS => 1.0,
            VelocityUnit::InPerS => 1.0 / spallcast_model::units::MM_PER_INCH,
        }
    }

    /// Acceleration unit symbol.
    pub fn accel_unit(self) -> &'static str {
        match self.accel {
            AccelUnit::G => "g",
            AccelUnit::MetrePerS2 => "m/s²",
        }
    }

    /// Velocity unit symbol.
    pub fn velocity_unit(self) -> &'static str {
        match self.velocity {
            VelocityUnit::MmPerS => "mm/s",
            VelocityUnit::InPerS => "in/s",
        }
    }

    /// Amplitude unit of a spectrum kind.
    pub fn unit(self, kind: SpectrumKind) -> &'static str {
        match (kind, self.accel) {
            (SpectrumKind::Acceleration, _) => self.accel_unit(),
            (SpectrumKind::Velocity, _) => self.velocity_unit(),
            (SpectrumKind::Envelope, AccelUnit::G) => "g²",
            (SpectrumKind::Envelope, AccelUnit::MetrePerS2) => "(m/s²)²",
        }
    }

    /// Amplitude axis title of a spectrum kind (acceleration with the peak detector, velocity with
    /// the RMS detector, the squared envelope).
    pub fn axis_title(self, kind: SpectrumKind) -> String {
        match kind {
            SpectrumKind::Acceleration => format!("acceleration, {} peak", self.unit(kind)),
            SpectrumKind::Velocity => format!("velocity, {} RMS", self.unit(kind)),
            SpectrumKind::Envelope => format!("squared envelope, {}", self.unit(kind)),
        }
    }
}

/// Label of the units menu in the top bar.
pub const UNITS_MENU: &str = "Units";

/// Everything saved between runs.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(default)]
pub struct PersistedState {
    /// The view shown.
    pub view: View,
    /// Spectra view choices.
    pub spectra: SpectraSettings,
    /// Whether the user has read the first-run cautions.
    pub cautions_acknowledged: bool,
    /// Indicators drawn in the life trend (scalar names); empty means the default set.
    pub trend_indicators: Vec<String>,
    /// Databases opened, newest first (offered where no file dialog can be shown).
    pub recent_databases: Vec<String>,
    /// Route folders imported, newest first.
    pub recent_folders: Vec<String>,
    /// Display units.
    pub units: UnitPrefs,
    /// Folder the last plot was saved in.
    pub export_folder: String,
}

#[cfg(test)]
mod tests {
    use super::*;

    // 1 Hz is 60 cycles per minute, and a reading at 1,480 r/min has its 1x at 24.667 Hz (by definition).
    #[test]
    fn axis_conversions_round_trip() {
        let shaft_hz = 1480.0 / 60.0;
        assert!((FreqAxis::Cpm.from_hz(10.0, shaft_hz) - 600.0).abs() < 1e-12);
        assert!((FreqAxis::Orders.from_hz(shaft_hz * 3.0, shaft_hz) - 3.0).abs() < 1e-12);
        for axis in [FreqAxis::Hz, FreqAxis::Cpm, FreqAxis::Orders] {
            let v = axis.from_hz(123.4, shaft_hz);
            assert!((axis.to_hz(v, shaft_hz) - 123.4).abs() < 1e-9, "{axis:?}");
        }
        assert!(FreqAxis::Orders.from_hz(10.0, 0.0).is_nan());
    }

    // 1 g is 9.806 65 m/s² (ISO 80000-3, standard gravity); 1 in/s is 25.4 mm/s (NIST SP 811, B.8).
    #[test]
    fn unit_factors_follow_the_definitions() {
        let si = UnitPrefs {
            accel: AccelUnit::MetrePerS2,
            velocity: VelocityUnit::InPerS,
        };
        assert!((si.factor(SpectrumKind::Acceleration) - 9.806_65).abs() < 1e-12);
        assert!((si.factor(SpectrumKind::Envelope) - 9.806_65 * 9.806_65).abs() < 1e-9);
        assert!((si.factor(SpectrumKind::Velocity) * 25.4 - 1.0).abs() < 1e-12);
        assert_eq!(
            si.axis_title(SpectrumKind::Envelope),
            "squared envelope, (m/s²)²"
        );
        let base = UnitPrefs::default();
        for kind in SpectrumKind::ALL {
            assert!((base.factor(kind) - 1.0).abs() < f64::EPSILON);
            assert_eq!(base.axis_title(kind), kind.axis_title());
        }
    }

    #[test]
    fn view_names_parse() {
        assert_eq!(View::from_name("spectra"), Some(View::Spectra));
        assert_eq!(View::from_name(" Trend "), Some(View::Trend));
        assert_eq!(View::from_name("plan"), Some(View::OutagePlan));
        assert_eq!(View::from_name("nonsense"), None);
        assert!(View::TABS.contains(&View::OutagePlan));
    }
}
