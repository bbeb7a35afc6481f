//! No lock-out: whatever came before, a clean pulse train is found again
//! within 5 s and then scored as on the clean grid. Scenarios of our own;
//! the truth is the generator's beat times (Tang et al. 2020, Sci Rep
//! 10:13883, via `plethwire_synth`); beats match within ±150 ms
//! (ANSI/AAMI EC57 practice).

mod matching;
mod recovery;

use plethwire_dsp::pipeline::DetectorKind;
use plethwire_synth::{generate, HrSchedule, PulseTemplate, SynthOptions};
use proptest::prelude::*;
use proptest::test_runner::{FileFailurePersistence, RngSeed};
use recovery::strategy::{prefix, rate};
use recovery::*;

const DETECTORS: [DetectorKind; 2] = [DetectorKind::Elgendi, DetectorKind::Zong];

proptest! {
    #![proptest_config(ProptestConfig {
        cases: 64,
        // The same 64 cases on every run; a failure is also written to
        // pipeline_recovery.proptest-regressions beside this file and tried first from then on.
        rng_seed: RngSeed::Fixed(0x706c_6574_6877),
        failure_persistence: Some(Box::new(FileFailurePersistence::WithSource(
            "proptest-regressions"
        ))),
        max_shrink_iters: 200,
        ..ProptestConfig::default()
    })]

    #[test]
    fn a_clean_train_is_found_again_after_anything(
        prefix in prefix(),
        bpm in 30.0..220.0f64,
        fs in rate(),
        seed in 1..1000u64,
    ) {
        let c = case(&prefix, bpm, fs, seed);
        for det in DETECTORS {
            let b = beats(&c.samples, fs, det);
            let r = recovery(&c, &b);
            let f1 = r.counts.f1().unwrap_or(0.0);
            let (within_s, min_f1) = needed(det, fs);
            prop_assert!(
                r.found_after_s.is_some_and(|s| s <= within_s) && f1 >= min_f1,
                "{det:?} at {fs:.1} Hz, {bpm:.1} bpm after {:.1} s: found after {:?} s, {:?}",
                c.train_start as f64 / fs, r.found_after_s, r.counts
            );
            let late = onsets_after_peaks(&b);
            prop_assert!(late.is_empty(), "{det:?}: onsets after peaks {late:?}");
        }
    }
}

/// The clean train's size as a recording at `fs`: DC `dc`, pulse `amp`,
/// wander and noise scaled with the pulse.
fn pulse(fs: f64, seconds: f64, bpm: f64, dc: f64, amp: f64, seed: u64) -> Vec<f32> {
    let d = SynthOptions::default();
    let k = amp / d.pulse_amplitude;
    generate(&SynthOptions {
        sample_rate_hz: fs,
        duration_s: seconds,
        hr: HrSchedule::constant(bpm),
        hr_variability_sd_ms: 0.02 * 60_000.0 / bpm,
        pulse_amplitude: amp,
        dc_level: dc,
        wander_amplitude: d.wander_amplitude * k,
        noise_sd: d.noise_sd * k,
        seed,
        ..d
    })
    .unwrap()
    .samples
}

#[test]
fn a_small_first_candidate_does_not_make_steep_pulses_steps() {
    // A single bump 1/50 of the pulses that follow, then 8 min of pulses
    // with a steep upstroke (a systolic wave a third as wide as the
    // generator's "excellent" one) at 120 bpm, 300 Hz: every upstroke
    // once counted as a step and most beats were lost.
    let steep = PulseTemplate::new(1.0, -1.5161, 0.2, 0.1999, 0.8186, 1.0225);
    let fs = 300.0;
    let first = [Segment::Bump {
        seconds: 2.0,
        level: DC,
        height: PULSE / 50.0,
    }];
    let mut c = case(&first, 120.0, fs, 3);
    let train = generate(&SynthOptions {
        sample_rate_hz: fs,
        duration_s: 480.0,
        hr: HrSchedule::constant(120.0),
        hr_variability_sd_ms: 10.0,
        template: steep,
        seed: 3,
        ..SynthOptions::default()
    })
    .unwrap();
    c.samples.truncate(c.train_start);
    c.truth = train
        .beats
        .iter()
        .map(|b| (b.peak + c.train_start) as u64)
        .collect();
    c.samples.extend(&train.samples);
    for det in DETECTORS {
        let (b, restarts) = beats_and_restarts(&c.samples, fs, det);
        let r = recovery(&c, &b);
        let whole = whole_train(&c, &b);
        assert!(
            r.found_after_s.is_some_and(|s| s <= FOUND_WITHIN_S) && whole.f1().unwrap() >= 0.99,
            "{det:?}: found after {:?} s; {whole:?} over 8 min, {restarts} restarts",
            r.found_after_s
        );
        assert!(restarts <= 2, "{det:?}: {restarts} restarts");
    }
}

#[test]
fn a_pulse_comes_back_within_5_s_after_a_two_second_plateau() {
    // 72 bpm at 100 Hz, DC 2000 and pulse 100 (ADC counts), 10 s; 2 s at a
    // constant level far above; the same pulse for 30 s.
    let fs = 100.0;
    for plateau in [5e4, 2e4, 1e4] {
        let mut samples = pulse(fs, 10.0, 72.0, 2000.0, 100.0, 5);
        samples.extend(vec![plateau as f32; (2.0 * fs) as usize]);
        let train_start = samples.len();
        let train = generate(&SynthOptions {
            sample_rate_hz: fs,
            duration_s: 30.0,
            hr: HrSchedule::constant(72.0),
            hr_variability_sd_ms: 0.02 * 60_000.0 / 72.0,
            pulse_amplitude: 100.0,
            dc_level: 2000.0,
            wander_amplitude: 40.0,
            noise_sd: 1.0,
            seed: 6,
            ..SynthOptions::default()
        })
        .unwrap();
        let truth = train
            .beats
            .iter()
            .map(|b| (b.peak + train_start) as u64)
            .collect();
        samples.extend(&train.samples);
        let c = Case {
            fs,
            samples,
            train_start,
            truth,
        };
        for det in DETECTORS {
            let b = beats(&c.samples, fs, det);
            let r = recovery(&c, &b);
            assert!(
                r.found_after_s.is_some_and(|s| s <= FOUND_WITHIN_S)
                    && r.counts.f1().unwrap() >= 0.99,
                "{det:?} after a plateau at {plateau}: found after {:?} s, {:?}",
                r.found_after_s,
                r.counts
            );
        }
    }
}

#[test]
fn an_onset_never_comes_after_its_peak() {
    // At 267.7 Hz (an odd rate: the detector runs at fs/4 = 66.9 Hz) a
    // pulse, a burst of NaN, a square from rail to rail of a 12-bit ADC,
    // zeros, and the pulse again.
    let fs = 267.7;
    let mut samples = pulse(fs, 10.0, 75.0, 2000.0, 100.0, 8);
    let prefix = [
        Segment::NotANumber {
            seconds: 1.0,
            kind: 0,
        },
        Segment::Square {
            seconds: 3.0,
            low: 0.0,
            high: 4095.0,
            hz: 1.3,
        },
        Segment::Flat {
            seconds: 3.0,
            level: 0.0,
        },
    ];
    for s in &prefix {
        samples.extend(s.render(fs));
    }
    samples.extend(pulse(fs, 30.0, 75.0, 2000.0, 100.0, 9));
    let b = beats(&samples, fs, DetectorKind::Zong);
    let with_onset = b.iter().filter(|b| b.onset_index.is_some()).count();
    assert!(with_onset >= 40, "only {with_onset} beats with an onset");
    let late = onsets_after_peaks(&b);
    assert!(late.is_empty(), "onsets after peaks: {late:?}");
}
