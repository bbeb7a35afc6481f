//! The bring-up checks' periodogram and the heart-band SNR built on it,
//! against scipy.signal.periodogram with its defaults (detrend "constant",
//! boxcar window, scaling "density"; scipy 1.x documentation), and the
//! Goertzel power at 50 and 60 Hz against numpy's direct sum
//! |Σ x[n] e^{-j 2π f n / fs}|². The signals are a pulse-like sum of sines
//! with pseudo-random noise, at odd and even lengths (the Nyquist bin).

use plethwire::bringup::snr::{heart_snr, HEART_HIGH_HZ, HEART_LOW_HZ};
use plethwire::bringup::spectrum::{goertzel_power, periodogram};
use plethwire::bringup::{AdcRange, Block};
use plethwire_checks::{need, needs, python, python_json};
use serde::{Deserialize, Serialize};
use std::f64::consts::PI;

const SCRIPT: &str = r#"
import json, sys
import numpy as np
from scipy.signal import periodogram
req = json.load(sys.stdin)
x = np.array(req["x"]); fs = req["fs"]
f, p = periodogram(x, fs)
band = (f >= req["lo"]) & (f <= req["hi"])
df = f[1] - f[0]
heart = p[band].sum() * df
rest = p[1:].sum() * df - heart
n = np.arange(len(x))
hum = [float(abs(np.sum((x - x.mean()) * np.exp(-2j * np.pi * h * n / fs))) ** 2) for h in (50.0, 60.0)]
json.dump({"psd": p.tolist(), "snr_db": float(10 * np.log10(heart / rest)), "hum": hum}, sys.stdout)
"#;

#[derive(Serialize)]
struct Request<'a> {
    x: &'a [f64],
    fs: f64,
    lo: f64,
    hi: f64,
}

#[derive(Deserialize)]
struct Answer {
    psd: Vec<f64>,
    snr_db: f64,
    hum: Vec<f64>,
}

/// A pulse at 1.3 Hz with its second harmonic, a slow wander, 50 Hz hum and
/// noise from a fixed linear congruential generator, on a DC of 2000.
fn test_signal(fs: f64, n: usize) -> Vec<f64> {
    let mut state: u64 = 0x2545_f491_4f6c_dd1d;
    (0..n)
        .map(|i| {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            let noise = (state >> 11) as f64 / (1u64 << 53) as f64 - 0.5;
            let t = i as f64 / fs;
            2000.0
                + 30.0 * (2.0 * PI * 1.3 * t).sin()
                + 8.0 * (2.0 * PI * 2.6 * t + 0.7).sin()
                + 15.0 * (2.0 * PI * 0.15 * t).sin()
                + 3.0 * (2.0 * PI * 50.0 * t).sin()
                + 6.0 * noise
        })
        .collect()
}

#[test]
fn periodogram_snr_and_hum_match_scipy() {
    if !need(needs::PYTHON, python().is_some()) {
        return;
    }
    for (fs, n) in [(250.0, 2500), (250.0, 2501), (200.0, 1999)] {
        let x = test_signal(fs, n);
        let request = Request {
            x: &x,
            fs,
            lo: HEART_LOW_HZ,
            hi: HEART_HIGH_HZ,
        };
        let answer: Answer = python_json(&["-c", SCRIPT], &request);
        let ours = periodogram(&x, fs);
        assert_eq!(ours.len(), answer.psd.len(), "bins at fs {fs}, n {n}");
        let peak = answer.psd.iter().cloned().fold(0.0, f64::max);
        for (k, (a, b)) in ours.iter().zip(&answer.psd).enumerate() {
            assert!(
                (a - b).abs() <= 1e-9 * peak,
                "bin {k} at fs {fs}, n {n}: {a} vs {b}"
            );
        }
        let adc = AdcRange::new(0.0, 4095.0, 1.0).unwrap();
        let snr = heart_snr(&Block::new(&x, fs, adc).unwrap()).unwrap();
        let db = snr.value.unwrap();
        assert!(
            (db - answer.snr_db).abs() < 1e-6,
            "SNR at fs {fs}, n {n}: {db} vs {}",
            answer.snr_db
        );
        let mean = x.iter().sum::<f64>() / n as f64;
        let centred: Vec<f64> = x.iter().map(|v| v - mean).collect();
        for (h, reference) in [50.0, 60.0].iter().zip(&answer.hum) {
            let ours = goertzel_power(&centred, *h, fs);
            let tol = 1e-7 * answer.hum[0];
            assert!(
                (ours - reference).abs() <= tol,
                "{h} Hz at fs {fs}, n {n}: {ours} vs {reference}"
            );
        }
    }
}
