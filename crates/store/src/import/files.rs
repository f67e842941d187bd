//! Reading the route's files safely on the worker threads: a manifest path must stay inside the
//! route folder (also through links), the file is hashed a buffer at a time under a size cap, then
//! decoded, checked, converted to g and analysed.

use std::fmt::Write as _;
use std::io::Read as _;
use std::path::{Component, Path};

use sha2::{Digest, Sha256};
use spallcast_formats::Units;

use spallcast_model::units::rpm_to_hz;

use super::{Outcome, Prepared, STANDARD_GRAVITY, Work};
use crate::analyzer::{AnalysisInput, ReadingAnalyzer};

/// Hashes, checks for a duplicate, decodes and analyses one row (runs on a worker thread).
pub(super) fn process(w: &Work, root: &Path, analyzer: &dyn ReadingAnalyzer) -> Outcome {
    let hash = match hash_file(&w.path, root) {
        Ok(h) => h,
        Err(reason) => return Outcome::Rejected(reason),
    };
    if w.known_hashes.contains(&hash) {
        return Outcome::Duplicate;
    }
    match prepare(w, analyzer) {
        Ok(p) => Outcome::Ready(hash, p),
        Err(reason) => Outcome::Rejected(reason),
    }
}

/// True when a manifest path stays inside the folder (relative, no `..`, no root or prefix).
pub(super) fn stays_inside(file: &str) -> bool {
    let p = Path::new(file);
    !file.is_empty()
        && p.components()
            .all(|c| matches!(c, Component::Normal(_) | Component::CurDir))
}

fn hash_file(path: &Path, root: &Path) -> std::result::Result<String, String> {
    // A symbolic link (or a folder link on the way) must not lead out of the route folder.
    let real = std::fs::canonicalize(path).map_err(|e| format!("cannot read the file: {e}"))?;
    if !real.starts_with(root) {
        return Err(format!(
            "the file resolves to {}, outside the route folder",
            real.display()
        ));
    }
    // Only regular files: a folder, a named pipe or a device would fail or block the reader.
    let meta = std::fs::metadata(&real).map_err(|e| format!("cannot read the file: {e}"))?;
    if !meta.is_file() {
        return Err("not a regular file".to_owned());
    }
    // Streamed, so memory stays one buffer whatever the file's size; capped like the readers.
    let limit = spallcast_formats::MAX_FILE_BYTES;
    let mut file = std::fs::File::open(&real)
        .map_err(|e| format!("cannot read the file: {e}"))?
        .take(limit + 1);
    let mut hasher = Sha256::new();
    let mut buf = vec![0_u8; 1 << 16];
    let mut total: u64 = 0;
    loop {
        let n = match file.read(&mut buf) {
            Ok(0) => break,
            Ok(n) => n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(format!("cannot read the file: {e}")),
        };
        total += n as u64;
        if total > limit {
            return Err(format!(
                "the file is larger than {} MiB, the most a recording may be",
                limit >> 20
            ));
        }
        hasher.update(&buf[..n]);
    }
    if total == 0 {
        return Err("the file is empty".to_owned());
    }
    let digest = hasher.finalize();
    let mut hex = String::with_capacity(64);
    for b in digest {
        let _ = write!(hex, "{b:02x}");
    }
    Ok(hex)
}

/// Decodes, checks, converts to g and analyses one recording.
fn prepare(work: &Work, analyzer: &dyn ReadingAnalyzer) -> std::result::Result<Prepared, String> {
    let row = &work.row;
    let mut rec = spallcast_formats::read_recording(&work.path, row.sample_rate_hz)
        .map_err(|e| e.to_string())?;
    spallcast_formats::validate(&rec, &work.path).map_err(|e| e.to_string())?;
    // Channels are numbered from 1. The channel is taken, not copied: a long recording is held once.
    let index = usize::try_from(row.channel)
        .ok()
        .and_then(|c| c.checked_sub(1))
        .filter(|i| *i < rec.channels.len());
    let Some(index) = index else {
        return Err(format!(
            "channel {} asked for, but the file has {} channel(s)",
            row.channel,
            rec.channels.len()
        ));
    };
    let raw = rec.channels.swap_remove(index);
    let clipped_fraction = spallcast_formats::clipping_fraction(&raw);
    let scale = match row.units {
        Units::G => 1.0,
        Units::MetresPerSecond2 => 1.0 / STANDARD_GRAVITY,
        Units::Millivolts => {
            let Some(s) = row.sensitivity_mv_per_g.or(work.point.sensitivity_mv_per_g) else {
                return Err(format!(
                    "units are mV but no sensitivity is given (route.csv column `sensitivity` or point {}'s \
                     sensitivity_mv_per_g)",
                    row.point
                ));
            };
            1.0 / s
        }
    };
    let mut samples_g = raw;
    if (scale - 1.0).abs() >= f64::EPSILON {
        for x in &mut samples_g {
            *x = (f64::from(*x) * scale) as f32;
        }
    }
    let sample_rate_hz = rec.sample_rate_hz;
    drop(rec);
    if let Some(i) = samples_g.iter().position(|s| !s.is_finite()) {
        return Err(format!("sample {i} is not finite after conversion to g"));
    }
    let input = AnalysisInput {
        samples_g: &samples_g,
        sample_rate_hz,
        shaft_hz: rpm_to_hz(row.rpm),
        factors: work.point.factors,
        iso_group: work.point.iso_group,
        iso_support: work.point.iso_support,
    };
    let mut output = analyzer
        .analyze(&input)
        .map_err(|e| format!("analysis failed: {e}"))?;
    // SQLite has no NaN: an indicator the analyzer could not compute is left out.
    output.scalars.retain(|_, v| v.is_finite());
    Ok(Prepared {
        samples_g,
        sample_rate_hz,
        clipped_fraction,
        output,
    })
}
