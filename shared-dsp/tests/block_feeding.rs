//! `Pipeline::push_until_block` against `Pipeline::push`: two ways of
//! feeding the same pipeline, checked against each other bit for bit
//! (common practice for a faster path). Scenarios of our own.

use plethwire_dsp::pipeline::{BeatEvent, Config, Output, Pipeline};
use plethwire_synth::{generate, FingerOff, HrSchedule, SynthOptions};
use proptest::prelude::*;

/// Every beat and state change, `Debug`-printed (floats exactly), with the
/// input index of the sample whose output held it.
fn note(at: u64, out: Output, seen: &mut Vec<String>) {
    if let Some(b) = out.beat {
        seen.push(format!("{at} {b:?}"));
    }
    if let Some(s) = out.state {
        seen.push(format!("{at} {s:?}"));
    }
}

fn one_by_one(cfg: Config, xs: &[f32]) -> (Vec<String>, Pipeline) {
    let mut p = Pipeline::new(cfg).unwrap();
    let mut seen = Vec::new();
    for (i, &x) in xs.iter().enumerate() {
        note(i as u64, p.push(x), &mut seen);
    }
    (seen, p)
}

/// Fed in runs whose lengths cycle through `runs` (each at least 1), each
/// run in as many calls as it takes.
fn in_runs(cfg: Config, xs: &[f32], runs: &[usize]) -> (Vec<String>, Pipeline) {
    let mut p = Pipeline::new(cfg).unwrap();
    let mut seen = Vec::new();
    let (mut i, mut k) = (0, 0);
    while i < xs.len() {
        let end = (i + runs[k % runs.len()]).min(xs.len());
        k += 1;
        while i < end {
            let (room, before) = (p.block_remaining(), p.samples());
            let out = p.push_until_block(&xs[i..end]);
            let taken = (p.samples() - before) as usize;
            assert_eq!(taken, room.min(end - i));
            i += taken;
            note(i as u64 - 1, out, &mut seen);
        }
    }
    (seen, p)
}

fn finish(mut p: Pipeline) -> Vec<BeatEvent> {
    let mut beats = Vec::new();
    p.finish(|b| beats.push(b));
    beats
}

fn signal(fs: f64, bpm: f64, seed: u64) -> Vec<f32> {
    generate(&SynthOptions {
        sample_rate_hz: fs,
        duration_s: 40.0,
        hr: HrSchedule::constant(bpm),
        noise_sd: 0.01,
        finger_off: vec![FingerOff {
            start_s: 20.0,
            duration_s: 3.0,
        }],
        seed,
        ..SynthOptions::default()
    })
    .expect("a valid scenario")
    .samples
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]
    #[test]
    fn runs_of_any_length_give_what_one_sample_at_a_time_gives(
        fs in prop::sample::select(vec![50.0, 100.0, 125.0, 250.0, 300.0, 500.0, 1000.0]),
        bpm in 40.0..180.0f64,
        seed in 0..1000u64,
        runs in prop::collection::vec(1..40usize, 1..6),
    ) {
        let xs = signal(fs, bpm, seed);
        let cfg = Config::new(fs as f32);
        let (a, pa) = one_by_one(cfg, &xs);
        let (b, pb) = in_runs(cfg, &xs, &runs);
        prop_assert!(a.len() > 10, "{} events", a.len());
        prop_assert_eq!(&a, &b);
        prop_assert_eq!(pa.samples(), pb.samples());
        prop_assert_eq!(pa.band_passed().to_bits(), pb.band_passed().to_bits());
        prop_assert_eq!(format!("{:?}", finish(pa)), format!("{:?}", finish(pb)));
    }
}

#[test]
fn a_run_stops_at_the_detector_sample_and_an_empty_one_takes_nothing() {
    let mut p = Pipeline::new(Config::new(300.0)).unwrap();
    assert_eq!(p.block_remaining(), 4); // 300 Hz: a detector sample every 4 inputs
    let out = p.push_until_block(&[]);
    assert_eq!(
        (p.samples(), out.beat.is_none(), out.state.is_none()),
        (0, true, true)
    );
    let _ = p.push_until_block(&[1.0; 3]);
    assert_eq!((p.block_remaining(), p.samples()), (1, 3));
    let _ = p.push_until_block(&[1.0; 9]);
    assert_eq!((p.block_remaining(), p.samples()), (4, 4));
    let _ = p.push(1.0);
    assert_eq!(p.block_remaining(), 3);
}
