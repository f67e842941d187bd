//! No reader panics on damaged input: golden and freshly written files are truncated and have bytes
//! overwritten at many positions, and every reader must return (Ok or Err) for each variant.

#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::float_cmp,
    reason = "tests: a panic is a failure, and exact float equality is what is being checked"
)]

use std::path::Path;

use spallcast_formats::{
    Recording, read_csv_waveform, read_manifest, read_recording, write_wav_f32,
};

/// Small deterministic generator (64-bit LCG, Knuth's MMIX constants).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        self.0 >> 33
    }
}

fn sources(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let golden = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../tests/golden/uff58");
    let mut out = Vec::new();
    for name in ["ascii_single.uff", "binary_double.uff"] {
        out.push((name.to_owned(), std::fs::read(golden.join(name)).unwrap()));
    }
    let wav = dir.join("src.wav");
    let rec = Recording {
        channels: vec![vec![0.25; 300], vec![-0.5; 300]],
        sample_rate_hz: 8000.0,
    };
    write_wav_f32(&wav, &rec).unwrap();
    out.push(("x.wav".to_owned(), std::fs::read(&wav).unwrap()));
    out.push((
        "x.csv".to_owned(),
        b"# sample_rate_hz=1000\n0.1,0.2\n0.3,0.4\n".to_vec(),
    ));
    out.push((
        "route.csv".to_owned(),
        b"file,point,taken_at,rpm,units,sensitivity,channel\na.wav,P1,2026-05-14T09:31:00+01:00,1480,mV,100,2\n"
            .to_vec(),
    ));
    out
}

fn try_all(path: &Path) {
    let _ = read_recording(path, Some(1000.0));
    let _ = read_csv_waveform(path, None);
    let _ = read_manifest(path);
}

#[test]
fn damaged_files_never_panic() {
    let dir = tempfile::tempdir().unwrap();
    let mut rng = Lcg(58);
    for (name, bytes) in sources(dir.path()) {
        let path = dir.path().join(format!("t_{name}"));
        // Truncations at a spread of lengths.
        let step = (bytes.len() / 41).max(1);
        for cut in (0..bytes.len()).step_by(step) {
            std::fs::write(&path, &bytes[..cut]).unwrap();
            try_all(&path);
        }
        // Random byte overwrites, favouring digits and line structure.
        let alphabet = b"0123456789-+.eE \n\r\xff\x00b,#";
        for _ in 0..120 {
            let mut b = bytes.clone();
            for _ in 0..=(rng.next() % 4) {
                let at = (rng.next() as usize) % b.len();
                b[at] = alphabet[(rng.next() as usize) % alphabet.len()];
            }
            std::fs::write(&path, &b).unwrap();
            try_all(&path);
        }
    }
}
