use super::*;
use plethwire_dsp::pipeline::BeatFlags;

/// Uniform pseudo-random whole numbers in `-half..=half` (a linear
/// congruential generator, reproducible).
fn jitter(seed: u64, n: usize, half: u64) -> Vec<f64> {
    let mut x = seed;
    (0..n)
        .map(|_| {
            x = x
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((x >> 33) % (2 * half + 1)) as f64 - half as f64
        })
        .collect()
}

/// R-R intervals (whole ms) of a made-up resting heart: a breathing swing
/// of ±40 ms every 4.3 beats, a slow drift and ±25 ms of beat-to-beat
/// scatter, so that no shift by whole beats repeats the sequence.
fn intervals(n: usize) -> Vec<f64> {
    let scatter = jitter(12345, n, 25);
    (0..n)
        .map(|k| {
            let k_f = k as f64;
            let breathing = 40.0 * (std::f64::consts::TAU * k_f / 4.3).sin();
            let drift = 50.0 * (k_f / 23.0).sin();
            (820.0 + breathing + drift + scatter[k]).round()
        })
        .collect()
}

#[test]
fn a_cut_out_strap_list_is_found_to_the_ms() {
    // 130 beats; peaks 273 ms after the R waves (a pulse arrival time).
    let rr = intervals(130);
    let r_waves = beat_times(&rr);
    let arrival = 273.0;
    let mut peaks: Vec<f64> = r_waves.iter().map(|t| t + arrival + 1500.0).collect();
    // Missed beats and extra ones (a dicrotic wave taken for a beat).
    for k in [20, 55, 56, 90] {
        peaks[k] = f64::NAN;
    }
    let extra: Vec<f64> = [30, 70, 100].iter().map(|&k| peaks[k] + 380.0).collect();
    peaks.retain(|p| p.is_finite());
    peaks.extend(extra);
    peaks.sort_by(f64::total_cmp);
    let duration = peaks.last().unwrap() + 900.0;
    // The strap starts at beat 17 and has 100 intervals.
    let strap = beat_times(&rr[17..117]);
    let truth = r_waves[17] + arrival + 1500.0;
    let a = align(&strap, &peaks, duration).unwrap();
    assert!((a.offset_ms - truth).abs() < 1.0, "{a:?} truth {truth}");
    // 101 strap beats, 4 of them on a missed peak, the others exactly on one.
    assert!((a.score - 97.0).abs() < 1e-9, "{a:?}");
    assert!(a.margin > 0.3 && a.determined, "{a:?}");
    assert!((a.rival_offset_ms - a.offset_ms).abs() > 300.0);
}

#[test]
fn a_regular_rhythm_leaves_the_offset_undetermined() {
    // Every interval 800 ms: one beat on is as good as the right one.
    let rr = vec![800.0; 100];
    let peaks = beat_times(&rr);
    let strap = beat_times(&rr[10..90]);
    let a = align(&strap, &peaks, 80_000.0).unwrap();
    assert!(a.margin < DETERMINED_MARGIN && !a.determined, "{a:?}");
}

fn beat(peak: u64, ibi_ms: Option<f32>, good: bool) -> BeatEvent {
    BeatEvent {
        peak_index: peak,
        onset_index: None,
        emitted_at: peak + 40,
        ibi_ms,
        hr_bpm: ibi_ms.map(|i| 60_000.0 / i),
        hr_smoothed_bpm: None,
        amplitude: 1.0,
        quality: 0.99,
        flags: BeatFlags(if good { 0 } else { BeatFlags::LOW_CORRELATION }),
    }
}

#[test]
fn figures_over_matched_intervals_and_the_span() {
    // Our beats at 1 kHz on the strap's R waves + 200 ms, every IBI 10 ms
    // long but one 40 ms long on a bad beat.
    let rr = intervals(60);
    let r_waves = beat_times(&rr);
    let mut beats = vec![beat(200, None, false)];
    for k in 1..r_waves.len() {
        let bad = k == 30;
        let err = if bad { 40.0 } else { 10.0 };
        beats.push(beat(
            (r_waves[k] + 200.0) as u64,
            Some((rr[k - 1] + err) as f32),
            !bad,
        ));
    }
    let run = Replay {
        fs: 1000.0,
        samples: (r_waves[60] + 1000.0) as u64,
        beats,
        states: Vec::new(),
        rejected: 0,
        clipped: 0,
        restarts: 0,
    };
    let s = score_strap(&run, &rr[5..55]).unwrap();
    assert!(
        (s.alignment.offset_ms - (r_waves[5] + 200.0)).abs() < 1.0,
        "{s:?}"
    );
    assert_eq!(s.matched_beats, 51);
    assert_eq!(s.intervals_all.count, 50);
    assert_eq!(s.intervals_all.median_abs_ms, Some(10.0));
    // 95th percentile, nearest rank: the 48th of 50 errors, one is 40 ms.
    assert_eq!(s.intervals_all.p95_abs_ms, Some(10.0));
    // Beat 30 is bad: it takes its own interval and the next one out.
    assert_eq!(s.intervals_good.count, 48);
    // Strap over the span: the 50 intervals; ours their NN intervals.
    let strap_mean = rr[5..55].iter().sum::<f64>() / 50.0;
    assert!((s.mean_hr_bpm.strap.unwrap() - 60_000.0 / strap_mean).abs() < 1e-3);
    assert!(s.mean_hr_bpm.ours.unwrap() < s.mean_hr_bpm.strap.unwrap());
    assert!(s.rmssd_ms.ours.is_some() && s.sdnn_ms.strap.is_some());
}
