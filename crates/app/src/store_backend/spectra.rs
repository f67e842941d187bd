//! A reading's acceleration, velocity and envelope spectra, computed by the analysis crate for the
//! window's plots.

use anyhow::Context as _;
use spallcast_analysis::{FaultFrequencies, SpectrumEngine};

use crate::model::{ReadingSpectra, Spectrum, Waveform};

/// Acceleration, velocity and envelope spectra of one waveform, with the analysis crate's plot settings.
pub fn compute_spectra(
    engine: &mut SpectrumEngine,
    waveform: &Waveform,
) -> anyhow::Result<ReadingSpectra> {
    let samples: Vec<f64> = waveform.samples_g.iter().map(|&v| f64::from(v)).collect();
    let fs = waveform.sample_rate_hz;
    let shaft_hz = waveform.shaft_hz;
    let id = waveform.reading_id;
    let accel = spallcast_analysis::acceleration_spectrum(
        engine,
        &samples,
        fs,
        shaft_hz,
        spallcast_analysis::AccelUnit::default(),
    )
    .with_context(|| format!("acceleration spectrum of reading {id}"))?;
    let velocity = spallcast_analysis::velocity_spectrum(
        engine,
        &samples,
        fs,
        shaft_hz,
        spallcast_analysis::VelocityUnit::default(),
    )
    .with_context(|| format!("velocity spectrum of reading {id}"))?;
    // Without fault factors the kurtogram has no defect rate to size its band by: use a wide fixed band
    // in the upper part of the recording instead.
    let (freqs, band) = match waveform.factors {
        Some(f) => (f.at_shaft_hz(shaft_hz), None),
        None => (
            FaultFrequencies {
                shaft_hz,
                ftf: shaft_hz,
                bsf: shaft_hz,
                bpfo: shaft_hz,
                bpfi: shaft_hz,
            },
            Some((0.1 * fs, 0.4 * fs)),
        ),
    };
    let (envelope, band_used) =
        spallcast_analysis::envelope_spectrum(engine, &samples, fs, &freqs, band, false)
            .with_context(|| format!("envelope spectrum of reading {id}"))?;
    let convert = |s: &spallcast_analysis::Spectrum| Spectrum {
        df_hz: s.freq_step_hz,
        amplitude: s.values.iter().map(|&v| v as f32).collect(),
    };
    Ok(ReadingSpectra {
        reading_id: id,
        shaft_hz,
        acceleration: convert(&accel),
        velocity: convert(&velocity),
        envelope: convert(&envelope),
        envelope_band_hz: Some((band_used[0], band_used[1])),
    })
}
