//! Unit constants and conversions used across the workspace.
//!
//! Acceleration is carried in g (standard gravity), frequencies in Hz, shaft speeds in Hz inside the
//! computation and in r/min at the edges (plant file, display).

/// Standard gravity, m/s² (CGPM 1901; ISO 80000-3). One g of acceleration.
pub const STANDARD_GRAVITY_M_S2: f64 = 9.806_65;

/// Millimetres per inch: exactly 25.4 by the international yard and pound agreement of 1959 (NIST SP 811,
/// appendix B).
pub const MM_PER_INCH: f64 = 25.4;

/// Shaft speed in r/min to Hz.
pub fn rpm_to_hz(rpm: f64) -> f64 {
    rpm / 60.0
}

/// Shaft speed in Hz to r/min.
pub fn hz_to_rpm(hz: f64) -> f64 {
    hz * 60.0
}

/// Acceleration in m/s² to g.
pub fn m_s2_to_g(a_m_s2: f64) -> f64 {
    a_m_s2 / STANDARD_GRAVITY_M_S2
}

/// Acceleration in g to m/s².
pub fn g_to_m_s2(a_g: f64) -> f64 {
    a_g * STANDARD_GRAVITY_M_S2
}

/// The UTC calendar day of a time in seconds on the Unix axis; `None` when not finite or out of range.
pub fn date_of_unix_s(t_s: f64) -> Option<chrono::NaiveDate> {
    if !t_s.is_finite() {
        return None;
    }
    chrono::DateTime::from_timestamp(t_s.floor() as i64, 0).map(|t| t.date_naive())
}

/// Midnight UTC of a calendar day, seconds on the Unix axis.
pub fn unix_s_of_date(day: chrono::NaiveDate) -> f64 {
    day.and_hms_opt(0, 0, 0)
        .map_or(0.0, |t| t.and_utc().timestamp() as f64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn speeds_and_gravity() {
        // 1 Hz is 60 r/min by definition of the minute; 1 g = 9.80665 m/s² (CGPM 1901).
        assert!((rpm_to_hz(1800.0) - 30.0).abs() < 1e-12);
        assert!((hz_to_rpm(24.6) - 1476.0).abs() < 1e-9);
        assert!((g_to_m_s2(2.0) - 19.6133).abs() < 1e-12);
        assert!((m_s2_to_g(9.80665) - 1.0).abs() < 1e-15);
    }

    #[test]
    fn unix_days() {
        // 1_780_000_000 s after 1970-01-01T00:00Z is 2026-05-28T20:26:40Z (Unix time, by definition).
        let day = date_of_unix_s(1_780_000_000.0).unwrap();
        assert_eq!(day.to_string(), "2026-05-28");
        assert_eq!(date_of_unix_s(unix_s_of_date(day)), Some(day));
        assert!((unix_s_of_date(day) % 86_400.0).abs() < 1e-9);
        assert!(date_of_unix_s(f64::NAN).is_none());
    }
}
