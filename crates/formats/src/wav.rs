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

    // Fast path: sample containers exactly as wide as the samples (nearly every file): the data chunk is
    // read in one go and converted, instead of sample by sample through hound.
    let bits = spec.bits_per_sample;
    let bulk = matches!(
        (spec.sample_format, bits),
        (SampleFormat::Float, 32) | (SampleFormat::Int, 8 | 16 | 24 | 32)
    ) && container_bytes(&crate::read_head(path, HEAD_BYTES)?) == Some(bits / 8);
    if bulk {
        use std::io::Read as _;
        let width = usize::from(bits / 8);
        let byte_count = usize::try_from(claimed * u64::from(bits / 8)).unwrap_or(usize::MAX);
        // Blocks of whole frames (every channel's sample), about 1 MiB: the raw bytes of a long
        // recording are never held beside its decoded samples.
        let frame = width * channel_count.max(1);
        let block = (1 << 20) / frame * frame;
        let mut source = reader.into_inner().take(byte_count as u64);
        let mut data = vec![0u8; block.max(frame)];
        let mut read_total = 0usize;
        let mut index = 0usize;
        loop {
            let mut filled = 0;
            while filled < data.len() {
                let n = source.read(&mut data[filled..]).map_err(io_err)?;
                if n == 0 {
                    break;
                }
                filled += n;
            }
            if filled == 0 {
                break;
            }
            read_total += filled;
            let whole = filled / width * width;
            decode_interleaved_from(
                &data[..whole],
                spec.sample_format,
                bits,
                &mut channels,
                index,
            );
            index += whole / width;
            if filled < data.len() {
                break;
            }
        }
        if read_total != byte_count {
            return Err(wav_err(
                path,
                format!(
                    "the file ends before the samples its header announces (truncated: {read_total} of \
                     {byte_count} data bytes)"
                ),
            ));
        }
        return Ok(Recording {
            channels,
            sample_rate_hz: f64::from(spec.sample_rate),
        });
    }

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

/// How much of the file start is searched for the `fmt ` chunk.
const HEAD_BYTES: u64 = 1 << 16;

/// Bytes per sample container, from the `fmt ` chunk (block align / channels), if it is found in `head`.
fn container_bytes(head: &[u8]) -> Option<u16> {
    if head.get(..4)? != b"RIFF" || head.get(8..12)? != b"WAVE" {
        return None;
    }
    let mut at = 12usize;
    while at.checked_add(8)? <= head.len() {
        let id = head.get(at..at + 4)?;
        let size = u32::from_le_bytes(head.get(at + 4..at + 8)?.try_into().ok()?) as usize;
        let body = at + 8;
        if id == b"fmt " {
            let field = |o: usize| -> Option<u16> {
                Some(u16::from_le_bytes(
                    head.get(body + o..body + o + 2)?.try_into().ok()?,
                ))
            };
            let channels = field(2)?;
            let block_align = field(12)?;
            return (channels > 0 && block_align % channels == 0).then(|| block_align / channels);
        }
        // Chunks are padded to an even length.
        at = body.checked_add(size)?.checked_add(size & 1)?;
    }
    None
}

/// Converts little-endian interleaved samples as [`read_wav`] defines: integers scaled to ±1.0 full
/// scale (8-bit WAV is unsigned with an offset of 128), floats as stored.
/// Decodes interleaved samples whose first has the overall index `first` (so channels stay in turn
/// across blocks).
fn decode_interleaved_from(
    data: &[u8],
    format: SampleFormat,
    bits: u16,
    channels: &mut [Vec<f32>],
    first: usize,
) {
    let full_scale = f64::from(1u32 << (bits.max(1) - 1));
    let int = |v: i32| (f64::from(v) / full_scale) as f32;
    let width = usize::from(bits / 8);
    for (j, b) in data.chunks_exact(width).enumerate() {
        let i = first + j;
        let s = match (format, width) {
            (SampleFormat::Float, 4) => f32::from_le_bytes([b[0], b[1], b[2], b[3]]),
            (_, 1) => int(i32::from(b[0]) - 128),
            (_, 2) => int(i32::from(i16::from_le_bytes([b[0], b[1]]))),
            // Sign-extend the 24-bit value from the top byte.
            (_, 3) => int(i32::from_le_bytes([0, b[0], b[1], b[2]]) >> 8),
            _ => int(i32::from_le_bytes([b[0], b[1], b[2], b[3]])),
        };
        push(channels, i, s);
    }
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

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, reason = "test code")]
    use super::*;

    /// The bulk decoder against hound's own sample-by-sample reading (the reference), for every
    /// encoding read in bulk, two channels, full-scale extremes included.
    #[test]
    fn bulk_decoding_matches_hound_sample_by_sample() {
        let dir = tempfile::tempdir().unwrap();
        let cases: [(SampleFormat, u16); 5] = [
            (SampleFormat::Int, 8),
            (SampleFormat::Int, 16),
            (SampleFormat::Int, 24),
            (SampleFormat::Int, 32),
            (SampleFormat::Float, 32),
        ];
        for (format, bits) in cases {
            let path = dir.path().join(format!("{format:?}{bits}.wav"));
            let spec = WavSpec {
                channels: 2,
                sample_rate: 8000,
                bits_per_sample: bits,
                sample_format: format,
            };
            let mut w = WavWriter::create(&path, spec).unwrap();
            let max = if bits == 32 {
                i32::MAX
            } else {
                (1i32 << (bits - 1)) - 1
            };
            for k in 0..1000_i64 {
                let x = (k * 7919 % 2001 - 1000) as f64 / 1000.0;
                match format {
                    SampleFormat::Float => w.write_sample(x as f32).unwrap(),
                    SampleFormat::Int => {
                        let v = match k {
                            0 => max,
                            1 => -max - 1,
                            _ => (x * f64::from(max)) as i32,
                        };
                        w.write_sample(v).unwrap();
                    }
                }
            }
            w.finalize().unwrap();
            let bulk = read_wav(&path).unwrap();
            let mut hr = WavReader::open(&path).unwrap();
            let full = f64::from(1u32 << (bits - 1));
            let reference: Vec<f32> = match format {
                SampleFormat::Float => hr.samples::<f32>().map(Result::unwrap).collect(),
                SampleFormat::Int => hr
                    .samples::<i32>()
                    .map(|s| (f64::from(s.unwrap()) / full) as f32)
                    .collect(),
            };
            let interleaved: Vec<f32> = (0..bulk.channels[0].len())
                .flat_map(|i| [bulk.channels[0][i], bulk.channels[1][i]])
                .collect();
            assert_eq!(interleaved, reference, "{format:?} {bits}-bit");
        }
    }
}
