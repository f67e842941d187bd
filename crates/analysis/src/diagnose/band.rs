//! Demodulation-band selection that targets the bearing's cyclic content.
//!
//! The fast kurtogram (Antoni 2007, REFERENCES §4.2) only proposes bands: maximum kurtosis follows any
//! impulsiveness, single knocks included (REFERENCES §4.2, "known weakness"). The band used is the
//! candidate whose (limited) squared envelope spectrum shows a fault family most strongly: the largest
//! harmonic-to-background score of BPFO, BPFI, 2×BSF or FTF (the periodicity cross-check REFERENCES
//! §4.2 suggests). Candidates: the kurtogram's three most impulsive cells, the kurtogram's 1/8- and
//! 1/16-of-the-rate cells (a grid over the whole range, so a bearing resonance anywhere is covered), a
//! fixed 1.5–10 kHz band and the same band scaled to the sample rate. A band whose kurtosis comes from a
//! few isolated knocks shows no periodic family and loses.
//!
//! When strong shaft-synchronous lines (gear mesh on the shaft and its 1x sidebands) hold a share of the
//! power above the defect region ([`TONAL_FRACTION`]), the discrete lines are removed first by a
//! frequency-domain discrete/random separation ([`PreparedSignal::remove_discrete_lines`]; the idea of
//! REFERENCES §4.3's DRS): every strong sharp line goes, synchronous or not, since a real bearing
//! defect slips and stays in the random part. Cepstral pre-whitening stays available on request.

use serde::{Deserialize, Serialize};

use super::locate::same_lines;
use super::rules::{ENVELOPE_CAP_MEDIANS, LINE_FACTOR, PRESENT_DB, TONAL_FRACTION};
use crate::AnalysisError;
use crate::envelope::{
    KurtogramLimits, PreparedSignal, fast_kurtogram, limited_squared_envelope_spectrum,
    ranking_envelope_spectrum,
};
use crate::findings::{SearchParams, family_reach_hz, score_family};
use crate::kinematics::{FaultFrequencies, FaultKind};
use crate::spectrum::{PowerSpectrum, Spectrum, SpectrumEngine};
use crate::stage::rules::HIGH_BAND_MIN_HZ;

/// How the demodulation band was chosen, for the JSON document and the report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct BandChoice {
    /// Band, Hz.
    pub band_hz: [f64; 2],
    /// Which candidate it was: "kurtogram", "grid", "fixed wide", "scaled wide" or "user".
    pub source: String,
    /// Spectral kurtosis of the band's complex envelope (0 when not from the kurtogram tree).
    pub sk: f64,
    /// Fault family that scored best in it.
    pub family: String,
    /// That family's envelope score, dB.
    pub family_score_db: f64,
    /// Candidate bands compared.
    pub candidates: usize,
    /// Share of the power above the defect region in discrete lines (0–1).
    pub tonal_fraction: f64,
    /// Whether the record was cepstrally pre-whitened (on request).
    pub prewhitened: bool,
    /// Whether strong discrete lines were removed first (automatic, see [`TONAL_FRACTION`]).
    pub lines_removed: bool,
    /// Other candidate bands in which the same family is the strongest and present (the outer race and
    /// the rolling elements count as one family when their combs coincide, see
    /// [`COMB_OVERLAP`](super::rules::COMB_OVERLAP)).
    pub corroborating_bands: usize,
    /// Other candidate bands in which some family is present (the strongest scores at least
    /// [`PRESENT_DB`](super::rules::PRESENT_DB)): the denominator of the corroboration share; 0 in
    /// documents written before it existed.
    #[serde(default)]
    pub present_bands: usize,
    /// The named family's strongest score, dB, among the candidate bands lying wholly below the
    /// ultrasonic band (upper edge at most [`HIGH_BAND_MIN_HZ`]): whether the defect rings the
    /// bearing's structural resonances (stage 2) or shows only in the ultrasonic range (stage 1).
    /// `None` when no candidate lies below it, and in documents written before it existed.
    #[serde(default)]
    pub below_ultrasonic_db: Option<f64>,
    /// Plain-language reason.
    pub reason: String,
}

/// Kurtogram limits for a bearing: bands at least 3.5 × the highest defect rate wide, lower edge at
/// least 3 × that rate (several harmonics fit, and the band stays above the defect-tone region).
pub(crate) fn default_kurtogram_limits(freqs: &FaultFrequencies) -> KurtogramLimits {
    let max_rate = freqs
        .bpfo
        .max(freqs.bpfi)
        .max(2.0 * freqs.bsf)
        .max(freqs.ftf);
    KurtogramLimits {
        max_level: 6,
        min_bandwidth_hz: 3.5 * max_rate,
        min_lower_edge_hz: 3.0 * max_rate,
    }
}

/// Share of the PSD's power from `lo_hz` to 0.45·fs held in shaft-synchronous lines (within max(2 lines,
/// 0.02 %) of a 1x harmonic) at least 10 dB over the median of the lines around them (their excess over
/// that median is what is counted).
pub(crate) fn tonal_fraction(psd: &PowerSpectrum, lo_hz: f64, fs: f64, shaft_hz: f64) -> f64 {
    let df = psd.freq_step_hz;
    let v = &psd.values;
    if df.is_nan() || df <= 0.0 || v.len() < 80 {
        return 0.0;
    }
    let k_lo = ((lo_hz / df).ceil() as usize).max(1);
    let k_hi = (((0.45 * fs) / df) as usize).min(v.len() - 1);
    if k_hi <= k_lo + 64 {
        return 0.0;
    }
    let half = 32;
    let (mut total, mut tonal) = (0.0, 0.0);
    let mut win = Vec::with_capacity(2 * half + 1);
    // Median of a decimated neighbourhood (every 4th line) keeps this cheap.
    for k in k_lo..=k_hi {
        let p = v[k];
        total += p;
        let f = k as f64 * df;
        let h = (f / shaft_hz).round();
        let synchronous =
            shaft_hz > 0.0 && h >= 1.0 && (f - h * shaft_hz).abs() <= (2.0 * df).max(2e-4 * f);
        // The neighbourhood median only matters for a line that is shaft-synchronous.
        if !synchronous {
            continue;
        }
        win.clear();
        let a = k.saturating_sub(half);
        let b = (k + half).min(v.len() - 1);
        win.extend((a..=b).step_by(4).map(|i| v[i]));
        let mid = win.len() / 2;
        let (_, med, _) = win.select_nth_unstable_by(mid, f64::total_cmp);
        let med = *med;
        if p > 10.0 * med {
            tonal += p - med;
        }
    }
    if total > 0.0 { tonal / total } else { 0.0 }
}

/// Each family's score in an envelope spectrum, dB, in [`FaultKind::ALL`] order (−∞ where it
/// cannot be scored).
fn family_scores(ses: &Spectrum, freqs: &FaultFrequencies, search: &SearchParams) -> [f64; 4] {
    FaultKind::ALL.map(|k| {
        score_family(
            ses,
            freqs.defect_rate_hz(k),
            freqs.sideband_spacing_hz(k),
            freqs.shaft_hz,
            search,
        )
        .map_or(f64::NEG_INFINITY, |s| s.score_db)
    })
}

/// The best of [`family_scores`]: (kind, score dB).
fn best_of(scores: &[f64; 4]) -> (FaultKind, f64) {
    FaultKind::ALL
        .iter()
        .zip(scores)
        .filter(|(_, s)| s.is_finite())
        .map(|(&k, &s)| (k, s))
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .unwrap_or((FaultKind::OuterRace, 0.0))
}

/// Best family score in an envelope spectrum: (kind, score dB).
pub(crate) fn best_family(
    ses: &Spectrum,
    freqs: &FaultFrequencies,
    search: &SearchParams,
) -> (FaultKind, f64) {
    best_of(&family_scores(ses, freqs, search))
}

/// The highest frequency any family's score reads in an envelope spectrum of line step `df_hz`.
fn scoring_reach_hz(freqs: &FaultFrequencies, df_hz: f64, search: &SearchParams) -> f64 {
    FaultKind::ALL
        .iter()
        .map(|&k| {
            family_reach_hz(
                freqs.defect_rate_hz(k),
                freqs.sideband_spacing_hz(k),
                df_hz,
                search,
            )
        })
        .fold(0.0, f64::max)
}

/// The strongest score of `kind` (or of a family whose comb it shares) among the candidate bands
/// lying wholly below the ultrasonic range (upper edge at most [`HIGH_BAND_MIN_HZ`]).
fn below_ultrasonic(
    cands: &[([f64; 2], &'static str, f64)],
    band_scores: &[[f64; 4]],
    kind: FaultKind,
    freqs: &FaultFrequencies,
) -> Option<f64> {
    cands
        .iter()
        .zip(band_scores)
        .filter(|((b, _, _), _)| b[1] <= HIGH_BAND_MIN_HZ.value)
        .flat_map(|(_, sc)| {
            FaultKind::ALL
                .iter()
                .zip(sc)
                .filter(|(k, _)| {
                    same_lines(
                        **k,
                        freqs.defect_rate_hz(**k),
                        kind,
                        freqs.defect_rate_hz(kind),
                    )
                })
                .map(|(_, s)| *s)
        })
        .filter(|s| s.is_finite())
        .reduce(f64::max)
}

/// Chooses the demodulation band (see the module notes). Returns the choice, the prepared signal and
/// the limited squared envelope spectrum of the chosen band.
///
/// # Errors
/// When no candidate band fits the sample rate.
pub(crate) fn choose_band(
    engine: &mut SpectrumEngine,
    centred: &[f64],
    fs: f64,
    freqs: &FaultFrequencies,
    psd: &PowerSpectrum,
    search: &SearchParams,
    force_prewhiten: bool,
) -> Result<(BandChoice, PreparedSignal, Spectrum), AnalysisError> {
    let limits = default_kurtogram_limits(freqs);
    let tonal = tonal_fraction(psd, limits.min_lower_edge_hz, fs, freqs.shaft_hz);

    let mut sig = PreparedSignal::new(engine, centred, fs, force_prewhiten)?;
    let separate = !force_prewhiten && tonal >= TONAL_FRACTION.value;
    let removed = if separate {
        sig.remove_discrete_lines(LINE_FACTOR.value, None)
    } else {
        0.0
    };
    let kg = fast_kurtogram(engine, &sig, &limits)?;
    let mut by_sk = kg.cells.clone();
    by_sk.sort_by(|a, b| b.sk.total_cmp(&a.sk));
    let mut cands: Vec<([f64; 2], &'static str, f64)> = by_sk
        .iter()
        .take(3)
        .map(|c| ([c.lo_hz, c.hi_hz], "kurtogram", c.sk))
        .collect();
    for c in kg
        .cells
        .iter()
        .filter(|c| (c.level - 2.0).abs() < 1e-9 || (c.level - 3.0).abs() < 1e-9)
    {
        cands.push(([c.lo_hz, c.hi_hz], "grid", c.sk));
    }
    let top = 0.45 * fs;
    for (band, src) in [
        ([1500.0, 10_000.0_f64.min(top)], "fixed wide"),
        (
            [fs * 1500.0 / 25_600.0, fs * 10_000.0 / 25_600.0],
            "scaled wide",
        ),
    ] {
        let lo = band[0].max(limits.min_lower_edge_hz);
        if band[1] - lo >= limits.min_bandwidth_hz {
            cands.push(([lo, band[1]], src, 0.0));
        }
    }
    cands.dedup_by(|a, b| (a.0[0] - b.0[0]).abs() < 1e-6 && (a.0[1] - b.0[1]).abs() < 1e-6);
    let cap = Some(ENVELOPE_CAP_MEDIANS.value);
    // Candidates are ranked on a single-precision envelope spectrum cut where the family scores stop
    // reading; a band listed twice (a kurtogram cell that is also a grid cell) is scored once.
    let reach = scoring_reach_hz(freqs, sig.freq_step_hz(), search);
    let mut best: Option<(usize, FaultKind, f64)> = None;
    let mut per_band: Vec<(FaultKind, f64)> = Vec::with_capacity(cands.len());
    let mut band_scores: Vec<[f64; 4]> = Vec::with_capacity(cands.len());
    for (i, (band, _, _)) in cands.iter().enumerate() {
        let seen = cands[..i]
            .iter()
            .position(|(b, _, _)| (b[0] - band[0]).abs() < 1e-6 && (b[1] - band[1]).abs() < 1e-6)
            .and_then(|j| band_scores.get(j).copied());
        let scores = match seen {
            Some(s) => s,
            None => ranking_envelope_spectrum(engine, &sig, band[0], band[1], cap, reach)
                .ok()
                .map_or([f64::NEG_INFINITY; 4], |ses| {
                    family_scores(&ses, freqs, search)
                }),
        };
        band_scores.push(scores);
        let Some((kind, score)) = scores
            .iter()
            .any(|s| s.is_finite())
            .then(|| best_of(&scores))
        else {
            per_band.push((FaultKind::OuterRace, f64::NEG_INFINITY));
            continue;
        };
        per_band.push((kind, score));
        if best.as_ref().is_none_or(|b| score > b.2) {
            best = Some((i, kind, score));
        }
    }
    // The chosen band's spectrum, family and score in double precision, as reported and used.
    let best = match best {
        Some((i, _, _)) => {
            let band = cands[i].0;
            let ses = limited_squared_envelope_spectrum(engine, &sig, band[0], band[1], cap)?;
            let (kind, score) = best_family(&ses, freqs, search);
            Some((i, kind, score, ses))
        }
        None => None,
    };
    let Some((i, kind, score, ses)) = best else {
        return Err(AnalysisError::BadBand {
            lo_hz: limits.min_lower_edge_hz,
            hi_hz: top,
            reason: "no candidate demodulation band fits the sample rate".to_owned(),
        });
    };
    let (band, source, sk) = cands[i];
    let corroborating = per_band
        .iter()
        .enumerate()
        .filter(|(j, (k, sc))| {
            *j != i
                && same_lines(
                    *k,
                    freqs.defect_rate_hz(*k),
                    kind,
                    freqs.defect_rate_hz(kind),
                )
                && *sc >= PRESENT_DB.value
        })
        .count();
    let present_bands = per_band
        .iter()
        .enumerate()
        .filter(|(j, (_, sc))| *j != i && *sc >= PRESENT_DB.value)
        .count();
    let below_ultrasonic_db = below_ultrasonic(&cands, &band_scores, kind, freqs);
    let reason = format!(
        "of {} candidate bands (the kurtogram's 3 most impulsive, a grid of 1/8- and 1/16-rate cells, \
         1.5-10 kHz and that band scaled to the sample rate), this one shows a fault family most \
         strongly in its envelope: {} at {:.1} dB over background{}",
        cands.len(),
        kind.label(),
        score,
        if separate {
            format!(
                "; discrete lines removed first (they held {:.0} % of the power above {:.0} Hz; {:.0} % of the record's power removed)",
                100.0 * tonal,
                limits.min_lower_edge_hz,
                100.0 * removed
            )
        } else if force_prewhiten {
            "; cepstrally pre-whitened as asked".to_owned()
        } else {
            String::new()
        }
    );
    Ok((
        BandChoice {
            band_hz: band,
            source: source.to_owned(),
            sk,
            family: kind.label().to_owned(),
            family_score_db: score,
            candidates: cands.len(),
            tonal_fraction: tonal,
            prewhitened: force_prewhiten,
            lines_removed: separate,
            corroborating_bands: corroborating,
            present_bands,
            below_ultrasonic_db,
            reason,
        },
        sig,
        ses,
    ))
}
