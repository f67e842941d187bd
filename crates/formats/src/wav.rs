//! WAV (RIFF/WAVE) reading and writing through `hound`.

use std::path::Path;

use hound::{SampleFormat, WavReader, WavSpec, WavWriter};

use crate::{FormatError, Recording};

fn wav_err(path: &Path, detail: impl Into<String>) -> FormatError {
    FormatError::Wav {
        path: path.to_owned(),
        detail: detail.into(),
    }
}

fn hound_err(path: &Path, err: &hound::Error) -> FormatError {
    match err {
        hound::Error::IoError(e) => wav_err(
            path,
            format!("the file ends before the samples its header announces (truncated; {e})"),
        ),
        hound::Error::Unsupported => wav_err(
            path,
            "unsupported encoding (only integer PCM 8/16/24/32-bit and 32-bit float are read)",
        ),
        other => wav_err(path, other.to_string()),
    }
}

/// Reads a WAV file: integer PCM of 8, 16, 24 or 32 bits, or 32-bit IEEE float, any channel count.
///
/// Integer samples are scaled to ±1.0 full scale (divided by 2^(bits−1)); float samples are returned as
/// stored. Interleaved channels are split into [`Recording::channels`]. A file shorter than its header
/// claims is an error; the claimed length is checked against the file size before allocating.
/// A zero sample rate in the header is an error. An empty data chunk gives a recording with no
/// samples (which [`crate::validate`] rejects).
pub fn read_wav(path: &Path) -> Result<Recording, FormatError> {
    let io_err = |source| FormatError::Io {
        path: path.to_owned(),
        source,
    };
    let file = std::fs::File::open(path).map_err(io_err)?;
    let file_len = file.metadata().map_err(io_err)?.len();
    // The file is open: from here on, a failed read means the content is short or malformed.
    let mut reader = WavReader::new(std::io::BufReader::new(file)).map_err(|e| match e {
        hound::Error::IoError(_) => wav_err(
            path,
            format!("the file ({file_len} bytes) is too short for a RIFF/WAVE header"),
        ),
        other => hound_err(path, &other),
    })?;
    let spec = reader.spec();
    if spec.sample_rate == 0 {
        return Err(wav_err(path, "the header gives a sample rate of 0 Hz"));
    }
    let channel_count = usize::from(spec.channels);
    let bytes_per_sample = u64::from(spec.bits_per_sample.div_ceil(8)).max(1);
    let claimed = u64::from(reader.len());
    let available = file_len / bytes_per_sample;
    if claimed > available {
        return Err(wav_err(
            path,
            format!(
                "the header announces {claimed} samples but the file ({file_len} bytes) cannot hold \
                 them (truncated)"
            ),
        ));
    }
    let per_channel = usize::try_from(claimed).unwrap_or(0) / channel_count.max(1);
    let mut channels: Vec<Vec<f32>> = (0..channel_count)
        .map(|_| Vec::with_capacity(per_channel))
        .collect();

    match (spec.sample_format, spec.bits_per_sample) {
        (SampleFormat::Float, 32) => {
            for (i, s) in reader.samples::<f32>().enumerate() {
                let s = s.map_err(|e| hound_err(path, &e))?;
                push(&mut channels, i, s);
            }
        }
        (SampleFormat::Int, bits @ (8 | 16 | 24 | 32)) => {
            let full_scale = f64::from(1u32 << (bits - 1));
            for (i, s) in reader.samples::<i32>().enumerate() {
                let s = s.map_err(|e| hound_err(path, &e))?;
                push(&mut channels, i, (f64::from(s) / full_scale) as f32);
            }
        }
        (format, bits) => {
            let kind = if format == SampleFormat::Float {
                "float"
            } else {
                "integer"
            };
            return Err(wav_err(
                path,
                format!(
                    "unsupported encoding: {bits}-bit {kind} (only integer PCM 8/16/24/32-bit and \
                     32-bit float are read)"
                ),
            ));
        }
    }
    Ok(Recording {
        channels,
        sample_rate_hz: f64::from(spec.sample_rate),
    })
}

fn push(channels: &mut [Vec<f32>], i: usize, s: f32) {
    let n = channels.len();
    if let Some(ch) = channels.get_mut(i % n.max(1)) {
        ch.push(s);
    }
}

/// Writes a recording as a 32-bit float WAV file, channels interleaved, samples as given.
///
/// The sample rate is rounded to whole Hz (WAV stores an integer rate) and must be between 1 Hz and
/// `u32::MAX` Hz; all channels must have the same length and there must be 1..=65535 channels.
pub fn write_wav_f32(path: &Path, rec: &Recording) -> Result<(), FormatError> {
    let rate = rec.sample_rate_hz.round();
    if !(rate >= 1.0 && rate <= f64::from(u32::MAX)) {
        return Err(wav_err(
            path,
            format!("cannot write sample rate {} Hz", rec.sample_rate_hz),
        ));
    }
    let Ok(channel_count) = u16::try_from(rec.channels.len()) else {
        return Err(wav_err(path, "cannot write more than 65535 channels"));
    };
    if channel_count == 0 {
        return Err(wav_err(path, "cannot write a recording with no channels"));
    }
    let n = rec.samples_per_channel();
    if rec.channels.iter().any(|c| c.len() != n) {
        return Err(wav_err(path, "cannot write channels of different lengths"));
    }
    let spec = WavSpec {
        channels: channel_count,
        sample_rate: rate as u32,
        bits_per_sample: 32,
        sample_format: SampleFormat::Float,
    };
    let to_err = |e: hound::Error| match e {
        hound::Error::IoError(source) => FormatError::Io {
            path: path.to_owned(),
            source,
        },
        other => wav_err(path, other.to_string()),
    };
    let mut writer = WavWriter::create(path, spec).map_err(to_err)?;
    for i in 0..n {
        for ch in &rec.channels {
            writer.write_sample(ch[i]).map_err(to_err)?;
        }
    }
    writer.finalize().map_err(to_err)
}
