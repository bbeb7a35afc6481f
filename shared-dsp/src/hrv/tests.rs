//! Unit tests of the HRV statistics. The check values of the two interval
//! series were computed with numpy (`numpy.std(x, ddof=1)`,
//! `numpy.sqrt(numpy.mean(numpy.diff(x) ** 2))`, `numpy.sum(abs(numpy.diff(x)) > 50)`);
//! the rest are small hand computations written out beside them.

use super::*;

const SERIES_A: [f32; 8] = [800.0, 810.0, 790.0, 850.0, 820.0, 780.0, 800.0, 860.0];

fn close(got: Option<f32>, want: f64, tol: f64) {
    let got = got.expect("value present") as f64;
    assert!((got - want).abs() <= tol, "got {got}, want {want} ± {tol}");
}

#[test]
fn eight_intervals_match_numpy() {
    let s = hrv(&SERIES_A, None).unwrap();
    assert_eq!((s.nn_count, s.diff_count), (8, 7));
    // numpy.std(x, ddof=1) = 28.2527 (sample SD, N − 1)
    close(s.sdnn_ms, 28.2527, 1e-4);
    // numpy.sqrt(numpy.mean(numpy.diff(x)**2)) = 38.9138
    close(s.rmssd_ms, 38.9138, 1e-4);
    // differences 10, −20, 60, −30, −40, 20, 60: two exceed 50 ms
    assert_eq!(s.nn50, 2);
    close(s.pnn50_percent, 100.0 * 2.0 / 7.0, 1e-4);
    // numpy.mean(x) = 813.75; 60000 / 813.75 = 73.7327 bpm
    close(s.mean_nn_ms, 813.75, 1e-4);
    close(s.mean_hr_bpm, 73.7327, 1e-4);
}

#[test]
fn alternating_intervals_match_numpy() {
    let x: [f32; 10] = core::array::from_fn(|i| if i % 2 == 0 { 800.0 } else { 900.0 });
    let s = hrv(&x, None).unwrap();
    // numpy.std(x, ddof=1) = 52.7046; with ddof=0 it would be 50.0000
    close(s.sdnn_ms, 52.7046, 1e-4);
    // every difference is ±100 ms
    close(s.rmssd_ms, 100.0, 1e-6);
    assert_eq!((s.nn50, s.diff_count), (9, 9));
    close(s.pnn50_percent, 100.0, 1e-6);
    // 60000 / 850 = 70.5882 bpm
    close(s.mean_hr_bpm, 70.5882, 1e-4);
}

#[test]
fn bad_beat_and_its_differences_are_left_out() {
    // A missed detection makes one long interval in the middle.
    let x = [800.0, 810.0, 1600.0, 790.0, 850.0];
    let good = [true, true, false, true, true];
    let s = hrv(&x, Some(&good)).unwrap();
    // NN = 800, 810, 790, 850; differences only 810−800 = 10 and
    // 850−790 = 60 (none across the bad interval).
    assert_eq!((s.nn_count, s.diff_count, s.nn50), (4, 2, 1));
    // by hand: sqrt((10² + 60²) / 2) = sqrt(1850) = 43.01163
    close(s.rmssd_ms, 43.01163, 1e-4);
    close(s.pnn50_percent, 50.0, 1e-6);
    // by hand: mean 812.5, Σdev² = 2075, sqrt(2075 / 3) = 26.29956
    close(s.sdnn_ms, 26.29956, 1e-4);
    close(s.mean_nn_ms, 812.5, 1e-6);

    // Had the bad interval been kept, every number would differ.
    let all = hrv(&x, None).unwrap();
    assert_eq!((all.nn_count, all.diff_count), (5, 4));
    assert!(all.rmssd_ms.unwrap() > 500.0);
}

#[test]
fn no_difference_is_formed_across_a_bad_interval() {
    let s = hrv(&[800.0, 900.0, 860.0], Some(&[true, false, true])).unwrap();
    assert_eq!((s.nn_count, s.diff_count), (2, 0));
    assert_eq!((s.rmssd_ms, s.pnn50_percent), (None, None));
    // |800 − 860| / sqrt(2) = 42.42641 (two values, N − 1 = 1)
    close(s.sdnn_ms, 42.42641, 1e-4);
}

#[test]
fn too_few_intervals_give_none() {
    let empty = hrv(&[], None).unwrap();
    assert_eq!(empty, HrvStats::default());
    assert_eq!(empty.mean_hr_bpm, None);

    let one = hrv(&[750.0], None).unwrap();
    close(one.mean_nn_ms, 750.0, 0.0);
    close(one.mean_hr_bpm, 80.0, 1e-5);
    assert_eq!(
        (one.sdnn_ms, one.rmssd_ms, one.pnn50_percent),
        (None, None, None)
    );

    let two = hrv(&[750.0, 850.0], None).unwrap();
    assert!(two.sdnn_ms.is_some() && two.rmssd_ms.is_some());
    close(two.rmssd_ms, 100.0, 1e-6);
}

#[test]
fn unusable_values_count_as_bad() {
    let x = [
        800.0,
        f32::NAN,
        810.0,
        -5.0,
        0.0,
        f32::INFINITY,
        820.0,
        830.0,
    ];
    let s = hrv(&x, None).unwrap();
    // NN: 800, 810, 820, 830; only 830 − 820 is a difference
    assert_eq!((s.nn_count, s.diff_count), (4, 1));
    close(s.rmssd_ms, 10.0, 1e-6);
    close(s.mean_nn_ms, 815.0, 1e-6);
}

#[test]
fn flag_count_must_match() {
    assert_eq!(
        hrv(&[800.0, 810.0], Some(&[true])),
        Err(HrvError::FlagCountMismatch {
            intervals: 2,
            flags: 1
        })
    );
}

/// A small deterministic series with some bad beats (xorshift32).
fn series(n: usize) -> ([f32; 64], [bool; 64]) {
    assert!(n <= 64);
    let mut state = 0x9e37_79b9u32;
    let mut next = || {
        state ^= state << 13;
        state ^= state >> 17;
        state ^= state << 5;
        state
    };
    let mut x = [0.0f32; 64];
    let mut good = [false; 64];
    for i in 0..n {
        x[i] = 600.0 + (next() % 600) as f32 + (next() % 1000) as f32 / 1000.0;
        good[i] = next() % 7 != 0;
    }
    (x, good)
}

#[test]
fn window_equals_slice_on_the_same_intervals() {
    let (x, good) = series(50);
    let mut w = HrvWindow::<16>::new();
    for i in 0..50 {
        w.push(x[i], good[i]);
        let from = (i + 1).saturating_sub(16);
        let want = hrv(&x[from..=i], Some(&good[from..=i])).unwrap();
        // Same code path, so equal to the bit.
        assert_eq!(w.stats(), want, "after {} intervals", i + 1);
    }
    assert_eq!(w.len(), 16);
    assert!(w
        .iter()
        .eq(x[34..50].iter().copied().zip(good[34..50].iter().copied())));
}

#[test]
fn window_of_all_data_matches_the_check_values() {
    let mut w = HrvWindow::<8>::default();
    for &x in &SERIES_A {
        w.push(x, true);
    }
    let s = w.stats();
    close(s.sdnn_ms, 28.2527, 1e-4); // numpy.std(x, ddof=1)
    close(s.rmssd_ms, 38.9138, 1e-4); // numpy, as above
    assert_eq!((s.nn50, s.diff_count), (2, 7));
}

#[test]
fn recent_span_takes_the_newest_intervals_that_fit() {
    let (x, good) = series(40);
    let mut w = HrvWindow::<32>::new();
    for i in 0..40 {
        w.push(x[i], good[i]);
    }
    // The newest intervals whose sum is at most the span, found by hand.
    let span = 10_000.0f32;
    let mut take = 0;
    let mut total = 0.0f64;
    while take < 32 && total + x[39 - take] as f64 <= span as f64 {
        total += x[39 - take] as f64;
        take += 1;
    }
    assert!(take > 3 && take < 32);
    let want = hrv(&x[40 - take..40], Some(&good[40 - take..40])).unwrap();
    assert_eq!(w.stats_recent_ms(span), want);
    assert_eq!(w.stats_recent_ms(1.0e9), w.stats());
    assert_eq!(w.stats_recent_ms(0.0), HrvStats::default());
}

#[test]
fn clearing_forgets_everything() {
    let mut w = HrvWindow::<4>::new();
    for x in [800.0, 900.0, 850.0, 870.0, 880.0] {
        w.push(x, true);
    }
    assert_eq!((w.len(), w.capacity()), (4, 4));
    w.clear();
    assert!(w.is_empty());
    w.push(700.0, true);
    let s = w.stats();
    assert_eq!((s.nn_count, s.diff_count), (1, 0));
    close(s.mean_nn_ms, 700.0, 0.0);
}
