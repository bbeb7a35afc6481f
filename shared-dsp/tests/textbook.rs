//! Published worked values and textbook properties of the designs.

use plethwire_dsp::design::{
    butterworth_bandpass, butterworth_highpass, butterworth_lowpass, dc_blocker, notch, MAX_ORDER,
};
use plethwire_dsp::filter::{Cascade, Delta, Df1, Df2t, Section, Q31};
use plethwire_dsp::response::response;
use plethwire_dsp::{Design, DesignError};

/// −3.0103 dB: |H| = 1/√2 at a Butterworth corner (any DSP handbook,
/// e.g. Oppenheim & Schafer, Discrete-Time Signal Processing, §7.2).
const CORNER_DB: f64 = -3.010_299_956_639_812;

#[test]
fn scipy_worked_value_bandpass_half_to_8_hz_at_100_hz() {
    // scipy.signal.butter(2, [0.5, 8], 'bandpass', fs=100, output='sos'),
    // values quoted to 10 significant digits in the project's reference notes.
    let want = [
        [
            0.0412535372,
            0.0825070745,
            0.0412535372,
            1.0,
            -1.365873344,
            0.5369260461,
        ],
        [1.0, -2.0, 1.0, 1.0, -1.9561871344, 0.9572675753],
    ];
    let d = butterworth_bandpass(2, 0.5, 8.0, 100.0).unwrap();
    assert_eq!(d.len(), 2);
    for (s, w) in d.sections().iter().zip(want) {
        for (got, want) in s.to_sos_row().iter().zip(w) {
            assert!((got - want).abs() < 1e-9, "{got} vs {want}");
        }
    }
}

fn designs_at(fs: f64) -> Vec<(String, Design, Vec<f64>)> {
    let mut out = Vec::new();
    for order in 1..=MAX_ORDER {
        for fc in [0.5, 3.7, 0.3 * fs] {
            out.push((
                format!("low-pass order {order} {fc} Hz fs {fs}"),
                butterworth_lowpass(order, fc, fs).unwrap(),
                vec![fc],
            ));
            out.push((
                format!("high-pass order {order} {fc} Hz fs {fs}"),
                butterworth_highpass(order, fc, fs).unwrap(),
                vec![fc],
            ));
        }
        out.push((
            format!("band-pass order {order} 0.5-8 Hz fs {fs}"),
            butterworth_bandpass(order, 0.5, 8.0, fs).unwrap(),
            vec![0.5, 8.0],
        ));
    }
    out
}

#[test]
fn every_butterworth_corner_is_minus_3_01_db() {
    for fs in [25.0, 100.0, 300.0, 1000.0] {
        for (name, d, corners) in designs_at(fs) {
            for fc in corners {
                let db = response(d.sections(), fc, fs).magnitude_db;
                assert!((db - CORNER_DB).abs() < 1e-6, "{name}: {db} dB at {fc} Hz");
            }
        }
    }
}

fn realised_dc_db<S: Section, const N: usize>(d: &Design, fs: f64) -> f64 {
    let c: Cascade<S, N> = d.cascade().unwrap();
    response(&c.realised(), 0.0, fs).magnitude_db
}

#[test]
fn high_pass_blocks_dc_below_minus_120_db_in_every_number_format() {
    // Common practice: a DC-blocking stage must not let the LED's DC level
    // through; quantised coefficients must keep the zero at DC.
    for fs in [25.0, 100.0, 300.0, 500.0, 1000.0] {
        for order in 1..=MAX_ORDER {
            let d = butterworth_highpass(order, 0.5, fs).unwrap();
            for (form, db) in [
                ("f64", response(d.sections(), 0.0, fs).magnitude_db),
                ("Delta", realised_dc_db::<Delta, 4>(&d, fs)),
                ("Df2t", realised_dc_db::<Df2t, 4>(&d, fs)),
                ("Q31", realised_dc_db::<Q31, 4>(&d, fs)),
            ] {
                assert!(db < -120.0, "order {order} fs {fs} {form}: {db} dB at DC");
            }
        }
        let b = dc_blocker(0.5, fs).unwrap();
        assert!(realised_dc_db::<Q31, 1>(&b, fs) < -120.0);
    }
}

#[test]
fn notch_is_at_least_40_db_deep_at_its_centre() {
    for (fs, f0) in [(250.0, 50.0), (250.0, 60.0), (1000.0, 50.0), (500.0, 60.0)] {
        for q in [5.0, 30.0] {
            let d = notch(f0, q, fs).unwrap();
            let f64_db = response(d.sections(), f0, fs).magnitude_db;
            let f32_db = realised_centre_db(&d, f0, fs);
            assert!(
                f64_db < -40.0 && f32_db < -40.0,
                "{f0} Hz Q {q}: {f64_db} / {f32_db} dB"
            );
            // Unity gain far from the notch (iirnotch's normalisation).
            let dc = response(d.sections(), 0.0, fs).magnitude_db;
            assert!(dc.abs() < 1e-9, "DC gain {dc} dB");
        }
    }
}

fn realised_centre_db(d: &Design, f0: f64, fs: f64) -> f64 {
    let c: Cascade<Delta, 1> = d.cascade().unwrap();
    response(&c.realised(), f0, fs).magnitude_db
}

#[test]
fn low_pass_passes_dc_at_0_db_within_1e_6() {
    for fs in [25.0, 100.0, 1000.0] {
        for order in 1..=MAX_ORDER {
            for fc in [0.5, 8.0, 0.4 * fs] {
                let d = butterworth_lowpass(order, fc, fs).unwrap();
                let db = response(d.sections(), 0.0, fs).magnitude_db;
                assert!(db.abs() < 1e-6, "order {order} {fc} Hz fs {fs}: {db} dB");
                let c: Cascade<Delta, 4> = d.cascade().unwrap();
                let r = response(&c.realised(), 0.0, fs).magnitude_db;
                assert!(r.abs() < 1e-5, "f32 order {order} {fc} Hz fs {fs}: {r} dB");
            }
        }
    }
}

#[test]
fn bad_specs_are_refused_with_the_right_reason() {
    use DesignError::*;
    assert_eq!(
        butterworth_lowpass(2, 50.0, 100.0),
        Err(CornerAtOrAboveNyquist)
    );
    assert_eq!(
        butterworth_lowpass(2, 60.0, 100.0),
        Err(CornerAtOrAboveNyquist)
    );
    assert_eq!(butterworth_lowpass(2, 0.0, 100.0), Err(NonPositiveCorner));
    assert_eq!(butterworth_highpass(2, -1.0, 100.0), Err(NonPositiveCorner));
    assert_eq!(
        butterworth_highpass(2, f64::NAN, 100.0),
        Err(NonPositiveCorner)
    );
    assert_eq!(
        butterworth_bandpass(2, 8.0, 0.5, 100.0),
        Err(BandEdgesReversed)
    );
    assert_eq!(
        butterworth_bandpass(2, 5.0, 5.0, 100.0),
        Err(BandEdgesReversed)
    );
    assert_eq!(butterworth_lowpass(0, 5.0, 100.0), Err(OrderOutOfRange));
    assert_eq!(butterworth_lowpass(9, 5.0, 100.0), Err(OrderOutOfRange));
    assert_eq!(butterworth_lowpass(2, 5.0, 0.0), Err(InvalidSampleRate));
    assert_eq!(notch(50.0, 0.0, 250.0), Err(InvalidQuality));
    assert_eq!(notch(50.0, 30.0, 100.0), Err(CornerAtOrAboveNyquist));
    // 8 band-pass sections fit; a cascade of 4 cannot hold them.
    let d = butterworth_bandpass(8, 0.5, 8.0, 100.0).unwrap();
    assert_eq!(d.cascade::<Delta, 4>().err(), Some(TooManySections));
    // A section with a pole on the unit circle is refused.
    let on_circle = plethwire_dsp::filter::Biquad {
        b0: 1.0,
        b1: 0.0,
        b2: 0.0,
        a1: -2.0,
        a2: 1.0,
    };
    assert_eq!(Design::from_sections(&[on_circle]), Err(Unstable));
    // A pole so close to z = 1 that f32 rounds it onto the circle.
    let nearly = plethwire_dsp::filter::Biquad {
        b0: 1.0,
        b1: 0.0,
        b2: 0.0,
        a1: -(1.0 + 1e-9),
        a2: 0.0,
    };
    let nearly = Design::from_sections(&[plethwire_dsp::filter::Biquad {
        a1: -(1.0 - 1e-9),
        ..nearly
    }])
    .unwrap();
    assert_eq!(nearly.cascade::<Df1, 1>().err(), Some(Unstable));
}

#[test]
fn settling_from_the_first_sample_removes_the_start_up_transient() {
    // A 2 V offset would ring through a 0.5 Hz high-pass for seconds from a
    // zero state; settled on the first sample, the output starts at rest.
    let fs = 100.0;
    let d = butterworth_bandpass(2, 0.5, 8.0, fs).unwrap();
    let mut f: Cascade<Delta, 2> = d.cascade().unwrap();
    let y0 = f.settle(2.0);
    assert!(y0.abs() < 1e-6);
    for _ in 0..200 {
        assert!(f.process(2.0).abs() < 1e-5);
    }
}

#[test]
fn group_delay_is_finite_on_a_zero_of_the_unit_circle() {
    // A zero on the unit circle adds half a sample of group delay on both
    // sides of it (Oppenheim & Schafer §5.3); at the zero itself the limit
    // is the same, not rounding noise.
    let fs = 250.0;
    let d = notch(50.0, 30.0, fs).unwrap();
    let at = response(d.sections(), 50.0, fs).group_delay_s * fs;
    // Just beside the zero the direct formula is well conditioned; the
    // delay's peak is flat there, so both sides agree with the limit.
    let above = response(d.sections(), 50.0 + 1e-3, fs).group_delay_s * fs;
    let below = response(d.sections(), 50.0 - 1e-3, fs).group_delay_s * fs;
    let near = 0.5 * (above + below);
    assert!(at.is_finite() && (at - near).abs() < 1e-3, "{at} vs {near}");
    let lp = butterworth_lowpass(2, 20.0, 100.0).unwrap();
    let at = response(lp.sections(), 50.0, 100.0).group_delay_s;
    let near = response(lp.sections(), 50.0 - 1e-2, 100.0).group_delay_s;
    assert!((at - near).abs() < 1e-6, "{at} vs {near}");
}
