//! Synthetic recordings and the bytes of recording files: sines, mono float WAV files written through
//! the formats crate, and RIFF/WAVE and dataset-58 bytes written by hand so that a header can lie.
#![allow(
    clippy::unwrap_used,
    reason = "test fixtures: a failure here is a broken test"
)]

use std::fmt::Write as _;
use std::path::Path;

use spallcast_formats::Recording;

/// A sine of amplitude `amp` at `freq_hz`, `n` samples at `fs`.
pub fn sine(amp: f64, freq_hz: f64, fs: f64, n: usize) -> Vec<f32> {
    (0..n)
        .map(|i| (amp * (2.0 * std::f64::consts::PI * freq_hz * i as f64 / fs).sin()) as f32)
        .collect()
}

/// A one-channel recording of `n` samples at `rate`: a sine of `amplitude` advancing 0.137 rad a
/// sample.
pub fn sine_recording(n: usize, rate: f64, amplitude: f32) -> Recording {
    Recording {
        channels: vec![
            (0..n)
                .map(|i| amplitude * (i as f32 * 0.137).sin())
                .collect(),
        ],
        sample_rate_hz: rate,
    }
}

/// Writes a mono float WAV.
pub fn write_wav(path: &Path, samples: Vec<f32>, fs: f64) {
    spallcast_formats::write_wav_f32(
        path,
        &Recording {
            channels: vec![samples],
            sample_rate_hz: fs,
        },
    )
    .unwrap();
}

/// A RIFF/WAVE file written byte by byte, so that the header can lie.
pub fn wav_bytes(
    format_tag: u16,
    channels: u16,
    rate: u32,
    bits: u16,
    claimed_data_len: u32,
    data: &[u8],
) -> Vec<u8> {
    let align = channels * bits.div_ceil(8);
    let mut fmt = Vec::new();
    fmt.extend_from_slice(&format_tag.to_le_bytes());
    fmt.extend_from_slice(&channels.to_le_bytes());
    fmt.extend_from_slice(&rate.to_le_bytes());
    fmt.extend_from_slice(&(rate * u32::from(align)).to_le_bytes());
    fmt.extend_from_slice(&align.to_le_bytes());
    fmt.extend_from_slice(&bits.to_le_bytes());
    let mut body = b"WAVEfmt ".to_vec();
    body.extend_from_slice(&16u32.to_le_bytes());
    body.extend_from_slice(&fmt);
    body.extend_from_slice(b"data");
    body.extend_from_slice(&claimed_data_len.to_le_bytes());
    body.extend_from_slice(data);
    let mut out = b"RIFF".to_vec();
    out.extend_from_slice(&(body.len() as u32).to_le_bytes());
    out.extend_from_slice(&body);
    out
}

/// 16-bit PCM sample bytes (little-endian) of `values` in ±1.
pub fn pcm16(values: &[f32]) -> Vec<u8> {
    values
        .iter()
        .flat_map(|&v| ((v * 32767.0).round() as i16).to_le_bytes())
        .collect()
}

/// 32-bit float sample bytes (little-endian) of `values`.
pub fn float32(values: &[f32]) -> Vec<u8> {
    values.iter().flat_map(|v| v.to_le_bytes()).collect()
}

/// A dataset-58 header (records 1-11) for an ASCII or binary time record.
pub fn uff_header(ord_type: u32, points: u64, dt: f64) -> String {
    let mut s = String::new();
    for l in [
        "hostile record",
        "hardening test",
        "01-Dec-26 00:00:00",
        "NONE",
        "NONE",
    ] {
        writeln!(s, "{l:<80}").unwrap();
    }
    s.push_str(
        "    1         0    0         0         PT         1   1       NONE         0   0\n",
    );
    writeln!(
        s,
        "{ord_type:10}{points:10}{:10}{:13.5e}{dt:13.5e}{:13.5e}",
        1, 0.0, 0.0
    )
    .unwrap();
    s.push_str("        17    0    0    0 NONE                 s                   \n");
    s.push_str("        12    1    0    0 NONE                 g                   \n");
    s.push_str("         0    0    0    0 NONE                 NONE                \n");
    s.push_str("         0    0    0    0 NONE                 NONE                \n");
    s
}
