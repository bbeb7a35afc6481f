//! Time-domain HRV of `plethwire_dsp::hrv` checked against numpy on random
//! interval series with random bad beats, both the slice function and the
//! sliding window.
//!
//! The reference values are computed by `tests/scipy/hrv_reference.py` each
//! time this test runs. Sources: numpy `std(ddof=1)`, `diff`, `mean`, `sqrt`
//! (numpy documentation) applied with the Task Force of the ESC and NASPE
//! 1996 definitions (Eur Heart J 17:354).

use plethwire_checks::{need, needs, python, python_json, repo_root};
use plethwire_dsp::hrv::{hrv, HrvStats, HrvWindow};
use serde::{Deserialize, Serialize};

#[derive(Serialize)]
struct CaseRequest {
    n: usize,
    mean_ms: f64,
    sd_ms: f64,
    bad_fraction: f64,
}

#[derive(Serialize)]
struct Request {
    seed: u64,
    cases: Vec<CaseRequest>,
}

#[derive(Deserialize)]
struct Reference {
    intervals_ms: Vec<f64>,
    good: Vec<bool>,
    nn_count: usize,
    diff_count: usize,
    nn50: usize,
    mean_nn_ms: Option<f64>,
    sdnn_ms: Option<f64>,
    rmssd_ms: Option<f64>,
    pnn50_percent: Option<f64>,
}

#[derive(Deserialize)]
struct Answer {
    cases: Vec<Reference>,
}

/// Relative agreement allowed: the outputs are f32 (about 6e-8 relative),
/// the sums inside are f64.
const REL_TOL: f64 = 2e-7;

fn agree(what: &str, case: usize, got: Option<f32>, want: Option<f64>) {
    match (got, want) {
        (None, None) => {}
        (Some(g), Some(w)) => {
            let g = g as f64;
            assert!(
                (g - w).abs() <= REL_TOL * w.abs().max(1.0),
                "case {case} {what}: plethwire {g}, numpy {w}"
            );
        }
        _ => panic!("case {case} {what}: plethwire {got:?}, numpy {want:?}"),
    }
}

fn compare(case: usize, s: &HrvStats, r: &Reference) {
    assert_eq!(
        (s.nn_count, s.diff_count, s.nn50),
        (r.nn_count, r.diff_count, r.nn50),
        "case {case}: counts"
    );
    agree("mean NN", case, s.mean_nn_ms, r.mean_nn_ms);
    agree("SDNN", case, s.sdnn_ms, r.sdnn_ms);
    agree("RMSSD", case, s.rmssd_ms, r.rmssd_ms);
    agree("pNN50", case, s.pnn50_percent, r.pnn50_percent);
}

#[test]
fn hrv_matches_numpy() {
    if !need(needs::PYTHON, python().is_some()) {
        return;
    }
    let shapes = [
        // (count, mean ms, SD ms, share of bad beats)
        (0, 800.0, 40.0, 0.0),
        (1, 800.0, 40.0, 0.0),
        (2, 800.0, 40.0, 0.0),
        (5, 950.0, 60.0, 0.5),
        (64, 800.0, 40.0, 0.0),
        (64, 640.0, 45.0, 0.1),
        (300, 1000.0, 80.0, 0.2),
        (300, 450.0, 15.0, 0.05),
        (2000, 850.0, 120.0, 0.3),
    ];
    let request = Request {
        seed: 20_240_917,
        cases: shapes
            .iter()
            .map(|&(n, mean_ms, sd_ms, bad_fraction)| CaseRequest {
                n,
                mean_ms,
                sd_ms,
                bad_fraction,
            })
            .collect(),
    };
    let script = repo_root().join("tests/scipy/hrv_reference.py");
    let answer: Answer = python_json(&[script], &request);
    assert_eq!(answer.cases.len(), shapes.len());

    for (i, r) in answer.cases.iter().enumerate() {
        // numpy sent float32-rounded values, so this conversion is exact.
        let x: Vec<f32> = r.intervals_ms.iter().map(|&v| v as f32).collect();
        let s = hrv(&x, Some(&r.good)).expect("one flag per interval");
        compare(i, &s, r);

        // The window holding the whole series gives the same numbers.
        if x.len() <= 300 {
            let mut w = HrvWindow::<300>::new();
            for (&v, &g) in x.iter().zip(&r.good) {
                w.push(v, g);
            }
            assert_eq!(w.stats(), s, "case {i}: window differs from slice");
        }
    }
}
