//! Peak search at fault frequencies, their harmonics and sidebands, scored against the local noise floor.
//!
//! For one fault family the search slides a harmonic comb `h·f0·ρ` (h = 1..H) over the slip range
//! `ρ ∈ [1 − tol, 1 + tol]` (REFERENCES §1.1: ±2 %) and keeps the ρ whose harmonics stand highest above
//! their local floors, so all harmonics share one slip. Each harmonic's floor is the median of the
//! lines around it. Harmonics that coincide with a shaft-speed harmonic are not counted, so that
//! machine lines (1x, 2x, ...) are not mistaken for defect tones.

use serde::{Deserialize, Serialize};

use crate::spectrum::Spectrum;

/// Parameters of a family search.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SearchParams {
    /// Relative speed (slip) tolerance, e.g. 0.02 for ±2 %.
    pub tolerance: f64,
    /// Largest harmonic searched.
    pub max_harmonics: u32,
    /// A line counts as present when it stands at least this many dB over its floor.
    pub line_db: f64,
}

impl Default for SearchParams {
    fn default() -> Self {
        Self {
            tolerance: 0.02,
            max_harmonics: 5,
            line_db: 10.0,
        }
    }
}

/// How strongly one fault family shows in a spectrum.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FamilyScore {
    /// Mean of the two strongest of the first three harmonics' levels over their local floors, dB.
    pub score_db: f64,
    /// Harmonics (of 1..H) standing at least `line_db` over their floor.
    pub harmonics: u32,
    /// Sidebands (±1 spacing around present harmonics) standing at least `line_db` over the floor.
    pub sidebands: u32,
    /// Fundamental frequency matched by the comb (nominal × slip), Hz.
    pub matched_hz: f64,
    /// Level of each harmonic over its floor, dB (0 where masked by a shaft harmonic).
    pub harmonic_db: Vec<f64>,
    /// Median floor around the fundamental, in the spectrum's units.
    pub floor: f64,
}

fn median(v: &mut [f64]) -> f64 {
    if v.is_empty() {
        return 0.0;
    }
    let mid = v.len() / 2;
    let (_, m, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
    *m
}

/// Largest value and its index within `±half` lines of `centre`.
fn local_max(values: &[f64], centre: f64, half: usize) -> Option<(usize, f64)> {
    let c = centre.round();
    if !(c.is_finite() && c >= 0.0) {
        return None;
    }
    let c = c as usize;
    let lo = c.saturating_sub(half);
    let hi = (c + half).min(values.len().checked_sub(1)?);
    (lo..=hi)
        .filter_map(|i| values.get(i).map(|&v| (i, v)))
        .max_by(|a, b| a.1.total_cmp(&b.1))
}

/// The highest frequency (Hz) that [`score_family`] reads in a spectrum of line step `df_hz` for a
/// family at `f0_hz` with sidebands at `sideband_hz`: the top harmonic at the top of the slip range,
/// plus the wider of its floor window and its sidebands, plus a few lines of search. A spectrum cut
/// above this gives the same score as the whole spectrum.
pub fn family_reach_hz(f0_hz: f64, sideband_hz: Option<f64>, df_hz: f64, p: &SearchParams) -> f64 {
    let half_w = (0.15 * f0_hz).max(25.0 * df_hz);
    let side = sideband_hz.unwrap_or(0.0).max(0.0);
    f64::from(p.max_harmonics) * f0_hz * (1.0 + p.tolerance) + half_w.max(side) + 4.0 * df_hz
}

/// Scores one fault family with fundamental `f0_hz` in an amplitude spectrum. `sideband_hz` is the
/// expected modulation spacing; `shaft_hz` masks coinciding shaft harmonics. `None` when not even the
/// fundamental fits in the spectrum.
pub fn score_family(
    spec: &Spectrum,
    f0_hz: f64,
    sideband_hz: Option<f64>,
    shaft_hz: f64,
    p: &SearchParams,
) -> Option<FamilyScore> {
    let df = spec.freq_step_hz;
    let v = &spec.values;
    if !(df > 0.0 && f0_hz > 0.0) || v.len() < 8 {
        return None;
    }
    let top_hz = (v.len() - 2) as f64 * df;
    let h_max = ((top_hz / (f0_hz * (1.0 + p.tolerance))).floor() as u32).min(p.max_harmonics);
    if h_max == 0 {
        return None;
    }
    // Local floors: median of the lines around each nominal harmonic.
    let half_w = (0.15 * f0_hz).max(25.0 * df);
    let floors: Vec<f64> = (1..=h_max)
        .map(|h| {
            let c = f64::from(h) * f0_hz;
            let lo = ((c * (1.0 - p.tolerance) - half_w) / df).max(1.0) as usize;
            let hi = (((c * (1.0 + p.tolerance) + half_w) / df) as usize).min(v.len() - 1);
            let mut w = v.get(lo..=hi).map(<[f64]>::to_vec).unwrap_or_default();
            median(&mut w).max(f64::MIN_POSITIVE)
        })
        .collect();
    let masked = |f: f64| {
        if shaft_hz <= 0.0 {
            return false;
        }
        let k = (f / shaft_hz).round();
        k >= 1.0 && (f - k * shaft_hz).abs() <= (2.0 * df).max(0.001 * f)
    };
    // The level (dB over the harmonic's floor) of the strongest line next to line `centre`, and the
    // frequency of that line (`f` where there is none).
    let level_at = |h: u32, centre: f64, f: f64| -> (f64, f64) {
        let Some((i, peak)) = local_max(v, centre, 1) else {
            return (0.0, f);
        };
        let fi = i as f64 * df;
        if masked(fi) {
            return (0.0, fi);
        }
        let floor = floors
            .get(h as usize - 1)
            .copied()
            .unwrap_or(f64::MIN_POSITIVE);
        (20.0 * (peak.max(f64::MIN_POSITIVE) / floor).log10(), fi)
    };
    let level_db = |h: u32, rho: f64| -> (f64, f64) {
        let f = f64::from(h) * f0_hz * rho;
        level_at(h, f / df, f)
    };
    let step = (df / (f64::from(h_max) * f0_hz)).max(1e-6);
    let steps = (2.0 * p.tolerance / step).ceil() as usize;
    let rho_at = |s: usize| 1.0 - p.tolerance + s as f64 * step;
    // Many slip steps land on the same line, so each harmonic's level is worked out once per line it
    // can reach (the same arithmetic as `level_db`, so the search's sums are unchanged).
    let tables: Vec<(f64, Vec<f64>)> = (1..=h_max)
        .map(|h| {
            let line = |rho: f64| (f64::from(h) * f0_hz * rho / df).round();
            let (a, b) = (line(rho_at(0)), line(rho_at(steps)));
            if !(a.is_finite() && b.is_finite() && a >= 0.0 && b >= a && b - a < 1e6) {
                return (0.0, Vec::new());
            }
            let levels = (0..=(b - a) as usize)
                .map(|j| {
                    let c = a + j as f64;
                    level_at(h, c, c * df).0.max(0.0)
                })
                .collect();
            (a, levels)
        })
        .collect();
    let mut best = (f64::NEG_INFINITY, 1.0);
    for s in 0..=steps {
        let rho = rho_at(s);
        let total: f64 = (1..=h_max)
            .map(|h| {
                let f = f64::from(h) * f0_hz * rho;
                let c = (f / df).round();
                tables
                    .get(h as usize - 1)
                    .and_then(|(a, t)| {
                        let j = c - a;
                        (j >= 0.0).then(|| t.get(j as usize)).flatten().copied()
                    })
                    .unwrap_or_else(|| level_db(h, rho).0.max(0.0))
            })
            .sum();
        if total > best.0 {
            best = (total, rho);
        }
    }
    let rho = best.1;
    let harmonic_db: Vec<f64> = (1..=h_max).map(|h| level_db(h, rho).0).collect();
    let harmonics = harmonic_db.iter().filter(|&&d| d >= p.line_db).count() as u32;
    // Mean of the two strongest of the first three harmonics: one line shared with another family's
    // harmonic cannot carry the score alone.
    let mut first: Vec<f64> = harmonic_db.iter().take(3).copied().collect();
    first.sort_by(|a, b| b.total_cmp(a));
    let score_db = match first.as_slice() {
        [a, b, ..] => 0.5 * (a + b),
        [a] => *a,
        [] => 0.0,
    };
    let mut sidebands = 0;
    if let Some(sb) = sideband_hz.filter(|s| *s > 2.0 * df) {
        for (h, &d) in (1..=h_max).zip(&harmonic_db) {
            if d < p.line_db {
                continue;
            }
            let (_, fc) = level_db(h, rho);
            let floor = floors
                .get(h as usize - 1)
                .copied()
                .unwrap_or(f64::MIN_POSITIVE);
            for side in [fc - sb, fc + sb] {
                if local_max(v, side / df, 2)
                    .is_some_and(|(_, peak)| 20.0 * (peak / floor).log10() >= p.line_db)
                {
                    sidebands += 1;
                }
            }
        }
    }
    Some(FamilyScore {
        score_db,
        harmonics,
        sidebands,
        matched_hz: f0_hz * rho,
        harmonic_db,
        floor: floors.first().copied().unwrap_or(0.0),
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spectrum::{Detector, Quantity, SpectrumUnits};
    use crate::testutil::Gauss;

    fn noise_spectrum(n: usize, df: f64, seed: u64) -> Spectrum {
        let mut g = Gauss::new(seed);
        let values = (0..n).map(|_| g.next().hypot(g.next())).collect();
        Spectrum {
            freq_step_hz: df,
            values,
            units: SpectrumUnits {
                quantity: Quantity::SquaredEnvelopeG2,
                detector: Detector::Peak,
            },
        }
    }

    // Synthetic comb 1.5 % off nominal (within the ±2 % slip of REFERENCES §1.1) is found with its harmonics
    // and ±1x sidebands; a pure-noise spectrum does not produce a comb.
    #[test]
    fn finds_slipped_comb_with_sidebands() {
        let df = 0.1;
        let mut s = noise_spectrum(20_000, df, 3);
        let f0 = 160.0 * 0.985;
        for h in 1..=4 {
            let c = (f64::from(h) * f0 / df).round() as usize;
            s.values[c] = 30.0;
            s.values[c - 300] = 8.0;
            s.values[c + 300] = 8.0;
        }
        let r = score_family(&s, 160.0, Some(30.0), 29.0, &SearchParams::default()).unwrap();
        assert!((r.matched_hz - f0).abs() < 0.2, "{}", r.matched_hz);
        assert_eq!(r.harmonics, 4);
        assert_eq!(r.sidebands, 8);
        assert!(r.score_db > 20.0);
        let quiet = noise_spectrum(20_000, df, 4);
        let q = score_family(&quiet, 160.0, Some(30.0), 29.0, &SearchParams::default()).unwrap();
        assert!(q.score_db < 14.0 && q.harmonics <= 2, "{q:?}");
    }

    // Lines at exact shaft harmonics are masked (common practice, no source: 1x harmonics are machine lines).
    #[test]
    fn shaft_harmonics_are_masked() {
        let df = 0.1;
        let mut s = noise_spectrum(5000, df, 5);
        for k in 1..=15 {
            s.values[(f64::from(k) * 25.0 / df).round() as usize] = 50.0;
        }
        // A "fault" at exactly 3.0 orders sits on shaft harmonics and must not score.
        let r = score_family(&s, 75.0, None, 25.0, &SearchParams::default()).unwrap();
        assert!(r.score_db < 10.0, "{r:?}");
        assert!(r.harmonics <= 1, "{r:?}");
        assert!(r.harmonic_db.iter().all(|&d| d < 20.0), "{r:?}");
    }

    #[test]
    fn none_when_fundamental_out_of_range() {
        let s = noise_spectrum(100, 1.0, 1);
        assert!(score_family(&s, 500.0, None, 25.0, &SearchParams::default()).is_none());
    }
}
