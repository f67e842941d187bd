//! Overall indicators: RMS, peak, crest factor, impulse factor, kurtosis, ISO 20816-3 evaluation zones.

use serde::{Deserialize, Serialize};

/// Root mean square of `x` (0 for an empty slice).
pub fn rms(x: &[f64]) -> f64 {
    if x.is_empty() {
        return 0.0;
    }
    (x.iter().map(|v| v * v).sum::<f64>() / x.len() as f64).sqrt()
}

/// Largest absolute value of `x` (0 for an empty slice).
pub fn peak_abs(x: &[f64]) -> f64 {
    x.iter().fold(0.0, |m, v| m.max(v.abs()))
}

/// Crest factor: peak / RMS (0 when the RMS is 0).
pub fn crest_factor(x: &[f64]) -> f64 {
    let r = rms(x);
    if r > 0.0 { peak_abs(x) / r } else { 0.0 }
}

/// Impulse factor: peak / mean absolute value (0 when the mean absolute value is 0). Like the crest
/// factor it rises as impacts appear and falls back as damage spreads, but it weighs the peak against
/// the rectified mean, so it reacts more strongly to isolated impacts (common practice, no source).
pub fn impulse_factor(x: &[f64]) -> f64 {
    if x.is_empty() {
        return 0.0;
    }
    let mean_abs = x.iter().map(|v| v.abs()).sum::<f64>() / x.len() as f64;
    if mean_abs > 0.0 {
        peak_abs(x) / mean_abs
    } else {
        0.0
    }
}

/// Pearson kurtosis m4/m2² about the mean (Gaussian = 3; 0 for a constant or empty signal).
pub fn kurtosis(x: &[f64]) -> f64 {
    if x.is_empty() {
        return 0.0;
    }
    let n = x.len() as f64;
    let mean = x.iter().sum::<f64>() / n;
    let (mut m2, mut m4) = (0.0, 0.0);
    for v in x {
        let d = (v - mean) * (v - mean);
        m2 += d;
        m4 += d * d;
    }
    m2 /= n;
    m4 /= n;
    if m2 > 0.0 { m4 / (m2 * m2) } else { 0.0 }
}

/// The ISO 20816-3 machine group and support class are shared vocabulary (`spallcast-model`).
pub use spallcast_model::{MachineGroup, Support};

/// ISO 20816-3 evaluation zone.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Zone {
    /// Newly commissioned machines.
    A,
    /// Acceptable for unrestricted long-term operation.
    B,
    /// Unsatisfactory for long-term continuous operation.
    C,
    /// Severe enough to cause damage.
    D,
}

impl Zone {
    /// One-letter name.
    pub fn letter(self) -> &'static str {
        match self {
            Self::A => "A",
            Self::B => "B",
            Self::C => "C",
            Self::D => "D",
        }
    }
}

/// Velocity zone boundaries (A/B, B/C, C/D) in mm/s RMS: ISO 10816-3:2009 Tables A.1/A.2, reported
/// unchanged in ISO 20816-3:2022 (REFERENCES §2.3).
pub fn zone_boundaries_mm_s(group: MachineGroup, support: Support) -> [f64; 3] {
    match (group, support) {
        (MachineGroup::Large, Support::Rigid) | (MachineGroup::Medium, Support::Flexible) => {
            [2.3, 4.5, 7.1]
        }
        (MachineGroup::Large, Support::Flexible) => [3.5, 7.1, 11.0],
        (MachineGroup::Medium, Support::Rigid) => [1.4, 2.8, 4.5],
    }
}

/// Zone for a broadband velocity RMS (mm/s). A value equal to a boundary goes to the higher zone.
pub fn iso_zone(velocity_rms_mm_s: f64, group: MachineGroup, support: Support) -> Zone {
    let [ab, bc, cd] = zone_boundaries_mm_s(group, support);
    if velocity_rms_mm_s >= cd {
        Zone::D
    } else if velocity_rms_mm_s >= bc {
        Zone::C
    } else if velocity_rms_mm_s >= ab {
        Zone::B
    } else {
        Zone::A
    }
}

/// Frequency range (Hz) of the ISO broadband velocity: 10–1000 Hz, or 2–1000 Hz for machines running
/// at or below 600 r/min (REFERENCES §2.2).
pub fn iso_velocity_band_hz(shaft_hz: f64) -> (f64, f64) {
    if shaft_hz * 60.0 <= 600.0 {
        (2.0, 1000.0)
    } else {
        (10.0, 1000.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Best check value 12: ISO 10816-3:2009 / 20816-3:2022 Table A.2, group 2 rigid (1.4/2.8/4.5 mm/s).
    #[test]
    fn group2_rigid_zones() {
        let z = |v| iso_zone(v, MachineGroup::Medium, Support::Rigid);
        assert_eq!(z(1.0), Zone::A);
        assert_eq!(z(2.0), Zone::B);
        assert_eq!(z(3.5), Zone::C);
        assert_eq!(z(5.0), Zone::D);
        // Our convention: a value equal to a boundary goes to the higher zone.
        assert_eq!(z(1.4), Zone::B);
        assert_eq!(z(2.8), Zone::C);
        assert_eq!(z(4.5), Zone::D);
        assert_eq!(z(1.399_999), Zone::A);
    }

    // Best check value 13: Table A.1, group 1 flexible (3.5/7.1/11.0 mm/s).
    #[test]
    fn group1_flexible_zones() {
        let z = |v| iso_zone(v, MachineGroup::Large, Support::Flexible);
        assert_eq!(z(3.0), Zone::A);
        assert_eq!(z(8.0), Zone::C);
        assert_eq!(z(12.0), Zone::D);
        assert_eq!(z(11.0), Zone::D);
        assert_eq!(z(3.5), Zone::B);
    }

    // REFERENCES §2.3: the whole boundary table.
    #[test]
    #[allow(
        clippy::float_cmp,
        reason = "the table's literal values are returned unchanged"
    )]
    fn boundary_table() {
        assert_eq!(
            zone_boundaries_mm_s(MachineGroup::Large, Support::Rigid),
            [2.3, 4.5, 7.1]
        );
        assert_eq!(
            zone_boundaries_mm_s(MachineGroup::Large, Support::Flexible),
            [3.5, 7.1, 11.0]
        );
        assert_eq!(
            zone_boundaries_mm_s(MachineGroup::Medium, Support::Rigid),
            [1.4, 2.8, 4.5]
        );
        assert_eq!(
            zone_boundaries_mm_s(MachineGroup::Medium, Support::Flexible),
            [2.3, 4.5, 7.1]
        );
    }

    // Check 13, frequency range (REFERENCES §2.2): 2 Hz lower limit at or below 600 r/min.
    #[test]
    fn iso_band_depends_on_speed() {
        assert_eq!(iso_velocity_band_hz(10.0), (2.0, 1000.0));
        assert_eq!(iso_velocity_band_hz(25.0), (10.0, 1000.0));
    }

    // Analytic: a sine has crest factor √2 and kurtosis 1.5; a square wave kurtosis 1.
    #[test]
    fn moments_of_known_signals() {
        let n = 100_000;
        let s: Vec<f64> = (0..n)
            .map(|i| (std::f64::consts::TAU * i as f64 / 100.0).sin())
            .collect();
        assert!((crest_factor(&s) - std::f64::consts::SQRT_2).abs() < 1e-6);
        assert!((kurtosis(&s) - 1.5).abs() < 1e-6);
        assert!((rms(&s) - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-9);
        let q: Vec<f64> = (0..n)
            .map(|i| if i % 2 == 0 { 3.0 } else { -1.0 })
            .collect();
        assert!((kurtosis(&q) - 1.0).abs() < 1e-12);
        assert!(kurtosis(&[2.0; 10]).abs() < f64::EPSILON);
        assert!(crest_factor(&[]).abs() < f64::EPSILON);
    }

    // Analytic: the mean of a rectified sine is 2/π of its peak, so a sine's impulse factor is π/2
    // (the sampled sine, 100 points a period, is within 1e-3 of it); a ±1 square wave has 1; one unit
    // impulse among n samples has n.
    #[test]
    fn impulse_factor_of_known_signals() {
        let s: Vec<f64> = (0..100_000)
            .map(|i| (std::f64::consts::TAU * i as f64 / 100.0).sin())
            .collect();
        assert!((impulse_factor(&s) - std::f64::consts::FRAC_PI_2).abs() < 1e-3);
        let q: Vec<f64> = (0..1000)
            .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
            .collect();
        assert!((impulse_factor(&q) - 1.0).abs() < 1e-12);
        let mut one = vec![0.0; 500];
        one[17] = -2.0;
        assert!((impulse_factor(&one) - 500.0).abs() < 1e-9);
        assert!(impulse_factor(&[]).abs() < f64::EPSILON);
        assert!(impulse_factor(&[0.0; 8]).abs() < f64::EPSILON);
    }
}
