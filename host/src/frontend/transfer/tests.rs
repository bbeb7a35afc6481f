//! Tests of `transfer`.

use super::*;

fn stage(s: AmpStage) -> Factored {
    Factored::of(&Ratio::of_stage(&s))
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * b.abs().max(1e-300)
}

#[test]
fn a_single_rc_stage_is_3_01_db_down_at_its_corner() {
    // |1/(1 + j)| = 1/√2, −3.0103 dB (common practice).
    let (r, c) = (47e3, 1e-6);
    let corner = 1.0 / (2.0 * PI * r * c);
    let lp = stage(AmpStage::LowPass { r_ohm: r, c_f: c });
    let db = 20.0 * lp.magnitude(corner).log10();
    assert!((db + 3.0103).abs() < 1e-4, "{db}");
    assert!((lp.phase_deg(corner) + 45.0).abs() < 1e-9);
    let hp = stage(AmpStage::HighPass { r_ohm: r, c_f: c });
    let db = 20.0 * hp.magnitude(corner).log10();
    assert!((db + 3.0103).abs() < 1e-4, "{db}");
    assert!((hp.phase_deg(corner) - 45.0).abs() < 1e-9);
}

#[test]
fn rc_corners_are_one_over_two_pi_rc() {
    // 1/(2π · 47 kΩ · 1 µF) ≈ 3.39 Hz; 1/(2π · 10 kΩ · 22 µF) ≈ 0.72 Hz
    // (common practice).
    let lp = stage(AmpStage::LowPass {
        r_ohm: 47e3,
        c_f: 1e-6,
    });
    assert!((lp.poles_hz()[0] - 3.39).abs() < 0.005);
    assert!(lp.zeros_rad_s.is_empty());
    let hp = stage(AmpStage::HighPass {
        r_ohm: 10e3,
        c_f: 22e-6,
    });
    assert!((hp.poles_hz()[0] - 0.72).abs() < 0.005);
    // High-pass: zero at 0, pole at −1/RC.
    assert_eq!(hp.zeros_rad_s, vec![0.0]);
    assert!(close(hp.poles_rad_s[0], -1.0 / (10e3 * 22e-6), 1e-12));
    assert!(hp.blocks_dc());
}

#[test]
fn amplifiers_have_their_textbook_gains_and_corners() {
    // Inverting −Rf/Rin, non-inverting 1 + Rf/Rin (common practice).
    let inv = stage(AmpStage::Inverting {
        rin_ohm: 1e3,
        rf_ohm: 470e3,
        cf_f: Some(100e-9),
        cin_f: None,
    });
    assert!(close(inv.dc_gain().unwrap(), -470.0, 1e-12));
    assert!(close(
        inv.poles_hz()[0],
        1.0 / (2.0 * PI * 470e3 * 100e-9),
        1e-12
    ));
    let (rin, rf, cin) = (1e3, 99e3, 10e-6);
    let ac = stage(AmpStage::NonInverting {
        rin_ohm: rin,
        rf_ohm: rf,
        cf_f: None,
        cin_f: Some(cin),
    });
    // Cin makes it 1 at DC, (1 + s(Rin+Rf)Cin)/(1 + sRinCin).
    assert!(close(ac.dc_gain().unwrap(), 1.0, 1e-12));
    assert!(close(ac.zeros_rad_s[0], -1.0 / ((rin + rf) * cin), 1e-12));
    assert!(close(ac.poles_rad_s[0], -1.0 / (rin * cin), 1e-12));
    assert!(close(ac.magnitude(1e4), 100.0, 1e-5));
    // Both capacitors: two real zeros, and the gain never exceeds 100.
    let both = stage(AmpStage::NonInverting {
        rin_ohm: rin,
        rf_ohm: rf,
        cf_f: Some(1e-9),
        cin_f: Some(cin),
    });
    assert_eq!(both.zeros_rad_s.len(), 2);
    assert!(both.zeros_rad_s.iter().all(|z| *z < 0.0));
    for f in [0.01, 1.0, 10.0, 1e3, 1e5] {
        assert!(both.magnitude(f) <= 100.0 * (1.0 + 1e-9), "{f}");
    }
    assert!(close(both.magnitude(1e9), 1.0, 1e-3));
}

#[test]
fn roots_of_a_quadratic_are_accurate_when_far_apart() {
    // (1 + s)(1 + 1e-8 s) = 1 + (1 + 1e-8)s + 1e-8 s².
    let r = roots(&[1.0, 1.0 + 1e-8, 1e-8]);
    let (mut a, mut b) = (r[0], r[1]);
    if a < b {
        std::mem::swap(&mut a, &mut b);
    }
    assert!(close(a, -1.0, 1e-12) && close(b, -1e8, 1e-12), "{r:?}");
}
