//! Tests of `arrival`.

use super::super::test_ecg::{ecg_train, TestEcg};
use super::super::usable::gap_spans;
use super::*;

/// R peaks every 0.8 s for 300 s at 100 Hz, with a delay going from
/// 300 ms to 200 ms halfway (effort), and their pulses.
fn beats() -> (Vec<u64>, Vec<u64>, u64) {
    let r: Vec<u64> = (1..375).map(|k| k * 80).collect();
    let pulses = r
        .iter()
        .map(|&ri| ri + if ri < 15_000 { 30 } else { 20 })
        .collect();
    (r, pulses, 30_000)
}

/// A small deterministic generator for the tests.
fn lcg(seed: &mut u64) -> u64 {
    *seed = seed
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    *seed >> 33
}

#[test]
fn local_delay_follows_a_change() {
    let (r, pulses, len) = beats();
    let d = local_delays(&r, &pulses, 100.0);
    assert!((d[10] - 0.30).abs() < 1e-9, "{}", d[10]);
    assert!((d[360] - 0.20).abs() < 1e-9, "{}", d[360]);
    let s = score_against_r_peaks(&r, &gap_spans(&r, len, 100.0, 15), 100.0, &pulses);
    assert_eq!(
        s.counts,
        MatchCounts {
            tp: 374,
            fp: 0,
            fn_: 0
        }
    );
    assert_eq!(s.delay_iqr_ms, Some((200.0, 300.0)));
}

#[test]
fn missed_and_spurious_pulses_do_not_move_the_delay() {
    let (r, pulses, len) = beats();
    let mut seed = 7;
    // A third of the pulses missed, as many again spurious anywhere.
    let mut noisy: Vec<u64> = pulses
        .iter()
        .copied()
        .filter(|_| lcg(&mut seed) % 3 != 0)
        .collect();
    noisy.extend((0..370).map(|_| lcg(&mut seed) % len));
    noisy.sort_unstable();
    let d = local_delays(&r, &noisy, 100.0);
    for (k, &ri) in r.iter().enumerate() {
        // Away from the change, where the window holds both delays.
        let truth = if ri < 12_000 {
            0.30
        } else if ri > 18_000 {
            0.20
        } else {
            continue;
        };
        assert!((d[k] - truth).abs() <= 0.011, "R {ri}: {} vs {truth}", d[k]);
    }
    // Pulses at random: few matches, as chance gives.
    let random: Vec<u64> = (0..374).map(|_| lcg(&mut seed) % len).collect();
    let s = score_against_r_peaks(&r, &gap_spans(&r, len, 100.0, 15), 100.0, &random);
    assert!(s.counts.f1().unwrap() < 0.6, "{:?}", s.counts);
}

#[test]
fn lead_off_stretches_are_left_out() {
    let (r, pulses, len) = beats();
    // No R peak from 100 s to 120 s: the ECG fell off.
    let kept: Vec<u64> = r
        .iter()
        .copied()
        .filter(|&x| !(10_000..12_000).contains(&x))
        .collect();
    let s = score_against_r_peaks(&kept, &gap_spans(&kept, len, 100.0, 15), 100.0, &pulses);
    assert_eq!(s.counts.fp, 0, "{s:?}");
    assert_eq!(s.counts.fn_, 0);
    assert!((24..=26).contains(&s.excluded_pulses), "{s:?}");
    // 0.65 s before the first R peak, 20.49 s of the gap (less the
    // tolerance at both ends), 0.64 s after the last.
    assert!((s.excluded_s - 21.78).abs() < 1e-9, "{s:?}");
}

#[test]
fn scores_pulses_against_an_ecg() {
    let (ecg, truth) = ecg_train(&TestEcg::default());
    let pulses: Vec<u64> = truth.iter().map(|&t| t + 60).collect();
    let s = score_pulses(&ecg, 250.0, &pulses).unwrap();
    assert_eq!(s.counts.tp, truth.len(), "{s:?}");
    assert_eq!(s.counts.fp + s.counts.fn_, 0);
    let d = s.delay_ms.unwrap();
    assert!((d - 240.0).abs() <= 8.0, "{d}");
    assert!(score_pulses(&ecg, 20.0, &pulses).is_err());
}
