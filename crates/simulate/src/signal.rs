//! Waveform synthesis: machine background plus a train of defect impacts.

use std::f64::consts::TAU;

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;

use crate::error::SimError;
use crate::model::{Condition, FaultKind, MachineParams, Resonance, clamp01};

/// Highest frequency a component may have to be synthesised, as a fraction of the sample rate.
///
/// A data collector's anti-alias filter removes what lies above about 0.4–0.45·fs (common
/// practice, no source), so modes above this limit are simply not generated.
pub const BANDWIDTH_FRACTION: f64 = 0.45;

/// Independent random streams, so that changing one part of the model (e.g. the defect) leaves
/// the other parts (e.g. the background noise) of a reading unchanged for the same seed.
#[derive(Clone, Copy)]
enum Stream {
    Phases = 1,
    Structural = 2,
    Sensor = 3,
    Impacts = 4,
    Broadband = 5,
}

fn rng_for(seed: u64, stream: Stream) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(stream as u64);
    rng
}

/// Levels of each defect ingredient for one condition (all amplitudes are peak g).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct DefectLevels {
    /// Impact ringing of the ultrasonic resonance.
    pub ultrasonic_g: f64,
    /// Impact ringing of the bearing resonance.
    pub bearing_g: f64,
    /// Low-frequency impact response (the element rolling over the spall edge).
    pub pulse_g: f64,
    /// Width of that low-frequency pulse, s.
    pub pulse_width_s: f64,
    /// Extra white broadband noise, RMS g.
    pub broadband_g: f64,
    /// Multiplier on the healthy 1x amplitude.
    pub onex_gain: f64,
    /// Standard deviation of the impact-interval jitter, as a fraction of the period.
    pub jitter: f64,
    /// Standard deviation of ln(impact amplitude).
    pub amplitude_spread: f64,
}

fn lerp(a: f64, b: f64, t: f64) -> f64 {
    a + (b - a) * t
}

/// Defect levels by stage, interpolated by the in-stage severity.
///
/// The numbers are illustrative choices that reproduce the stage signatures of the four-stage
/// model (common practice, no source; project reference sheet §6.1); they are not measured data.
/// Slip of 1–2 % between impacts follows Randall & Antoni (2011) §2 (restated in the reference
/// sheet §1.1).
pub(crate) fn defect_levels(condition: &Condition, slip: f64) -> DefectLevels {
    let s = clamp01(condition.severity);
    let none = DefectLevels {
        ultrasonic_g: 0.0,
        bearing_g: 0.0,
        pulse_g: 0.0,
        pulse_width_s: 1.5e-3,
        broadband_g: 0.0,
        onex_gain: 1.0,
        jitter: slip,
        amplitude_spread: 0.1,
    };
    match condition.stage.get() {
        0 => none,
        // Stage 1: sub-surface damage, only short ultrasonic bursts.
        1 => DefectLevels {
            ultrasonic_g: lerp(0.03, 0.10, s),
            ..none
        },
        // Stage 2: the bearing resonance rings; envelope tones appear.
        2 => DefectLevels {
            ultrasonic_g: lerp(0.12, 0.25, s),
            bearing_g: lerp(0.06, 0.25, s),
            ..none
        },
        // Stage 3: spall; low-frequency impact response gives discrete harmonics, floor rises.
        3 => DefectLevels {
            ultrasonic_g: lerp(0.25, 0.30, s),
            bearing_g: lerp(0.30, 0.80, s),
            pulse_g: lerp(0.03, 0.12, s),
            broadband_g: lerp(0.004, 0.02, s),
            onex_gain: lerp(1.0, 1.3, s),
            ..none
        },
        // Stage 4: impacts smear into broadband noise, tones fade, 1x rises with clearance.
        _ => DefectLevels {
            ultrasonic_g: lerp(0.25, 0.10, s),
            bearing_g: lerp(0.8, 1.0, s),
            pulse_g: lerp(0.10, 0.04, s),
            pulse_width_s: 3.0e-3,
            broadband_g: lerp(0.04, 0.12, s),
            onex_gain: lerp(1.6, 3.0, s),
            jitter: lerp(0.15, 0.35, s),
            amplitude_spread: lerp(0.6, 1.0, s),
        },
    }
}

/// Synthesise one acceleration reading, in g.
///
/// The waveform is the sum of
/// - 1x and 2x running-speed sinusoids (1x scaled up in stage 3–4);
/// - the machine's structural modes, each a band-pass-filtered white noise scaled to its RMS;
/// - the white sensor noise floor, plus extra broadband noise in stages 3–4;
/// - for stage ≥ 1, a train of impacts at the defect rate (BPFO, BPFI, 2×BSF or FTF times
///   `shaft_hz`) with random slip of 1–2 % between impacts. Each impact adds one precomputed
///   kernel: decaying sinusoids of the ultrasonic and (from stage 2) bearing resonances, and (from
///   stage 3) a one-cycle low-frequency pulse. Inner-race impacts are amplitude-modulated at 1x
///   (load zone), rolling-element impacts at FTF, and alternate between a stronger outer-race and
///   a weaker inner-race strike.
///
/// Components above [`BANDWIDTH_FRACTION`]·fs are not generated, so stage 1 is invisible at
/// sample rates that do not reach the ultrasonic resonance.
///
/// Deterministic: the same inputs and `seed` give the same samples, bit for bit.
pub fn simulate(
    params: &MachineParams,
    condition: &Condition,
    sample_rate_hz: f64,
    n_samples: usize,
    seed: u64,
) -> Result<Vec<f32>, SimError> {
    check_params(params, sample_rate_hz)?;
    let fs = sample_rate_hz;
    let mut x = vec![0.0_f64; n_samples];

    let mut phase_rng = rng_for(seed, Stream::Phases);
    let phase_1x: f64 = phase_rng.random::<f64>() * TAU;
    let phase_2x: f64 = phase_rng.random::<f64>() * TAU;
    // Slip drawn per reading in 1–2 % (reference sheet §1.1).
    let slip: f64 = phase_rng.random_range(0.01..0.02);
    let levels = defect_levels(condition, slip);

    add_running_speed(&mut x, params, levels.onex_gain, phase_1x, phase_2x, fs);
    add_structural(&mut x, params, fs, seed);
    add_white(
        &mut x,
        params.noise_floor_g,
        &mut rng_for(seed, Stream::Sensor),
    );
    if levels.broadband_g > 0.0 {
        add_white(
            &mut x,
            levels.broadband_g,
            &mut rng_for(seed, Stream::Broadband),
        );
    }
    if condition.stage.get() > 0 {
        add_impacts(&mut x, params, condition.fault, &levels, phase_1x, fs, seed);
    }
    Ok(x.into_iter().map(|v| v as f32).collect())
}

fn check_params(params: &MachineParams, fs: f64) -> Result<(), SimError> {
    let bad = |what: &str, v: f64| SimError::InvalidParameter(format!("{what} = {v}"));
    if !(fs.is_finite() && fs > 0.0) {
        return Err(bad("sample_rate_hz", fs));
    }
    if !(params.shaft_hz.is_finite() && params.shaft_hz > 0.0) {
        return Err(bad("shaft_hz", params.shaft_hz));
    }
    let f = params.factors;
    for (name, v) in [
        ("ftf", f.ftf),
        ("bsf", f.bsf),
        ("bpfo", f.bpfo),
        ("bpfi", f.bpfi),
    ] {
        if !(v.is_finite() && v > 0.0) {
            return Err(bad(name, v));
        }
    }
    let mut modes: Vec<(&str, Resonance)> = vec![
        ("bearing_resonance", params.bearing_resonance),
        ("ultrasonic_resonance", params.ultrasonic_resonance),
    ];
    modes.extend(
        params
            .structural
            .iter()
            .map(|m| ("structural mode", m.resonance)),
    );
    for (name, r) in modes {
        if !(r.freq_hz.is_finite()
            && r.freq_hz > 0.0
            && r.damping_ratio > 0.0
            && r.damping_ratio < 1.0)
        {
            return Err(SimError::InvalidParameter(format!(
                "{name}: frequency {} Hz, damping ratio {}",
                r.freq_hz, r.damping_ratio
            )));
        }
    }
    for (name, v) in [
        ("onex_g", params.onex_g),
        ("twox_g", params.twox_g),
        ("noise_floor_g", params.noise_floor_g),
    ] {
        if !(v.is_finite() && v >= 0.0) {
            return Err(bad(name, v));
        }
    }
    Ok(())
}

fn add_running_speed(x: &mut [f64], p: &MachineParams, gain: f64, ph1: f64, ph2: f64, fs: f64) {
    const BLOCK: usize = 4096;
    let a1 = p.onex_g * gain;
    let a2 = if 2.0 * p.shaft_hz < BANDWIDTH_FRACTION * fs {
        p.twox_g
    } else {
        0.0
    };
    // Rotating phasors instead of a sine per sample; re-anchored every block so rounding
    // cannot accumulate.
    let w1 = TAU * p.shaft_hz / fs;
    let (s1, c1) = w1.sin_cos();
    let (s2, c2) = (2.0 * w1).sin_cos();
    for (b, chunk) in x.chunks_mut(BLOCK).enumerate() {
        let th = w1 * (b * BLOCK) as f64;
        let (mut im1, mut re1) = (th + ph1).sin_cos();
        let (mut im2, mut re2) = (2.0 * th + ph2).sin_cos();
        for v in chunk {
            *v += a1 * im1 + a2 * im2;
            (re1, im1) = (re1 * c1 - im1 * s1, re1 * s1 + im1 * c1);
            (re2, im2) = (re2 * c2 - im2 * s2, re2 * s2 + im2 * c2);
        }
    }
}

fn add_white(x: &mut [f64], rms: f64, rng: &mut ChaCha8Rng) {
    if rms <= 0.0 {
        return;
    }
    for v in x.iter_mut() {
        let e: f64 = rng.sample(StandardNormal);
        *v += rms * e;
    }
}

/// Each structural mode: white noise through a constant-peak-gain two-pole band-pass
/// (the standard audio-cookbook biquad), then scaled to the mode's RMS.
fn add_structural(x: &mut [f64], p: &MachineParams, fs: f64, seed: u64) {
    if p.structural.is_empty() {
        return;
    }
    // One white excitation drives every mode: the modes sit in different bands, so sharing the
    // input is indistinguishable from independent inputs and halves the noise generation.
    let mut rng = rng_for(seed, Stream::Structural);
    let white: Vec<f64> = (0..x.len())
        .map(|_| rng.sample::<f64, _>(StandardNormal))
        .collect();
    let mut buf = vec![0.0_f64; x.len()];
    for mode in &p.structural {
        let r = mode.resonance;
        if r.freq_hz >= BANDWIDTH_FRACTION * fs || mode.rms_g <= 0.0 {
            continue;
        }
        buf.copy_from_slice(&white);
        Biquad::band_pass(r.freq_hz, 1.0 / (2.0 * r.damping_ratio), fs).run(&mut buf);
        let sum_sq: f64 = buf.iter().map(|y| y * y).sum();
        let rms = (sum_sq / buf.len().max(1) as f64).sqrt();
        if rms > 0.0 {
            let k = mode.rms_g / rms;
            for (v, b) in x.iter_mut().zip(&buf) {
                *v += k * b;
            }
        }
    }
}

/// Second-order section `y = b0·x + b1·x₁ + b2·x₂ − a1·y₁ − a2·y₂` (coefficients over a0).
#[derive(Clone, Copy)]
struct Biquad {
    b: [f64; 3],
    a: [f64; 2],
}

impl Biquad {
    /// Constant-peak-gain band-pass at `f_hz` with quality `q` (the audio-cookbook form).
    fn band_pass(f_hz: f64, q: f64, fs: f64) -> Self {
        let w0 = TAU * f_hz / fs;
        let alpha = w0.sin() / (2.0 * q);
        let a0 = 1.0 + alpha;
        Self {
            b: [alpha / a0, 0.0, -alpha / a0],
            a: [-2.0 * w0.cos() / a0, (1.0 - alpha) / a0],
        }
    }

    /// Second-order high-pass at `f_hz` with quality `q` (the audio-cookbook form).
    fn high_pass(f_hz: f64, q: f64, fs: f64) -> Self {
        let w0 = TAU * f_hz / fs;
        let alpha = w0.sin() / (2.0 * q);
        let a0 = 1.0 + alpha;
        let c = w0.cos();
        Self {
            b: [
                (1.0 + c) / (2.0 * a0),
                -(1.0 + c) / a0,
                (1.0 + c) / (2.0 * a0),
            ],
            a: [-2.0 * c / a0, (1.0 - alpha) / a0],
        }
    }

    /// Filter `x` in place from rest.
    fn run(self, x: &mut [f64]) {
        let (mut x1, mut x2, mut y1, mut y2) = (0.0, 0.0, 0.0, 0.0);
        for v in x {
            let y =
                self.b[0] * *v + self.b[1] * x1 + self.b[2] * x2 - self.a[0] * y1 - self.a[1] * y2;
            x2 = x1;
            x1 = *v;
            y2 = y1;
            y1 = y;
            *v = y;
        }
    }
}

/// Response of a mode to one impact, as seen by an accelerometer: a unit impulse through the
/// mode's band-pass (Q = 1/(2ζ)) and a gentle high-pass at a third of its frequency (the
/// transmission path passes no static or low-frequency content). Below the mode the response
/// falls as f³, so a stage-2 impact train leaves no discrete defect lines in the low-frequency
/// spectrum. Peak-normalised to 1 and truncated once decayed below about 1e-3.
pub(crate) fn ring_kernel(r: Resonance, fs: f64) -> Vec<f64> {
    let decay = r.damping_ratio * TAU * r.freq_hz;
    let len = ((1.2 * 1000.0_f64.ln() / decay) * fs).ceil() as usize + 8;
    let mut k = vec![0.0; len];
    k[0] = 1.0;
    Biquad::band_pass(r.freq_hz, 1.0 / (2.0 * r.damping_ratio), fs).run(&mut k);
    Biquad::high_pass(r.freq_hz / 3.0, std::f64::consts::FRAC_1_SQRT_2, fs).run(&mut k);
    let peak = k.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    if peak > 0.0 {
        k.into_iter().map(|v| v / peak).collect()
    } else {
        k
    }
}

/// The combined response added at every impact.
fn impact_kernel(p: &MachineParams, levels: &DefectLevels, fs: f64) -> Vec<f64> {
    let mut kernel: Vec<f64> = Vec::new();
    let mut add = |part: Vec<f64>, gain: f64| {
        if gain <= 0.0 {
            return;
        }
        if kernel.len() < part.len() {
            kernel.resize(part.len(), 0.0);
        }
        for (k, v) in kernel.iter_mut().zip(part) {
            *k += gain * v;
        }
    };
    let limit = BANDWIDTH_FRACTION * fs;
    for (res, gain) in [
        (p.ultrasonic_resonance, levels.ultrasonic_g),
        (p.bearing_resonance, levels.bearing_g),
    ] {
        if res.freq_hz < limit {
            add(ring_kernel(res, fs), gain);
        }
    }
    // One-cycle zero-mean pulse: its spectrum is broad and low (up to about 2/width), so a train
    // of them shows discrete defect harmonics in the ordinary spectrum.
    if levels.pulse_g > 0.0 && 1.0 / levels.pulse_width_s < limit {
        let n = (levels.pulse_width_s * fs).round().max(2.0) as usize;
        add(
            (0..n).map(|i| (TAU * i as f64 / n as f64).sin()).collect(),
            levels.pulse_g,
        );
    }
    kernel
}

fn add_impacts(
    x: &mut [f64],
    p: &MachineParams,
    fault: FaultKind,
    levels: &DefectLevels,
    phase_1x: f64,
    fs: f64,
    seed: u64,
) {
    let kernel = impact_kernel(p, levels, fs);
    let rate_hz = p.factors.defect_order(fault) * p.shaft_hz;
    if kernel.is_empty() || rate_hz.is_nan() || rate_hz <= 0.0 {
        return;
    }
    let mut rng = rng_for(seed, Stream::Impacts);
    let period = 1.0 / rate_hz;
    let kernel_s = kernel.len() as f64 / fs;
    let end_s = x.len() as f64 / fs;
    let ftf_hz = p.factors.ftf * p.shaft_hz;
    let cage_phase: f64 = rng.random::<f64>() * TAU;
    // Start early enough that ringing from impacts before the record begins is present.
    let mut t = -kernel_s - rng.random::<f64>() * period;
    let mut strike = 0_u64;
    while t < end_s {
        let modulation = match fault {
            // Load zone at a fixed angle relative to the 1x phase reference.
            FaultKind::InnerRace => {
                0.15 + 0.85 * (0.5 * (1.0 + (TAU * p.shaft_hz * t + phase_1x).cos())).powf(1.5)
            }
            FaultKind::RollingElement => {
                let zone = 0.2 + 0.8 * 0.5 * (1.0 + (TAU * ftf_hz * t + cage_phase).cos());
                // Alternate outer-race (stronger path to the sensor) and inner-race strikes.
                if strike.is_multiple_of(2) {
                    zone
                } else {
                    0.55 * zone
                }
            }
            FaultKind::OuterRace | FaultKind::Cage => 1.0,
        };
        let e: f64 = rng.sample(StandardNormal);
        let amp = modulation * (levels.amplitude_spread * e).exp();
        let start = (t * fs).round();
        let first = if start < 0.0 { (-start) as usize } else { 0 };
        let start_idx = start.max(0.0) as usize;
        if first < kernel.len() && start_idx < x.len() {
            for (v, k) in x[start_idx..].iter_mut().zip(&kernel[first..]) {
                *v += amp * k;
            }
        }
        let j: f64 = rng.sample(StandardNormal);
        t += period * (1.0 + levels.jitter * j).max(0.2);
        strike += 1;
    }
}
