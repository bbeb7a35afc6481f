//! The periodogram the spectral checks share, from the Goertzel recurrence
//! (G. Goertzel, "An algorithm for the evaluation of finite trigonometric
//! series", Amer. Math. Monthly 65(1):34–35, 1958), one bin at a time.
//! The whole [`periodogram`] costs O(N²) (N / 2 bins of N steps: 3.1
//! million steps for 10 s at 250 Hz), so the live checks never take it:
//! they take only the heart band's bins ([`band_power_of`], some 33 bins
//! of N steps) and the total power from Parseval's theorem (the mean
//! square, one pass), [`GOERTZEL_STEPS`] counting the recurrence's steps.

/// |X(f)|² of `x` at frequency `f_hz`, the squared magnitude of its
/// discrete-time Fourier transform over the block (any f, not only a bin).
pub fn goertzel_power(x: &[f64], f_hz: f64, rate_hz: f64) -> f64 {
    GOERTZEL_STEPS.with(|c| c.set(c.get() + x.len() as u64));
    let w = 2.0 * std::f64::consts::PI * f_hz / rate_hz;
    let coeff = 2.0 * w.cos();
    let (mut s1, mut s2) = (0.0, 0.0);
    for &v in x {
        let s = v + coeff * s1 - s2;
        s2 = s1;
        s1 = s;
    }
    // |X|² from the last two states of the recurrence.
    (s1 * s1 + s2 * s2 - coeff * s1 * s2).max(0.0)
}

thread_local! {
    /// Steps of the Goertzel recurrence taken on this thread, one per
    /// sample per frequency: the work of the spectral checks, for counted
    /// budgets (`bringup::live`'s tests).
    pub static GOERTZEL_STEPS: std::cell::Cell<u64> = const { std::cell::Cell::new(0) };
}

/// The block with its mean removed, as the periodogram takes it.
pub fn centred(x: &[f64]) -> Vec<f64> {
    let mean = x.iter().sum::<f64>() / x.len() as f64;
    x.iter().map(|v| v - mean).collect()
}

/// Power (unit²) in the periodogram's bins from `lo_hz` to `hi_hz`, both
/// included, of the mean-removed block `centred` at `rate_hz`: the same
/// number as [`band_power`] over [`periodogram`], from those bins alone.
pub fn band_power_of(centred: &[f64], rate_hz: f64, lo_hz: f64, hi_hz: f64) -> f64 {
    let n = centred.len();
    let df = rate_hz / n as f64;
    let scale = df / (rate_hz * n as f64);
    (0..=n / 2)
        .filter(|k| (lo_hz..=hi_hz).contains(&(*k as f64 * df)))
        .map(|k| {
            let p = goertzel_power(centred, k as f64 * df, rate_hz) * scale;
            if k == 0 || (n % 2 == 0 && k == n / 2) {
                p
            } else {
                2.0 * p
            }
        })
        .sum()
}

/// Power (unit²) of every bin above DC of the mean-removed block: by
/// Parseval's theorem Σ|X_k|² = N Σx², so it is the mean square.
pub fn power_above_dc(centred: &[f64]) -> f64 {
    centred.iter().map(|v| v * v).sum::<f64>() / centred.len() as f64
}

/// The one-sided periodogram of `x` as a power spectral density (unit² per
/// Hz) at bins k × rate / N, k = 0 ..= N / 2, with the mean removed first and
/// no window: the same scaling as scipy.signal.periodogram with its
/// defaults (detrend "constant", boxcar window, scaling "density").
pub fn periodogram(x: &[f64], rate_hz: f64) -> Vec<f64> {
    let n = x.len();
    let mean = x.iter().sum::<f64>() / n as f64;
    let centred: Vec<f64> = x.iter().map(|v| v - mean).collect();
    let scale = 1.0 / (rate_hz * n as f64);
    (0..=n / 2)
        .map(|k| {
            let f = k as f64 * rate_hz / n as f64;
            let p = goertzel_power(&centred, f, rate_hz) * scale;
            // One-sided: every bin but DC and (for even N) Nyquist counts
            // its negative-frequency twin too.
            if k == 0 || (n % 2 == 0 && k == n / 2) {
                p
            } else {
                2.0 * p
            }
        })
        .collect()
}

/// Power (unit²) in the bins from `lo_hz` to `hi_hz`, both included, of a
/// periodogram of `n` samples at `rate_hz`.
pub fn band_power(psd: &[f64], n: usize, rate_hz: f64, lo_hz: f64, hi_hz: f64) -> f64 {
    let df = rate_hz / n as f64;
    psd.iter()
        .enumerate()
        .filter(|(k, _)| (lo_hz..=hi_hz).contains(&(*k as f64 * df)))
        .map(|(_, p)| p * df)
        .sum()
}
