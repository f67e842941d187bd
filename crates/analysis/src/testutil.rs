//! Deterministic test signals (test builds only).

/// Gaussian generator: xorshift64* with Box–Muller. Deterministic for a seed.
pub struct Gauss {
    state: u64,
    spare: Option<f64>,
}

impl Gauss {
    pub fn new(seed: u64) -> Self {
        Self {
            state: seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) | 1,
            spare: None,
        }
    }

    fn uniform(&mut self) -> f64 {
        self.state ^= self.state >> 12;
        self.state ^= self.state << 25;
        self.state ^= self.state >> 27;
        let v = self.state.wrapping_mul(0x2545_F491_4F6C_DD1D);
        ((v >> 11) as f64 + 0.5) / (1_u64 << 53) as f64
    }

    /// Standard normal sample.
    pub fn next(&mut self) -> f64 {
        if let Some(s) = self.spare.take() {
            return s;
        }
        let r = (-2.0 * self.uniform().ln()).sqrt();
        let t = std::f64::consts::TAU * self.uniform();
        self.spare = Some(r * t.sin());
        r * t.cos()
    }
}

/// Impacts at `rate_hz` ringing a `resonance_hz` mode (damping ratio 2 %), plus Gaussian noise whose RMS is
/// `noise_ratio` times the impact signal's RMS. Returns the samples and the sample rate.
pub fn impulse_train(
    rate_hz: f64,
    resonance_hz: f64,
    fs: f64,
    secs: f64,
    noise_ratio: f64,
    seed: u64,
) -> (Vec<f64>, f64) {
    let n = (fs * secs) as usize;
    let mut x = vec![0.0; n];
    let ring = (0.02 * fs) as usize;
    let wn = std::f64::consts::TAU * resonance_hz;
    let mut t0 = 0.0;
    while t0 < secs {
        let start = (t0 * fs).ceil() as usize;
        for j in 0..ring {
            let i = start + j;
            if i >= n {
                break;
            }
            let t = i as f64 / fs - t0;
            x[i] += (-0.02 * wn * t).exp() * (wn * t).sin();
        }
        t0 += 1.0 / rate_hz;
    }
    let rms = crate::indicators::rms(&x);
    let mut g = Gauss::new(seed);
    for v in &mut x {
        *v += noise_ratio * rms * g.next();
    }
    (x, fs)
}
