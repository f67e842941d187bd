//! WAV reading: PCM scaling round trips through hound, multi-channel, and every reject reason.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::float_cmp,
    reason = "tests: a panic is a failure, and exact float equality is what is being checked"
)]

use std::path::Path;

use hound::{SampleFormat, WavSpec, WavWriter};
use spallcast_formats::{
    FormatError, Problem, Recording, read_recording, read_wav, validate, write_wav_f32,
};

fn spec(channels: u16, bits: u16, format: SampleFormat) -> WavSpec {
    WavSpec {
        channels,
        sample_rate: 25_600,
        bits_per_sample: bits,
        sample_format: format,
    }
}

/// Integer PCM full scale is 2^(bits-1): the most negative code reads as exactly -1.0 and the
/// largest positive code as 1 - 2^-(bits-1) (WAVE PCM convention, common practice, no source).
fn int_round_trip(bits: u16, codes: &[i32]) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join(format!("pcm{bits}.wav"));
    let mut w = WavWriter::create(&path, spec(1, bits, SampleFormat::Int)).unwrap();
    for &c in codes {
        if bits == 8 {
            w.write_sample(i8::try_from(c).unwrap()).unwrap();
        } else if bits == 16 {
            w.write_sample(i16::try_from(c).unwrap()).unwrap();
        } else {
            w.write_sample(c).unwrap();
        }
    }
    w.finalize().unwrap();
    let rec = read_wav(&path).unwrap();
    assert_eq!(rec.sample_rate_hz, 25_600.0);
    assert_eq!(rec.channels.len(), 1);
    let full_scale = f64::from(1u32 << (bits - 1));
    for (&code, &got) in codes.iter().zip(&rec.channels[0]) {
        let want = (f64::from(code) / full_scale) as f32;
        assert_eq!(got, want, "{bits}-bit code {code}");
    }
    assert_eq!(rec.channels[0].len(), codes.len());
}

#[test]
fn pcm8_scales_to_full_scale() {
    int_round_trip(8, &[-128, -64, 0, 1, 64, 127]);
    // Spot value: -128 is exactly -1.0 and 64 is exactly 0.5.
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("a.wav");
    let mut w = WavWriter::create(&path, spec(1, 8, SampleFormat::Int)).unwrap();
    w.write_sample(-128_i8).unwrap();
    w.write_sample(64_i8).unwrap();
    w.finalize().unwrap();
    assert_eq!(read_wav(&path).unwrap().channels[0], vec![-1.0, 0.5]);
}

#[test]
fn pcm16_scales_to_full_scale() {
    int_round_trip(16, &[-32768, -16384, -1, 0, 1, 16384, 32767]);
}

#[test]
fn pcm24_scales_to_full_scale() {
    int_round_trip(24, &[-8_388_608, -4_194_304, 0, 4_194_304, 8_388_607]);
}

#[test]
fn pcm32_scales_to_full_scale() {
    int_round_trip(32, &[i32::MIN, -1_073_741_824, 0, 1_073_741_824, i32::MAX]);
}

#[test]
fn float32_is_returned_as_stored() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("f.wav");
    let values = [-3.5_f32, -1.0, 0.0, 0.25, 1.0, 7.125];
    let mut w = WavWriter::create(&path, spec(1, 32, SampleFormat::Float)).unwrap();
    for v in values {
        w.write_sample(v).unwrap();
    }
    w.finalize().unwrap();
    let rec = read_wav(&path).unwrap();
    assert_eq!(rec.channels, vec![values.to_vec()]);
}

#[test]
fn multichannel_is_deinterleaved() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("three.wav");
    let mut w = WavWriter::create(&path, spec(3, 16, SampleFormat::Int)).unwrap();
    for i in 0..100_i16 {
        w.write_sample(i).unwrap();
        w.write_sample(-i).unwrap();
        w.write_sample(i * 100).unwrap();
    }
    w.finalize().unwrap();
    let rec = read_wav(&path).unwrap();
    assert_eq!(rec.channels.len(), 3);
    for i in 0..100_usize {
        let code = i as f32;
        assert_eq!(rec.channels[0][i], code / 32768.0);
        assert_eq!(rec.channels[1][i], -code / 32768.0);
        assert_eq!(rec.channels[2][i], code * 100.0 / 32768.0);
    }
    assert_eq!(rec.channel(2), Some(&rec.channels[1][..]));
    assert_eq!(rec.channel(0), None);
    assert_eq!(rec.channel(4), None);
}

#[test]
fn write_wav_f32_round_trips_through_read_recording() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("sim.wav");
    let rec = Recording {
        channels: vec![
            (0..1000).map(|i| (i as f32 * 0.01).sin() * 3.0).collect(),
            (0..1000).map(|i| i as f32 * -1e-3).collect(),
        ],
        sample_rate_hz: 51_200.0,
    };
    write_wav_f32(&path, &rec).unwrap();
    let back = read_recording(&path, None).unwrap();
    assert_eq!(back, rec);
    validate(&back, &path).unwrap();
}

#[test]
fn write_wav_f32_refuses_ragged_channels_and_zero_rate() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("bad.wav");
    let ragged = Recording {
        channels: vec![vec![0.0; 10], vec![0.0; 9]],
        sample_rate_hz: 1000.0,
    };
    assert!(matches!(
        write_wav_f32(&path, &ragged),
        Err(FormatError::Wav { .. })
    ));
    let zero = Recording {
        channels: vec![vec![0.0; 10]],
        sample_rate_hz: 0.0,
    };
    assert!(matches!(
        write_wav_f32(&path, &zero),
        Err(FormatError::Wav { .. })
    ));
}

fn write_float(path: &Path, values: &[f32]) {
    let mut w = WavWriter::create(path, spec(1, 32, SampleFormat::Float)).unwrap();
    for &v in values {
        w.write_sample(v).unwrap();
    }
    w.finalize().unwrap();
}

fn message(err: &FormatError) -> String {
    err.to_string()
}

#[test]
fn truncated_wav_is_rejected_naming_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("cut.wav");
    write_float(&path, &[0.5; 1000]);
    let bytes = std::fs::read(&path).unwrap();
    std::fs::write(&path, &bytes[..bytes.len() - 1001]).unwrap();
    let err = read_wav(&path).unwrap_err();
    let msg = message(&err);
    assert!(matches!(err, FormatError::Wav { .. }), "{msg}");
    assert!(msg.contains("truncated"), "{msg}");
    assert!(msg.ends_with(&path.display().to_string()), "{msg}");
}

#[test]
fn slightly_truncated_wav_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("short.wav");
    write_float(&path, &[0.5; 1000]);
    let bytes = std::fs::read(&path).unwrap();
    // Cut less than the header size, so only reading the samples finds the gap.
    std::fs::write(&path, &bytes[..bytes.len() - 8]).unwrap();
    let msg = message(&read_wav(&path).unwrap_err());
    assert!(msg.contains("truncated"), "{msg}");
    assert!(msg.ends_with("short.wav"), "{msg}");
}

#[test]
fn huge_claimed_data_length_is_rejected_before_allocating() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("liar.wav");
    write_float(&path, &[0.5; 16]);
    let mut bytes = std::fs::read(&path).unwrap();
    // The data chunk's 4-byte size follows its `data` tag.
    let at = bytes.windows(4).position(|w| w == b"data").unwrap() + 4;
    bytes[at..at + 4].copy_from_slice(&0xFFFF_FFF0_u32.to_le_bytes());
    std::fs::write(&path, &bytes).unwrap();
    let msg = message(&read_wav(&path).unwrap_err());
    assert!(msg.contains("cannot hold"), "{msg}");
}

#[test]
fn empty_file_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("empty.wav");
    std::fs::write(&path, b"").unwrap();
    let err = read_wav(&path).unwrap_err();
    assert!(matches!(err, FormatError::Wav { .. }), "{err}");
    assert!(message(&err).ends_with("empty.wav"), "{err}");
}

#[test]
fn wav_without_samples_reads_but_fails_validation() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("nosamples.wav");
    write_float(&path, &[]);
    let rec = read_wav(&path).unwrap();
    let err = validate(&rec, &path).unwrap_err();
    assert!(
        matches!(
            &err,
            FormatError::Invalid {
                problem: Problem::Empty,
                ..
            }
        ),
        "{err}"
    );
    assert!(message(&err).contains("no samples"), "{err}");
}

#[test]
fn wav_with_nan_fails_validation_naming_the_sample() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("nan.wav");
    let mut values = vec![0.1_f32; 1024];
    values[700] = f32::NAN;
    write_float(&path, &values);
    let rec = read_wav(&path).unwrap();
    let err = validate(&rec, &path).unwrap_err();
    assert!(
        matches!(
            &err,
            FormatError::Invalid {
                problem: Problem::NonFinite {
                    channel: 1,
                    index: 700
                },
                ..
            }
        ),
        "{err}"
    );
}

/// A canonical 44-byte PCM header written by hand (RIFF/WAVE layout, common practice, no source):
/// hound cannot write a 0 Hz file, it divides by the rate.
fn pcm16_header(sample_rate: u32, data: &[i16]) -> Vec<u8> {
    let data_len = (data.len() * 2) as u32;
    let mut b = Vec::new();
    b.extend_from_slice(b"RIFF");
    b.extend_from_slice(&(36 + data_len).to_le_bytes());
    b.extend_from_slice(b"WAVEfmt ");
    b.extend_from_slice(&16_u32.to_le_bytes());
    b.extend_from_slice(&1_u16.to_le_bytes()); // PCM
    b.extend_from_slice(&1_u16.to_le_bytes()); // mono
    b.extend_from_slice(&sample_rate.to_le_bytes());
    b.extend_from_slice(&(sample_rate * 2).to_le_bytes());
    b.extend_from_slice(&2_u16.to_le_bytes());
    b.extend_from_slice(&16_u16.to_le_bytes());
    b.extend_from_slice(b"data");
    b.extend_from_slice(&data_len.to_le_bytes());
    for s in data {
        b.extend_from_slice(&s.to_le_bytes());
    }
    b
}

#[test]
fn hand_built_header_reads_like_hound_output() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("hand.wav");
    std::fs::write(&path, pcm16_header(8000, &[16384, -16384])).unwrap();
    let rec = read_wav(&path).unwrap();
    assert_eq!(rec.sample_rate_hz, 8000.0);
    assert_eq!(rec.channels, vec![vec![0.5, -0.5]]);
}

#[test]
fn zero_hz_wav_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("zero.wav");
    std::fs::write(&path, pcm16_header(0, &[1; 512])).unwrap();
    let msg = message(&read_wav(&path).unwrap_err());
    assert!(msg.contains("0 Hz"), "{msg}");
    assert!(msg.ends_with("zero.wav"), "{msg}");
}

#[test]
fn missing_file_is_an_io_error_naming_it() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("absent.wav");
    let err = read_recording(&path, None).unwrap_err();
    assert!(matches!(err, FormatError::Io { .. }), "{err}");
    assert!(err.to_string().ends_with("absent.wav"), "{err}");
}

#[test]
fn unsupported_encoding_is_rejected() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("alaw.wav");
    let mut bytes = pcm16_header(8000, &[0; 16]);
    bytes[20..22].copy_from_slice(&6_u16.to_le_bytes()); // format tag 6 = A-law
    std::fs::write(&path, bytes).unwrap();
    let msg = message(&read_wav(&path).unwrap_err());
    assert!(msg.contains("unsupported"), "{msg}");
}
