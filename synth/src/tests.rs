//! Tests of the synthetic recordings. Outside values are named beside
//! them; the rest are properties the generator promises.

use super::*;

/// No noise, no wander, no variability: only DC and pulses.
fn clean(template: PulseTemplate, fs: f64, bpm: f64, sd_ms: f64) -> SynthOptions {
    SynthOptions {
        sample_rate_hz: fs,
        duration_s: 120.0,
        hr: HrSchedule::constant(bpm),
        hr_variability_sd_ms: sd_ms,
        template,
        wander_amplitude: 0.0,
        noise_sd: 0.0,
        ..SynthOptions::default()
    }
}

/// The sample range of beat `k`: its onset up to the next beat's onset.
fn span(rec: &Synthetic, k: usize) -> std::ops::Range<usize> {
    rec.beats[k].onset..rec.beats[k + 1].onset
}

fn mean(xs: &[f64]) -> f64 {
    xs.iter().sum::<f64>() / xs.len() as f64
}

#[test]
fn peaks_are_the_maxima_of_their_pulses() {
    for t in [
        PulseTemplate::EXCELLENT,
        PulseTemplate::ACCEPTABLE,
        PulseTemplate::UNFIT,
    ] {
        let rec = generate(&clean(t, 100.0, 72.0, 40.0)).unwrap();
        let x = &rec.samples;
        assert!(rec.beats.len() > 100);
        for k in 0..rec.beats.len() - 1 {
            let p = rec.beats[k].peak;
            let top = x[span(&rec, k)].iter().copied().fold(f32::MIN, f32::max);
            assert_eq!(
                x[p], top,
                "beat {k}: peak sample is not the pulse's maximum"
            );
            assert!(
                x[p] >= x[p - 1] && x[p] >= x[p + 1],
                "beat {k}: not a local maximum"
            );
        }
    }
}

#[test]
fn sixty_bpm_without_variability_gives_one_second_intervals() {
    // 97.3 Hz so a beat is not a whole number of samples and the indices
    // really are rounded.
    let fs = 97.3;
    let rec = generate(&clean(PulseTemplate::EXCELLENT, fs, 60.0, 0.0)).unwrap();
    assert_eq!(rec.beats.len(), 120);
    let sample_ms = 1000.0 / fs;
    for w in rec.beats.windows(2) {
        assert_eq!(w[0].interval_ms, 1000.0);
        for (a, b) in [(w[0].peak, w[1].peak), (w[0].onset, w[1].onset)] {
            let ms = (b - a) as f64 * sample_ms;
            assert!((ms - 1000.0).abs() <= sample_ms, "{ms} ms between indices");
        }
    }
}

#[test]
fn mean_interval_follows_the_schedule() {
    let rec = generate(&SynthOptions {
        duration_s: 600.0,
        hr: HrSchedule::constant(75.0),
        hr_variability_sd_ms: 50.0,
        ..SynthOptions::default()
    })
    .unwrap();
    let iv = rec.intervals_ms();
    let m = mean(&iv);
    assert!(
        (m / 800.0 - 1.0).abs() < 0.01,
        "mean interval {m} ms at 75 bpm"
    );
    // The drawn spread is the asked-for SD (a normal cut at ±3 SD keeps
    // 98.7 % of it, normal distribution table).
    let sd = (iv.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (iv.len() - 1) as f64).sqrt();
    assert!((45.0..55.0).contains(&sd), "interval SD {sd} ms");

    // Rest, effort, recovery.
    let hr =
        HrSchedule::from_points(&[(300.0, 60.0), (360.0, 120.0), (660.0, 120.0), (720.0, 70.0)]);
    let rec = generate(&SynthOptions {
        duration_s: 1000.0,
        hr: hr.clone(),
        hr_variability_sd_ms: 20.0,
        ..SynthOptions::default()
    })
    .unwrap();
    for (from, to, want_ms) in [
        (0.0, 300.0, 1000.0),
        (360.0, 660.0, 500.0),
        (720.0, 990.0, 60_000.0 / 70.0),
    ] {
        let iv: Vec<f64> = rec
            .beats
            .iter()
            .filter(|b| (from..to).contains(&b.onset_s))
            .map(|b| b.interval_ms)
            .collect();
        let m = mean(&iv);
        assert!(
            (m / want_ms - 1.0).abs() < 0.01,
            "{from}-{to} s: {m} ms, want {want_ms}"
        );
    }
    // During the ramps each interval follows the rate at its onset.
    let ramp: Vec<(f64, f64)> = rec
        .beats
        .iter()
        .filter(|b| (300.0..360.0).contains(&b.onset_s))
        .map(|b| (b.interval_ms, 60_000.0 / hr.bpm_at(b.onset_s)))
        .collect();
    let ratio = ramp.iter().map(|(got, want)| got / want).sum::<f64>() / ramp.len() as f64;
    assert!((ratio - 1.0).abs() < 0.01, "ramp: mean ratio {ratio}");
}

#[test]
fn excellent_peak_falls_0_261_of_the_interval_after_onset() {
    // Measured on the samples at 1 kHz. Expected from the shape: 0.261055
    // (numpy argmax on a 2 000 001-point grid of the joined template; the
    // raw template's 0.260839 moves by the removed end line).
    let rec = generate(&clean(PulseTemplate::EXCELLENT, 1000.0, 60.0, 40.0)).unwrap();
    let fractions: Vec<f64> = (0..rec.beats.len() - 1)
        .map(|k| {
            let s = span(&rec, k);
            (rec.beats[k].peak - s.start) as f64 / s.len() as f64
        })
        .collect();
    let f = mean(&fractions);
    assert!((f - 0.261055).abs() < 5e-4, "measured peak fraction {f}");
}

#[test]
fn consecutive_beats_join_without_a_step() {
    let opts = clean(PulseTemplate::UNFIT, 1000.0, 60.0, 40.0);
    let rec = generate(&opts).unwrap();
    // Unjoined, the "unfit" template would step by (0.3805 − 0.1986) / 0.6807
    // = 27 % of the pulse at every onset (values of the raw template at
    // ±π and its joined peak, computed with numpy). Joined, the samples on
    // either side of an onset differ by about one sample's slope.
    let amp = opts.pulse_amplitude as f32;
    for b in &rec.beats[1..] {
        let step = (rec.samples[b.onset] - rec.samples[b.onset - 1]).abs();
        assert!(step < 0.01 * amp, "step {step} at onset {}", b.onset);
        assert!((rec.samples[b.onset] - opts.dc_level as f32).abs() < 0.01 * amp);
    }
}

#[test]
fn a_seed_repeats_exactly_and_options_draw_independently() {
    let opts = SynthOptions {
        motion: vec![MotionBurst {
            start_s: 10.0,
            duration_s: 5.0,
            amplitude: 0.3,
        }],
        finger_off: vec![FingerOff {
            start_s: 30.0,
            duration_s: 4.0,
        }],
        seed: 99,
        ..SynthOptions::default()
    };
    let a = generate(&opts).unwrap();
    assert_eq!(a, generate(&opts).unwrap());
    let other_seed = generate(&SynthOptions {
        seed: 100,
        ..opts.clone()
    })
    .unwrap();
    assert_ne!(a.samples, other_seed.samples);
    assert_ne!(a.intervals_ms(), other_seed.intervals_ms());
    // More noise changes the samples but not one beat.
    let noisier = generate(&SynthOptions {
        noise_sd: 0.01,
        ..opts.clone()
    })
    .unwrap();
    assert_ne!(a.samples, noisier.samples);
    assert_eq!(a.beats, noisier.beats);
}

#[test]
fn clipping_clamps_to_the_rails_and_says_where() {
    let base = SynthOptions {
        pulse_amplitude: 0.5,
        dc_level: 1.0,
        ..SynthOptions::default()
    };
    let (low, high) = (0.985f64, 1.505f64);
    let free = generate(&base).unwrap();
    let rec = generate(&SynthOptions {
        rails: Some(AdcRails { low, high }),
        ..base
    })
    .unwrap();
    assert!(!rec.clipped.is_empty());
    let (lo32, hi32) = (low as f32, high as f32);
    for (i, (&v, &u)) in rec.samples.iter().zip(&free.samples).enumerate() {
        assert!(
            (lo32..=hi32).contains(&v),
            "sample {i} = {v} outside the rails"
        );
        if rec.is_clipped(i) {
            assert!(v == lo32 || v == hi32);
            assert!(
                u >= hi32 || u <= lo32,
                "sample {i} said clipped but was {u}"
            );
        } else {
            assert_eq!(v, u, "sample {i} changed but not said clipped");
        }
    }
    // Both rails are hit: tops of pulses and the wander's troughs between them.
    assert!(rec.samples.contains(&hi32) && rec.samples.contains(&lo32));
    for (k, b) in rec.beats.iter().enumerate().take(rec.beats.len() - 1) {
        let touched = span(&rec, k).any(|i| rec.is_clipped(i));
        assert_eq!(b.flags.clipped, touched, "beat {k}");
    }
    assert!(rec.beats.iter().any(|b| b.flags.clipped));
    assert!(rec.beats.iter().any(|b| !b.flags.clipped));
}

#[test]
fn finger_off_drops_the_signal_and_its_beats() {
    let opts = SynthOptions {
        finger_off: vec![FingerOff {
            start_s: 20.0,
            duration_s: 5.0,
        }],
        ..SynthOptions::default()
    };
    let with_pulses = generate(&SynthOptions {
        finger_off: vec![],
        ..opts.clone()
    })
    .unwrap();
    let rec = generate(&opts).unwrap();
    assert_eq!(rec.finger_off, vec![2000..2500]);
    let level = opts.finger_off_level as f32;
    let band = 6.0 * opts.finger_off_noise_sd as f32;
    for &v in &rec.samples[2000..2500] {
        assert!((v - level).abs() < band, "{v} while the finger is off");
    }
    assert_eq!(rec.samples[..2000], with_pulses.samples[..2000]);
    assert_eq!(rec.samples[2500..], with_pulses.samples[2500..]);
    // No beat peaks inside; the ones there were are gone, the ones cut by
    // an edge are flagged, all others are kept unflagged.
    assert!(rec.beats.iter().all(|b| !(2000..2500).contains(&b.peak)));
    let hidden = with_pulses
        .beats
        .iter()
        .filter(|b| (2000..2500).contains(&b.peak))
        .count();
    assert!(hidden >= 5);
    assert_eq!(rec.beats.len() + hidden, with_pulses.beats.len());
    for b in &rec.beats {
        let near = b.onset_s < 25.0 && b.onset_s + b.interval_ms / 1000.0 > 20.0;
        assert_eq!(b.flags.near_finger_off, near, "beat at {} s", b.onset_s);
    }
}

#[test]
fn motion_bursts_disturb_only_their_stretch() {
    let amplitude = 0.4;
    let base = SynthOptions::default();
    let still = generate(&base).unwrap();
    let rec = generate(&SynthOptions {
        motion: vec![MotionBurst {
            start_s: 12.0,
            duration_s: 6.0,
            amplitude,
        }],
        ..base
    })
    .unwrap();
    assert_eq!(rec.motion, vec![1200..1800]);
    let mut largest = 0.0f64;
    for (i, (&v, &u)) in rec.samples.iter().zip(&still.samples).enumerate() {
        let d = (v as f64 - u as f64).abs();
        if (1200..1800).contains(&i) {
            assert!(d <= amplitude + 1e-6);
            largest = largest.max(d);
        } else {
            assert_eq!(d, 0.0, "sample {i} disturbed outside the burst");
        }
    }
    // Large: several times the pulse at its worst.
    assert!(largest > 0.25 * amplitude, "largest disturbance {largest}");
    for b in &rec.beats {
        let inside = b.onset_s < 18.0 && b.onset_s + b.interval_ms / 1000.0 > 12.0;
        assert_eq!(b.flags.motion, inside, "beat at {} s", b.onset_s);
    }
}

#[test]
fn csv_holds_every_sample_exactly() {
    let rec = generate(&SynthOptions {
        duration_s: 5.0,
        sample_rate_hz: 250.0,
        ..SynthOptions::default()
    })
    .unwrap();
    let mut buf = Vec::new();
    write_csv(&rec, &mut buf).unwrap();
    let text = String::from_utf8(buf).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some(CSV_HEADER));
    let rows: Vec<(f64, f32)> = lines
        .map(|l| {
            let (t, v) = l.split_once(',').expect("two columns");
            (t.parse().unwrap(), v.parse().unwrap())
        })
        .collect();
    assert_eq!(rows.len(), rec.samples.len());
    for (i, &(t, v)) in rows.iter().enumerate() {
        assert!((t - i as f64 / 250.0).abs() < 1e-9);
        assert_eq!(v, rec.samples[i]);
    }
    assert!(text.ends_with('\n'));
}

#[test]
fn bad_options_are_refused_with_the_option_named() {
    let refused = |opts: SynthOptions| generate(&opts).unwrap_err().option;
    let d = SynthOptions::default;
    assert_eq!(
        refused(SynthOptions {
            sample_rate_hz: 0.0,
            ..d()
        }),
        "sample_rate_hz"
    );
    assert_eq!(
        refused(SynthOptions {
            duration_s: -1.0,
            ..d()
        }),
        "duration_s"
    );
    assert_eq!(
        refused(SynthOptions {
            duration_s: 1e9,
            ..d()
        }),
        "duration_s"
    );
    // 10 Hz at 200 bpm is 3 samples per beat.
    assert_eq!(
        refused(SynthOptions {
            sample_rate_hz: 10.0,
            hr: HrSchedule::constant(200.0),
            ..d()
        }),
        "sample_rate_hz"
    );
    assert_eq!(
        refused(SynthOptions {
            hr: HrSchedule::constant(400.0),
            ..d()
        }),
        "hr"
    );
    assert_eq!(
        refused(SynthOptions {
            noise_sd: -0.1,
            ..d()
        }),
        "noise_sd"
    );
    assert_eq!(
        refused(SynthOptions {
            rails: Some(AdcRails {
                low: 2.0,
                high: 1.0
            }),
            ..d()
        }),
        "rails"
    );
    let mut t = PulseTemplate::EXCELLENT;
    t.systolic.b = -1.0;
    assert_eq!(refused(SynthOptions { template: t, ..d() }), "template");
    let e = generate(&SynthOptions {
        noise_sd: f64::NAN,
        ..d()
    })
    .unwrap_err();
    assert!(e.to_string().contains("noise_sd"), "{e}");
}
