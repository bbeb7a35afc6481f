//! Accuracy on the open recordings in ../shared/data, streaming and causal,
//! default settings, no per-record tuning. Targets (the project's issue on
//! the beat pipeline):
//! - CapnoBase (Karlen et al., IEEE TBME 60(7):1946, 2013; expert-reviewed
//!   systolic peaks): pooled F1 ≥ 99.8 %, no record below 99 %;
//! - BIDMC (Pimentel et al., IEEE TBME 64(8):1914, 2017; PhysioNet): heart
//!   rate once a second against the monitor's `pulse_bpm`, mean absolute
//!   error ≤ 2 bpm pooled, seconds without a monitor value left out.
//!
//! Beats match within ±150 ms (ANSI/AAMI EC57 practice).

use plethwire::replay::Source;
use plethwire::score::records::{score_all, References};
use plethwire_checks::{need, needs, shared_data_dir};
use plethwire_dsp::pipeline::Config;

#[test]
fn capnobase_beats_and_bidmc_heart_rate_meet_their_targets() {
    let Some(data) =
        shared_data_dir().filter(|d| d.join("capnobase").is_dir() && d.join("bidmc").is_dir())
    else {
        need(needs::SHARED_DATA, false);
        return;
    };
    let refs = References::default();
    let cfg = Config::new(100.0); // the rate comes from each record
    let capno = score_all(
        &[data.join("capnobase")],
        &Source::default(),
        cfg,
        &refs,
        |_| {},
    )
    .unwrap();
    assert_eq!(capno.records.len(), 21, "the 21 CapnoBase records");
    let pooled = capno.pooled_beats.expect("reference beats");
    let f1 = pooled.f1().unwrap();
    eprintln!(
        "CapnoBase pooled: TP {} FP {} FN {} F1 {:.3} %",
        pooled.tp,
        pooled.fp,
        pooled.fn_,
        100.0 * f1
    );
    assert!(f1 >= 0.998, "pooled F1 {:.3} % < 99.8 %", 100.0 * f1);
    for r in &capno.records {
        let f = r.beats.unwrap().f1().unwrap();
        assert!(f >= 0.99, "{}: F1 {:.2} % < 99 %", r.record, 100.0 * f);
    }

    let bidmc = score_all(
        &[data.join("bidmc")],
        &Source::default(),
        cfg,
        &refs,
        |_| {},
    )
    .unwrap();
    assert_eq!(bidmc.records.len(), 16, "the 16 BIDMC records");
    let hr = bidmc.pooled_heart_rate.expect("reference heart rate");
    let mae = hr.mae().unwrap();
    eprintln!(
        "BIDMC pooled heart-rate MAE {mae:.3} bpm over {} s",
        hr.count
    );
    assert!(hr.count > 16 * 400, "most seconds compared: {}", hr.count);
    assert!(mae <= 2.0, "pooled MAE {mae:.3} bpm > 2");
}
