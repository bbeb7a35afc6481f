//! `plethwire filter --json`: one document that serde_json reads, Butterworth
//! band edges at −3.01 dB, and response rows equal to plethwire-dsp's
//! `response()` of the design and of the board's cascade.

mod common;

use common::{plethwire, stdout_of_success};
use plethwire_dsp::design::{butterworth_bandpass, dc_blocker, MAX_SECTIONS};
use plethwire_dsp::filter::{Biquad, Delta};
use plethwire_dsp::response::response;
use plethwire_dsp::Design;
use serde_json::Value;

fn json(args: &[&str]) -> Value {
    let dir = tempfile::tempdir().unwrap();
    let mut all = vec!["filter", "--json"];
    all.extend_from_slice(args);
    let text = stdout_of_success(&plethwire(dir.path(), &all));
    serde_json::from_str(&text).expect("one JSON document")
}

fn row_at(doc: &Value, f: f64) -> &Value {
    doc["response"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["frequency_hz"] == f)
        .unwrap_or_else(|| panic!("no row at {f} Hz"))
}

#[test]
fn band_edges_are_three_decibels_down_for_any_order() {
    // A Butterworth band-pass's edges are its half-power points,
    // 20·log10(1/√2) = −3.0103 dB, whatever the order.
    for (order, rate, low, high) in [
        ("1", "100", 0.5, 8.0),
        ("2", "250", 0.5, 8.0),
        ("4", "1000", 0.7, 3.5),
        ("8", "500", 0.5, 12.0),
    ] {
        let band = format!("{low}:{high}");
        let doc = json(&[
            "--rate",
            rate,
            "--band",
            &band,
            "--order",
            order,
            "--no-plot",
        ]);
        for f in [low, high] {
            for who in ["design", "board"] {
                let g = row_at(&doc, f)[who]["gain_db"].as_f64().unwrap();
                assert!(
                    (g + 3.0103).abs() <= 0.01,
                    "order {order} at {rate} Hz: {who} gain at {f} Hz is {g} dB"
                );
            }
        }
    }
}

#[test]
fn document_holds_spec_sections_board_const_and_plot() {
    let dir = tempfile::tempdir().unwrap();
    let out = plethwire(
        dir.path(),
        &[
            "filter",
            "--json",
            "--rate",
            "250",
            "--dc-block",
            "0.2",
            "--band",
            "0.5:8",
        ],
    );
    let doc: Value = serde_json::from_str(&stdout_of_success(&out)).unwrap();
    assert_eq!(doc["plot"], "plethwire-filter.svg");
    assert!(dir.path().join("plethwire-filter.svg").is_file());
    let kinds: Vec<&str> = doc["spec"]["stages"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["kind"].as_str().unwrap())
        .collect();
    assert_eq!(kinds, ["dc_block", "band_pass"]);
    assert_eq!(doc["coefficients"]["sections"].as_array().unwrap().len(), 3);
    assert_eq!(doc["board"]["sections"].as_array().unwrap().len(), 3);
    assert_eq!(doc["board"]["structure"], "Delta (f32)");
    let code = doc["rust_const"].as_str().unwrap();
    assert!(code.contains("pub const PULSE_FILTER: [Biquad<f64>; 3] = ["));
    assert!(doc["summary"].as_str().unwrap().contains("3 sections"));
}

fn assert_point(point: &Value, sections: &[Biquad<f64>], f: f64, fs: f64, who: &str) {
    let r = response(sections, f, fs);
    // serde_json writes −∞ as null; only an exact zero gives it.
    let gain = point["gain_db"].as_f64().unwrap_or(f64::NEG_INFINITY);
    assert_eq!(gain, r.magnitude_db, "{who} gain at {f} Hz");
    match (
        point["phase_deg"].as_f64(),
        point["group_delay_ms"].as_f64(),
    ) {
        (Some(phase), Some(delay)) => {
            assert_eq!(phase, r.phase_rad.to_degrees(), "{who} phase at {f} Hz");
            assert_eq!(delay, r.group_delay_s * 1000.0, "{who} delay at {f} Hz");
        }
        (None, None) => assert!(
            r.magnitude_db < -100.0,
            "{who}: phase left undefined at {f} Hz though the gain is {} dB",
            r.magnitude_db
        ),
        other => panic!("{who} at {f} Hz: phase and delay disagree on being defined: {other:?}"),
    }
}

#[test]
fn rows_are_the_response_of_the_design_and_the_board() {
    let doc = json(&[
        "--rate",
        "500",
        "--dc-block",
        "0.1",
        "--band",
        "0.5:5",
        "--order",
        "3",
        "--no-plot",
        "--at",
        "0,0.05,0.5,1,2.5,5,50,250",
    ]);
    let design: Design = dc_blocker(0.1, 500.0)
        .unwrap()
        .then(&butterworth_bandpass(3, 0.5, 5.0, 500.0).unwrap())
        .unwrap();
    let board = design.cascade::<Delta, MAX_SECTIONS>().unwrap().realised();
    let board = &board[..design.len()];
    let rows = doc["response"].as_array().unwrap();
    assert_eq!(rows.len(), 8);
    for row in rows {
        let f = row["frequency_hz"].as_f64().unwrap();
        assert_point(&row["design"], design.sections(), f, 500.0, "design");
        assert_point(&row["board"], board, f, 500.0, "board");
    }
    // DC and Nyquist are zeros of this chain: there phase and delay are
    // undefined; elsewhere they are given.
    assert!(row_at(&doc, 0.0)["design"]["phase_deg"].is_null());
    assert!(row_at(&doc, 250.0)["design"]["group_delay_ms"].is_null());
    assert!(row_at(&doc, 0.05)["design"]["group_delay_ms"].is_f64());
}

#[test]
fn board_coefficients_are_what_the_f32_cascade_realises() {
    let doc = json(&[
        "--rate",
        "1000",
        "--high-pass",
        "0.5",
        "--order",
        "4",
        "--no-plot",
    ]);
    let design = plethwire_dsp::design::butterworth_highpass(4, 0.5, 1000.0).unwrap();
    let board = design.cascade::<Delta, 2>().unwrap().realised();
    let rows = doc["board"]["sections"].as_array().unwrap();
    for (j, s) in rows.iter().zip(&board) {
        let v = |k: &str, i: usize| j[k][i].as_f64().unwrap();
        assert_eq!([v("b", 0), v("b", 1), v("b", 2)], [s.b0, s.b1, s.b2]);
        assert_eq!([v("a", 1), v("a", 2)], [s.a1, s.a2]);
    }
}
