//! Content checks on a recording that has been read.

use std::path::Path;

use crate::{FormatError, Problem, Recording};

/// Lowest sample rate [`validate`] accepts, in Hz.
pub const MIN_SAMPLE_RATE_HZ: f64 = 100.0;
/// Highest sample rate [`validate`] accepts, in Hz.
pub const MAX_SAMPLE_RATE_HZ: f64 = 1_000_000.0;
/// Fewest samples per channel [`validate`] accepts (one short spectrum's worth).
pub const MIN_SAMPLES: usize = 256;

/// Checks that a recording can be analysed.
///
/// Rejects, in this order: no channels or no samples ([`Problem::Empty`]); channels of different
/// lengths; a sample rate outside [`MIN_SAMPLE_RATE_HZ`]..=[`MAX_SAMPLE_RATE_HZ`] (NaN included);
/// fewer than [`MIN_SAMPLES`] samples per channel; any NaN or infinite sample. Clipping is not a
/// rejection: see [`clipping_fraction`]. `path` names the source file in the error.
pub fn validate(rec: &Recording, path: &Path) -> Result<(), FormatError> {
    check(rec).map_err(|problem| FormatError::Invalid {
        path: path.to_owned(),
        problem,
    })
}

fn check(rec: &Recording) -> Result<(), Problem> {
    let expected = rec.samples_per_channel();
    if expected == 0 {
        return Err(Problem::Empty);
    }
    for (i, ch) in rec.channels.iter().enumerate() {
        if ch.len() != expected {
            return Err(Problem::RaggedChannels {
                channel: i + 1,
                len: ch.len(),
                expected,
            });
        }
    }
    if !(MIN_SAMPLE_RATE_HZ..=MAX_SAMPLE_RATE_HZ).contains(&rec.sample_rate_hz) {
        return Err(Problem::SampleRate {
            sample_rate_hz: rec.sample_rate_hz,
            min_hz: MIN_SAMPLE_RATE_HZ,
            max_hz: MAX_SAMPLE_RATE_HZ,
        });
    }
    if expected < MIN_SAMPLES {
        return Err(Problem::TooShort {
            samples: expected,
            min: MIN_SAMPLES,
        });
    }
    for (i, ch) in rec.channels.iter().enumerate() {
        if let Some(index) = ch.iter().position(|s| !s.is_finite()) {
            return Err(Problem::NonFinite {
                channel: i + 1,
                index,
            });
        }
    }
    Ok(())
}

/// Fraction (0.0..=1.0) of one channel's samples that sit on a clipping plateau.
///
/// A plateau is a run of at least 3 consecutive samples that are all exactly equal to the channel's
/// largest magnitude (either sign), as a saturated sensor or converter produces. A clean signal
/// returns 0.0; an empty channel, or one that is all zero, returns 0.0. Non-finite samples are ignored
/// when finding the largest magnitude. What fraction counts as "suspect" is the caller's choice;
/// 1 % or more is a common flag (common practice, no source).
#[allow(
    clippy::float_cmp,
    reason = "a clipping plateau is a run of bit-identical converter values"
)]
pub fn clipping_fraction(samples: &[f32]) -> f64 {
    const MIN_RUN: usize = 3;
    let peak = samples
        .iter()
        .filter(|s| s.is_finite())
        .fold(0.0_f32, |m, s| m.max(s.abs()));
    if samples.is_empty() || peak == 0.0 {
        return 0.0;
    }
    let mut clipped = 0usize;
    let mut run = 0usize;
    let mut run_value = 0.0_f32;
    for &s in samples {
        let at_peak = s.abs() == peak;
        if at_peak && run > 0 && s == run_value {
            run += 1;
        } else {
            if run >= MIN_RUN {
                clipped += run;
            }
            run = usize::from(at_peak);
            run_value = s;
        }
    }
    if run >= MIN_RUN {
        clipped += run;
    }
    clipped as f64 / samples.len() as f64
}
