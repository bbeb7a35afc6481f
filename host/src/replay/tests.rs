//! Tests of the replay's summaries.

use super::*;
use plethwire_dsp::pipeline::BeatFlags;

fn beat(peak: u64, ibi_ms: Option<f32>) -> BeatEvent {
    BeatEvent {
        peak_index: peak,
        onset_index: None,
        emitted_at: peak + 40,
        ibi_ms,
        hr_bpm: ibi_ms.map(|i| 60_000.0 / i),
        hr_smoothed_bpm: None,
        amplitude: 1.0,
        quality: 0.99,
        flags: BeatFlags(if ibi_ms.is_none() {
            BeatFlags::NO_INTERVAL
        } else {
            0
        }),
    }
}

#[test]
fn hrv_forms_no_difference_across_a_gap() {
    // 800, 900 ms; then the signal was lost (a beat with no interval);
    // then 600, 700 ms. Differences: 100 and 100, never 900 → 600.
    let beats = vec![
        beat(0, None),
        beat(80, Some(800.0)),
        beat(170, Some(900.0)),
        beat(2000, None),
        beat(2060, Some(600.0)),
        beat(2130, Some(700.0)),
    ];
    let run = Replay {
        fs: 100.0,
        samples: 2200,
        beats,
        states: Vec::new(),
        rejected: 0,
        clipped: 0,
        restarts: 0,
    };
    let h = run.hrv();
    assert_eq!(h.nn_count, 4);
    assert_eq!(h.diff_count, 2);
    assert_eq!(h.rmssd_ms, Some(100.0));
}
