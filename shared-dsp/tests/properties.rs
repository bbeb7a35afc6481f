//! Property tests over random filter specifications.

use plethwire_dsp::design::{
    butterworth_bandpass, butterworth_highpass, butterworth_lowpass, dc_blocker, notch,
};
use plethwire_dsp::filter::{Cascade, Delta, Df1, Df2t, Section};
use plethwire_dsp::{Design, DesignError};
use proptest::prelude::*;

#[derive(Debug, Clone)]
enum Spec {
    Low(usize, f64),
    High(usize, f64),
    Band(usize, f64, f64),
    Notch(f64, f64),
    DcBlock(f64),
}

/// Corners as fractions of the sample rate, from 1e-4·fs up to 0.45·fs,
/// drawn log-uniformly; rates 25 to 1000 Hz. Some fall outside the valid
/// range on purpose (a band edge above Nyquist, reversed edges).
fn spec() -> impl Strategy<Value = (Spec, f64)> {
    let fs = 25.0..1000.0f64;
    let frac = (-4.0..-0.3f64).prop_map(|e| 10f64.powf(e));
    let order = 1..=8usize;
    (fs, order, frac.clone(), frac, 0.3..60.0f64, 0..5u8).prop_map(|(fs, order, a, b, q, kind)| {
        let s = match kind {
            0 => Spec::Low(order, a * fs),
            1 => Spec::High(order, a * fs),
            2 => Spec::Band(order, a * fs, b * fs),
            3 => Spec::Notch(a * fs, q),
            _ => Spec::DcBlock(a * fs),
        };
        (s, fs)
    })
}

fn design(s: &Spec, fs: f64) -> Result<Design, DesignError> {
    match *s {
        Spec::Low(o, f) => butterworth_lowpass(o, f, fs),
        Spec::High(o, f) => butterworth_highpass(o, f, fs),
        Spec::Band(o, a, b) => butterworth_bandpass(o, a, b, fs),
        Spec::Notch(f, q) => notch(f, q, fs),
        Spec::DcBlock(f) => dc_blocker(f, fs),
    }
}

/// Sum of |h[n]| of the double-precision cascade: the exact bound on
/// |y| for inputs bounded by 1 (bounded input, bounded output).
fn l1_norm(d: &Design) -> f64 {
    let mut f: Cascade<Df2t<f64>, 8> = d.cascade().unwrap();
    let (mut sum, mut quiet) = (0.0, 0usize);
    for n in 0..2_000_000 {
        let h = f.process(if n == 0 { 1.0 } else { 0.0 }).abs();
        sum += h;
        quiet = if h < 1e-12 * sum.max(1e-300) {
            quiet + 1
        } else {
            0
        };
        if quiet > 1000 {
            break;
        }
    }
    sum
}

fn random_input(seed: u64, n: usize) -> Vec<f64> {
    // xorshift: deterministic and dependency-free, values in [−1, 1].
    let mut s = seed | 1;
    (0..n)
        .map(|_| {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            (s >> 11) as f64 / (1u64 << 52) as f64 - 1.0
        })
        .collect()
}

fn run<S: Section<Sample = T>, T: Copy, const N: usize>(d: &Design, x: &[T]) -> Vec<T> {
    let mut f: Cascade<S, N> = d.cascade().unwrap();
    x.iter().map(|&v| f.process(v)).collect()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    /// Every design that returns Ok is strictly stable, in double precision
    /// and after rounding to each f32 structure (or that rounding is
    /// refused with `Unstable`, never silently accepted).
    #[test]
    fn every_accepted_design_is_stable((s, fs) in spec()) {
        if let Ok(d) = design(&s, fs) {
            prop_assert!(!d.is_empty());
            for sec in d.sections() {
                prop_assert!(sec.is_stable(), "{s:?} fs {fs}: {sec:?}");
            }
            for r in [d.cascade::<Delta, 8>().map(|c| c.realised()),
                      d.cascade::<Df2t, 8>().map(|c| c.realised())] {
                match r {
                    Ok(secs) => for sec in secs { prop_assert!(sec.is_stable()) },
                    Err(e) => prop_assert_eq!(e, DesignError::Unstable),
                }
            }
        }
    }

    /// Bounded input gives bounded output: |y| never exceeds the L1 norm of
    /// the impulse response (times the input bound), with 1 % slack for the
    /// f32 form. Corners here are kept at or above 1e-3·fs, where f32
    /// rounding noise is far below that slack.
    #[test]
    fn bounded_input_gives_bounded_output((s, fs) in spec(), seed in any::<u64>()) {
        let d = match design(&s, fs) { Ok(d) => d, Err(_) => return Ok(()) };
        let low = match s { Spec::Low(_, f) | Spec::High(_, f) | Spec::DcBlock(f) | Spec::Notch(f, _) => f,
                            Spec::Band(_, a, _) => a };
        prop_assume!(low >= 1e-3 * fs);
        let bound = l1_norm(&d);
        let x = random_input(seed, 3000);
        let x32: Vec<f32> = x.iter().map(|&v| v as f32).collect();
        let y64 = run::<Df2t<f64>, f64, 8>(&d, &x);
        let y32 = run::<Delta, f32, 8>(&d, &x32);
        for (a, b) in y64.iter().zip(&y32) {
            prop_assert!(a.abs() <= bound * (1.0 + 1e-9), "{s:?}: |y| {a} > {bound}");
            prop_assert!((*b as f64).abs() <= bound * 1.01 + 1e-6, "{s:?}: f32 |y| {b} > {bound}");
        }
    }

    /// Direct form I and transposed direct form II compute the same filter:
    /// in f64 within 1e-9 of the output's bound, in f32 within 2e-3 of it
    /// (corners at or above 1e-2·fs, orders up to 4; below that f32
    /// DF2T's coefficient rounding dominates, which is why `Delta` exists).
    #[test]
    fn df1_and_df2t_agree((s, fs) in spec(), seed in any::<u64>()) {
        let d = match design(&s, fs) { Ok(d) => d, Err(_) => return Ok(()) };
        let bound = l1_norm(&d);
        let x = random_input(seed, 2000);
        let a = run::<Df1<f64>, f64, 8>(&d, &x);
        let b = run::<Df2t<f64>, f64, 8>(&d, &x);
        for (p, q) in a.iter().zip(&b) {
            prop_assert!((p - q).abs() <= 1e-9 * bound, "{s:?} fs {fs}: {p} vs {q}");
        }
        let (low, order) = match s {
            Spec::Low(o, f) | Spec::High(o, f) => (f, o),
            Spec::Band(o, f, _) => (f, o),
            Spec::Notch(f, _) | Spec::DcBlock(f) => (f, 2),
        };
        if low >= 1e-2 * fs && order <= 4 {
            let x32: Vec<f32> = x.iter().map(|&v| v as f32).collect();
            let a = run::<Df1, f32, 8>(&d, &x32);
            let b = run::<Df2t, f32, 8>(&d, &x32);
            for (p, q) in a.iter().zip(&b) {
                prop_assert!(((p - q) as f64).abs() <= 2e-3 * bound, "{s:?} fs {fs}: {p} vs {q}");
            }
        }
    }
}
