//! An ECG-like train for the unit tests: P, Q, R, S and T waves as
//! Gaussian bumps with known R peaks, baseline wander and noise. Invented
//! test data only.

/// What the train looks like.
#[derive(Debug, Clone)]
pub struct TestEcg {
    pub fs: f64,
    pub bpm: f64,
    pub seconds: f64,
    pub inverted: bool,
    /// T-wave height as a share of the R wave.
    pub t_wave: f64,
    /// Every n-th QRS at 0.45 of the height (0: none).
    pub small_every: usize,
}

impl Default for TestEcg {
    fn default() -> Self {
        Self {
            fs: 250.0,
            bpm: 72.0,
            seconds: 40.0,
            inverted: false,
            t_wave: 0.3,
            small_every: 0,
        }
    }
}

/// The samples (mV) and the R-peak sample indices.
pub fn ecg_train(o: &TestEcg) -> (Vec<f64>, Vec<u64>) {
    let n = (o.seconds * o.fs) as usize;
    let mut x = vec![0.0; n];
    let mut truth = Vec::new();
    let mut seed: u64 = 12345;
    let mut noise = move || {
        seed = seed
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((seed >> 11) as f64 / (1u64 << 53) as f64) - 0.5
    };
    let rr = 60.0 / o.bpm;
    let mut t = 0.6;
    let mut k = 0;
    while t < o.seconds - 0.6 {
        let height = if o.small_every > 0 && k % o.small_every == o.small_every - 1 {
            0.45
        } else {
            1.0
        };
        // (offset s, width s, height) of P, Q, R, S, T.
        let waves = [
            (-0.16, 0.025, 0.12),
            (-0.025, 0.008, -0.15 * height),
            (0.0, 0.010, height),
            (0.03, 0.010, -0.25 * height),
            (0.25_f64.min(0.45 * rr), 0.045, o.t_wave),
        ];
        for (off, w, h) in waves {
            let centre = (t + off) * o.fs;
            let reach = (4.0 * w * o.fs) as isize;
            for i in (centre as isize - reach)..=(centre as isize + reach) {
                if (0..n as isize).contains(&i) {
                    let d = (i as f64 - centre) / (w * o.fs);
                    x[i as usize] += h * (-0.5 * d * d).exp();
                }
            }
        }
        truth.push((t * o.fs).round() as u64);
        // A little variability in the intervals, ±4 %.
        t += rr * (1.0 + 0.08 * noise());
        k += 1;
    }
    for (i, v) in x.iter_mut().enumerate() {
        let s = i as f64 / o.fs;
        let wander = 0.3 * (2.0 * std::f64::consts::PI * 0.2 * s).sin();
        let sign = if o.inverted { -1.0 } else { 1.0 };
        *v = sign * *v + wander + 0.02 * noise();
    }
    (x, truth)
}
