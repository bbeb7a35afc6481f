//! The baseline's band-pass (`design(fs)` of `tests/scipy/baseline_beats.py`:
//! scipy.signal.butter(2, [0.5, 8], 'bandpass', fs=fs, output='sos')) is
//! the same filter as `plethwire_dsp::design::butterworth_bandpass` with
//! the same corners: equal complex responses at the rates of the shared
//! recordings, so the baseline and the pipeline's band differ in how they
//! are run, not in the design.

use plethwire_checks::{baseline::baseline_script, need, needs, python, python_json};
use plethwire_dsp::design::butterworth_bandpass;
use plethwire_dsp::filter::Biquad;
use plethwire_dsp::response::response;

const RATES_HZ: [f64; 3] = [125.0, 300.0, 30.0];

#[test]
fn the_baseline_band_pass_is_our_butterworth_design() {
    if !need(needs::PYTHON, python().is_some()) {
        return;
    }
    let dir = baseline_script().parent().unwrap().display().to_string();
    let code = format!(
        "import json, sys\nsys.path.insert(0, {dir:?})\nimport baseline_beats as b\n\
         rates = json.load(sys.stdin)\n\
         print(json.dumps([b.design(fs).tolist() for fs in rates]))"
    );
    let designs: Vec<Vec<[f64; 6]>> = python_json(&["-c", code.as_str()], &RATES_HZ);
    for (fs, sos) in RATES_HZ.iter().zip(designs) {
        let scipy: Vec<Biquad<f64>> = sos
            .iter()
            .map(|s| {
                assert_eq!(s[3], 1.0, "scipy normalises a0");
                Biquad {
                    b0: s[0],
                    b1: s[1],
                    b2: s[2],
                    a1: s[4],
                    a2: s[5],
                }
            })
            .collect();
        let ours = butterworth_bandpass(2, 0.5, 8.0, *fs).unwrap();
        assert_eq!(ours.len(), scipy.len(), "{fs} Hz: sections");
        for f in [0.1, 0.5, 1.0, 2.0, 4.0, 8.0, 12.0] {
            let (a, b) = (
                response(&scipy, f, *fs).h,
                response(ours.sections(), f, *fs).h,
            );
            let err = ((a.re - b.re).powi(2) + (a.im - b.im).powi(2)).sqrt();
            // Both are float64 designs of the same formula: agreement to
            // rounding (1e-9 leaves room for the bilinear transform's
            // conditioning at 0.5 Hz, 300 Hz).
            assert!(err < 1e-9, "{fs} Hz, {f} Hz: scipy {a:?}, plethwire {b:?}");
        }
    }
}
