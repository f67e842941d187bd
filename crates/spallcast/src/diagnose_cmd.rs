//! `spallcast diagnose`: diagnose one WAV recording and print a short report or the JSON document.
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use anyhow::{Context, bail};
use spallcast_analysis::{
    AccelUnit, BearingGeometry, CheckFactors as _, DiagnoseOptions, Diagnosis, DisplayUnits,
    FaultFactors, MachineGroup, Support, VelocityUnit, diagnose,
};

/// Arguments of `spallcast diagnose`.
#[derive(Debug, clap::Args)]
#[allow(
    clippy::struct_excessive_bools,
    reason = "each bool is an independent command-line switch"
)]
pub struct DiagnoseArgs {
    /// The recording to diagnose (WAV: PCM 8/16/24/32-bit integer or 32-bit float; samples in g, integer
    /// full scale = `--full-scale-g`).
    pub file: PathBuf,
    /// Shaft speed at the bearing, r/min.
    #[arg(long, allow_negative_numbers = true)]
    pub rpm: f64,
    /// Bearing geometry: `n=9,d=0.3126,pitch=1.537,angle=0` (diameters in any one unit, angle in degrees).
    #[arg(long, conflicts_with = "factors", required_unless_present = "factors")]
    pub geometry: Option<String>,
    /// Fault factors in orders: `ftf=0.398,bsf=2.357,bpfo=3.585,bpfi=5.415` (BSF in the 1x ball-spin convention).
    #[arg(long)]
    pub factors: Option<String>,
    /// Print the full result as JSON instead of the report.
    #[arg(long)]
    pub json: bool,
    /// Channel to analyse (1-based) in a multichannel file.
    #[arg(long, default_value_t = 1)]
    pub channel: u16,
    /// Demodulation band `LOW,HIGH` in Hz (default: chosen by the fast kurtogram).
    #[arg(long)]
    pub band: Option<String>,
    /// Apply cepstral pre-whitening before the envelope.
    #[arg(long)]
    pub prewhiten: bool,
    /// ISO 20816-3 machine group (1 = large, 2 = medium).
    #[arg(long, default_value_t = 2)]
    pub iso_group: u8,
    /// The machine's support is flexible in the measured direction (default rigid).
    #[arg(long)]
    pub flexible: bool,
    /// Report velocity in in/s instead of mm/s.
    #[arg(long)]
    pub inches: bool,
    /// Report acceleration in m/s² instead of g.
    #[arg(long)]
    pub metric_accel: bool,
    /// Acceleration (g) that an integer WAV's full scale stands for.
    #[arg(long, default_value_t = 1.0)]
    pub full_scale_g: f64,
}

/// Runs `spallcast diagnose`.
pub fn run(args: &DiagnoseArgs) -> anyhow::Result<ExitCode> {
    if !(args.rpm.is_finite() && args.rpm > 0.0) {
        bail!(
            "--rpm must be a positive number of revolutions per minute, got {}",
            args.rpm
        );
    }
    if !(args.full_scale_g.is_finite() && args.full_scale_g > 0.0) {
        bail!(
            "--full-scale-g must be a positive number, got {}",
            args.full_scale_g
        );
    }
    let factors = match (&args.geometry, &args.factors) {
        (Some(g), None) => parse_geometry(g)?,
        (None, Some(f)) => parse_factors(f)?,
        _ => bail!("give exactly one of --geometry or --factors"),
    };
    let iso_group = MachineGroup::from_number(args.iso_group)
        .with_context(|| format!("--iso-group must be 1 or 2, got {}", args.iso_group))?;
    let demodulation_band_hz = args.band.as_deref().map(parse_band).transpose()?;
    let (samples, fs) = read_wav_channel(&args.file, args.channel, args.full_scale_g)?;
    let options = DiagnoseOptions {
        iso_group,
        iso_support: if args.flexible {
            Support::Flexible
        } else {
            Support::Rigid
        },
        demodulation_band_hz,
        prewhiten: args.prewhiten,
        units: DisplayUnits {
            acceleration: if args.metric_accel {
                AccelUnit::MetresPerSecond2
            } else {
                AccelUnit::G
            },
            velocity: if args.inches {
                VelocityUnit::InPerS
            } else {
                VelocityUnit::MmPerS
            },
        },
        ..DiagnoseOptions::default()
    };
    let d = diagnose(&samples, fs, args.rpm / 60.0, &factors, &options)
        .with_context(|| format!("cannot diagnose {}", args.file.display()))?;
    if args.json {
        println!("{}", serde_json::to_string_pretty(&d)?);
    } else {
        print!("{}", report(&args.file, args.rpm, &d));
    }
    Ok(ExitCode::SUCCESS)
}

fn key_values(text: &str, what: &str, keys: &[&str]) -> anyhow::Result<Vec<f64>> {
    let mut out = vec![None; keys.len()];
    for part in text.split(',').map(str::trim).filter(|p| !p.is_empty()) {
        let (k, v) = part
            .split_once('=')
            .with_context(|| format!("{what}: expected key=value, got `{part}`"))?;
        let k = k.trim();
        let i = keys
            .iter()
            .position(|x| *x == k)
            .with_context(|| format!("{what}: unknown key `{k}` (expected {})", keys.join(", ")))?;
        let v: f64 = v
            .trim()
            .parse()
            .with_context(|| format!("{what}: `{k}` is not a number: `{}`", v.trim()))?;
        if let Some(slot) = out.get_mut(i) {
            *slot = Some(v);
        }
    }
    keys.iter()
        .zip(out)
        .map(|(k, v)| v.with_context(|| format!("{what}: missing `{k}`")))
        .collect()
}

fn parse_geometry(text: &str) -> anyhow::Result<FaultFactors> {
    let v = key_values(text, "--geometry", &["n", "d", "pitch", "angle"])?;
    let n = v[0];
    if !(n.is_finite() && n >= 1.0 && n.fract() == 0.0 && n <= f64::from(u16::MAX)) {
        bail!("--geometry: `n` must be a whole number of rolling elements, got {n}");
    }
    let g = BearingGeometry {
        rolling_elements: n as u32,
        element_diameter: v[1],
        pitch_diameter: v[2],
        contact_angle_deg: v[3],
    };
    g.factors().context("--geometry")
}

fn parse_factors(text: &str) -> anyhow::Result<FaultFactors> {
    let v = key_values(text, "--factors", &["ftf", "bsf", "bpfo", "bpfi"])?;
    let f = FaultFactors {
        ftf: v[0],
        bsf: v[1],
        bpfo: v[2],
        bpfi: v[3],
    };
    f.validate().context("--factors")?;
    Ok(f)
}

fn parse_band(text: &str) -> anyhow::Result<(f64, f64)> {
    let (a, b) = text
        .split_once(',')
        .with_context(|| format!("--band: expected LOW,HIGH in Hz, got `{text}`"))?;
    let lo: f64 = a
        .trim()
        .parse()
        .with_context(|| format!("--band: `{}` is not a number", a.trim()))?;
    let hi: f64 = b
        .trim()
        .parse()
        .with_context(|| format!("--band: `{}` is not a number", b.trim()))?;
    if !(lo.is_finite() && hi.is_finite() && lo >= 0.0 && hi > lo) {
        bail!("--band: need 0 ≤ LOW < HIGH, got {lo},{hi}");
    }
    Ok((lo, hi))
}

/// Reads one channel of a WAV file as f64 samples in g, with its sample rate.
fn read_wav_channel(
    path: &Path,
    channel: u16,
    full_scale_g: f64,
) -> anyhow::Result<(Vec<f64>, f64)> {
    let mut reader = hound::WavReader::open(path)
        .with_context(|| format!("cannot read WAV file {}", path.display()))?;
    let spec = reader.spec();
    if channel == 0 || channel > spec.channels {
        bail!(
            "--channel {channel} is out of range: the file has {} channel(s): {}",
            spec.channels,
            path.display()
        );
    }
    let stride = usize::from(spec.channels);
    let pick = usize::from(channel - 1);
    let samples: Vec<f64> = match spec.sample_format {
        hound::SampleFormat::Float => {
            if spec.bits_per_sample != 32 {
                bail!(
                    "unsupported float WAV with {} bits per sample (32 expected): {}",
                    spec.bits_per_sample,
                    path.display()
                );
            }
            reader
                .samples::<f32>()
                .skip(pick)
                .step_by(stride)
                .map(|s| s.map(f64::from))
                .collect::<Result<_, _>>()
        }
        hound::SampleFormat::Int => {
            let bits = spec.bits_per_sample;
            if !matches!(bits, 8 | 16 | 24 | 32) {
                bail!(
                    "unsupported integer WAV with {bits} bits per sample: {}",
                    path.display()
                );
            }
            let scale = full_scale_g / f64::from(1_u32 << (bits - 1));
            reader
                .samples::<i32>()
                .skip(pick)
                .step_by(stride)
                .map(|s| s.map(|v| f64::from(v) * scale))
                .collect::<Result<_, _>>()
        }
    }
    .with_context(|| format!("corrupt or truncated WAV data in {}", path.display()))?;
    if samples.is_empty() {
        bail!("the WAV file holds no samples: {}", path.display());
    }
    Ok((samples, f64::from(spec.sample_rate)))
}

fn report(path: &Path, rpm: f64, d: &Diagnosis) -> String {
    use std::fmt::Write as _;
    let mut s = String::new();
    let i = &d.indicators;
    let f = &d.fault_frequencies_hz;
    let _ = writeln!(s, "File       {}", path.display());
    let _ = writeln!(
        s,
        "Recording  {} samples at {} Hz ({:.2} s), shaft {rpm} r/min ({:.3} Hz)",
        d.samples,
        d.sample_rate_hz,
        d.samples as f64 / d.sample_rate_hz,
        d.shaft_hz
    );
    let _ = writeln!(
        s,
        "Bearing    FTF {:.2} Hz  BSF {:.2} Hz (2×BSF {:.2})  BPFO {:.2} Hz  BPFI {:.2} Hz",
        f.ftf,
        f.bsf,
        2.0 * f.bsf,
        f.bpfo,
        f.bpfi
    );
    let _ = writeln!(
        s,
        "Overall    accel {:.4} {u} RMS, {:.4} {u} peak, crest {:.2}, kurtosis {:.2}",
        d.display.accel_rms,
        d.display.accel_peak,
        i.crest_factor,
        i.kurtosis,
        u = d.display.accel_unit
    );
    let _ = writeln!(
        s,
        "Velocity   {:.3} {} RMS ({:.0}–{:.0} Hz), ISO 20816-3 zone {}",
        d.display.velocity_rms,
        d.display.velocity_unit,
        i.velocity_band_hz[0],
        i.velocity_band_hz[1],
        i.iso20816_zone.letter()
    );
    let _ = writeln!(
        s,
        "Envelope   band {:.0}–{:.0} Hz ({}){}",
        d.demodulation_band_hz[0],
        d.demodulation_band_hz[1],
        d.demodulation_band_source,
        if d.prewhitened { ", pre-whitened" } else { "" }
    );
    let _ = writeln!(
        s,
        "  {:<16} {:>10} {:>9} {:>10} {:>10}",
        "location", "rate Hz", "score dB", "harmonics", "sidebands"
    );
    for x in &d.findings {
        let _ = writeln!(
            s,
            "  {:<16} {:>10.2} {:>9.1} {:>10} {:>10}",
            x.fault, x.matched_hz, x.score_db, x.harmonics, x.sidebands
        );
    }
    let _ = writeln!(s, "  band choice: {}", d.band_choice.reason);
    let _ = writeln!(
        s,
        "Diagnosis  {} (confidence {:.2}{})",
        d.diagnosis,
        d.confidence,
        if let [a, b] = d.location.candidates.as_slice() {
            format!("; candidates {a} / {b}")
        } else {
            String::new()
        }
    );
    let _ = writeln!(s, "  why: {}", d.location.reason);
    let _ = writeln!(
        s,
        "Advisory only: isolate and lock out the machine before any work; follow local codes and licensed practice."
    );
    s
}
