//! Writing a route folder: float WAV recordings, `route.csv` and `truth.csv`.

use std::path::Path;

use super::Reading;
use crate::error::SimError;
use crate::model::FaultKind;

pub(super) fn write_wav(path: &Path, samples: &[f32], sample_rate_hz: f64) -> Result<(), SimError> {
    let wav_err = |source| SimError::Wav {
        path: path.to_owned(),
        source,
    };
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: sample_rate_hz.round() as u32,
        bits_per_sample: 32,
        sample_format: hound::SampleFormat::Float,
    };
    let mut w = hound::WavWriter::create(path, spec).map_err(wav_err)?;
    for s in samples {
        w.write_sample(*s).map_err(wav_err)?;
    }
    w.finalize().map_err(wav_err)
}

pub(super) fn write_manifests<'a>(
    dir: &Path,
    readings: impl Iterator<Item = &'a Reading> + Clone,
) -> Result<(), SimError> {
    let route = dir.join("route.csv");
    let csv_err = |path: &Path| {
        let path = path.to_owned();
        move |source| SimError::Csv { path, source }
    };
    let mut w = csv::Writer::from_path(&route).map_err(csv_err(&route))?;
    w.write_record(["file", "point", "taken_at", "rpm", "units"])
        .map_err(csv_err(&route))?;
    for r in readings.clone() {
        let rpm = format!("{:.1}", r.truth.rpm);
        w.write_record([
            r.truth.file.as_str(),
            &r.truth.point,
            &r.taken_at,
            &rpm,
            "g",
        ])
        .map_err(csv_err(&route))?;
    }
    w.flush().map_err(|source| SimError::Io {
        path: route.clone(),
        source,
    })?;

    let truth = dir.join("truth.csv");
    let mut w = csv::Writer::from_path(&truth).map_err(csv_err(&truth))?;
    w.write_record(["file", "point", "stage", "fault", "severity", "note"])
        .map_err(csv_err(&truth))?;
    for r in readings {
        let t = &r.truth;
        let stage = t.stage.to_string();
        let severity = format!("{:.3}", t.severity);
        let fault = t.fault.map_or("none", FaultKind::label);
        w.write_record([
            t.file.as_str(),
            &t.point,
            &stage,
            fault,
            &severity,
            t.note.as_deref().unwrap_or(""),
        ])
        .map_err(csv_err(&truth))?;
    }
    w.flush().map_err(|source| SimError::Io {
        path: truth,
        source,
    })
}
