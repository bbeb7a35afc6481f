//! The Q31 path against the f32 path and a double-precision reference, on
//! the case fixed point finds hardest: a 0.5 Hz high-pass at 100 to 500 Hz
//! with a large DC level (the LED's DC is ~100 times the pulse, common
//! practice).

use plethwire_dsp::design::butterworth_highpass;
use plethwire_dsp::filter::{from_q31, to_q31, Cascade, Delta, Df2t, Q31};

/// A finger-sensor-like input in full-scale units: 0.6 DC, slow wander,
/// a 1 % pulse at 75 bpm, deterministic.
fn input(fs: f64, seconds: f64) -> Vec<f32> {
    let n = (fs * seconds) as usize;
    (0..n)
        .map(|i| {
            let t = i as f64 / fs;
            let beat = (2.0 * core::f64::consts::PI * 1.25 * t).sin().max(0.0);
            (0.6 + 0.1 * (2.0 * core::f64::consts::PI * 0.1 * t).sin() + 0.006 * beat.powi(3))
                as f32
        })
        .collect()
}

/// Stated bound: after the first second, the Q31 output stays within
/// 2e-6 of full scale of the f32 (`Delta`) output, and within 1e-6 of the
/// double-precision result.
const Q31_VS_F32: f64 = 2e-6;
const Q31_VS_F64: f64 = 1e-6;

#[test]
fn q31_high_pass_tracks_f32_within_the_stated_bound() {
    for fs in [100.0, 200.0, 250.0, 500.0] {
        for order in [1, 2, 4] {
            let d = butterworth_highpass(order, 0.5, fs).unwrap();
            let mut q: Cascade<Q31, 2> = d.cascade().unwrap();
            let mut f: Cascade<Delta, 2> = d.cascade().unwrap();
            let mut r: Cascade<Df2t<f64>, 2> = d.cascade().unwrap();
            let x = input(fs, 20.0);
            let (mut worst_f32, mut worst_f64) = (0.0f64, 0.0f64);
            for (i, &v) in x.iter().enumerate() {
                let yq = from_q31(q.process(to_q31(v))) as f64;
                let yf = f.process(v) as f64;
                let yr = r.process(v as f64);
                if i as f64 >= fs {
                    worst_f32 = worst_f32.max((yq - yf).abs());
                    worst_f64 = worst_f64.max((yq - yr).abs());
                }
            }
            eprintln!("fs {fs} order {order}: |Q31 - f32| <= {worst_f32:.2e}, |Q31 - f64| <= {worst_f64:.2e}");
            assert!(
                worst_f32 <= Q31_VS_F32,
                "fs {fs} order {order}: {worst_f32:e}"
            );
            assert!(
                worst_f64 <= Q31_VS_F64,
                "fs {fs} order {order}: {worst_f64:e}"
            );
        }
    }
}

#[test]
fn q31_high_pass_output_settles_to_zero_for_a_constant_input() {
    // b quantised as k·[1, −2, 1]: the DC zero is exact, so a constant
    // input leaves at most a couple of LSBs of rounding in the output.
    let d = butterworth_highpass(2, 0.5, 500.0).unwrap();
    let c: Cascade<Q31, 1> = d.cascade().unwrap();
    let s = c.sections()[0];
    assert_eq!(s.b[0] as i64 + s.b[1] as i64 + s.b[2] as i64, 0);
    let mut c = c;
    let x = to_q31(0.75);
    let mut last = 0;
    for _ in 0..50_000 {
        last = c.process(x);
    }
    assert!(last.abs() <= 2, "residual {last} LSB");
}

#[test]
fn q31_saturates_instead_of_wrapping() {
    // A low-pass with gain 1 fed full scale must not wrap to the other rail.
    let d = plethwire_dsp::design::butterworth_lowpass(2, 10.0, 100.0).unwrap();
    let mut c: Cascade<Q31, 1> = d.cascade().unwrap();
    for i in 0..2000 {
        let x = if (i / 50) % 2 == 0 {
            i32::MAX
        } else {
            i32::MIN
        };
        let y = c.process(x);
        // Overshoot of a step in a Butterworth low-pass is ~4 %, so the
        // output clips at the rails; the sign must follow the input.
        if i % 50 > 25 {
            assert_eq!(y.signum(), x.signum(), "sample {i}: {y}");
        }
    }
}
