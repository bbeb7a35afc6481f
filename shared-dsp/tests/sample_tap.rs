//! The sample blocks a board sends: `Pipeline::band_passed` and
//! `wire::SampleTap`.

use plethwire_dsp::pipeline::{Config, Pipeline};
use plethwire_dsp::wire::{sample_stride, SampleBlock, SampleTap, SAMPLES_PER_BLOCK};
use proptest::prelude::*;

/// (input index, value pushed, band-passed value after the push) of every
/// `stride`-th input, from a pipeline run on its own.
fn expected(rate: f32, xs: &[f32], stride: usize) -> Vec<(u64, u32, u32)> {
    let mut p = Pipeline::new(Config::new(rate)).unwrap();
    let mut out = Vec::new();
    for (k, &x) in xs.iter().enumerate() {
        p.push(x);
        if k % stride == 0 {
            out.push((k as u64, x.to_bits(), p.band_passed().to_bits()));
        }
    }
    out
}

/// Every block of a tapped run, the flushed last one included.
fn tapped(rate: f32, xs: &[f32], stride: u8) -> Vec<SampleBlock> {
    let mut p = Pipeline::new(Config::new(rate)).unwrap();
    let mut tap = SampleTap::new(stride);
    let mut blocks = Vec::new();
    for &x in xs {
        p.push(x);
        blocks.extend(tap.push(x, &p));
    }
    blocks.extend(tap.flush());
    assert_eq!(tap.flush(), None, "a second flush has nothing left");
    blocks
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn blocks_hold_every_strideth_input_and_its_band_passed_value(
        xs in proptest::collection::vec(-5000.0f32..5000.0, 1..300),
        stride in 1u8..5,
        rate in prop_oneof![Just(100.0f32), Just(250.0), Just(500.0), Just(1000.0)],
    ) {
        let blocks = tapped(rate, &xs, stride);
        let want = expected(rate, &xs, stride as usize);
        let mut got = Vec::new();
        for (j, b) in blocks.iter().enumerate() {
            prop_assert_eq!(b.stride, stride);
            prop_assert_eq!(b.first_index, (j * SAMPLES_PER_BLOCK) as u64 * stride as u64);
            // Full blocks, the last one apart.
            if j + 1 < blocks.len() {
                prop_assert_eq!(b.count as usize, SAMPLES_PER_BLOCK);
            }
            prop_assert!(b.count >= 1);
            for i in 0..b.count as usize {
                let index = b.first_index + (i as u64) * stride as u64;
                got.push((index, b.raw[i].to_bits(), b.filtered[i].to_bits()));
            }
        }
        prop_assert_eq!(got, want);
    }
}

#[test]
fn a_zero_stride_is_taken_as_one() {
    assert_eq!(SampleTap::new(0).stride(), 1);
}

#[test]
fn the_stride_is_one_up_to_500_hz_and_two_above() {
    for rate in 25..=500 {
        assert_eq!(sample_stride(rate as f32), 1, "{rate} Hz");
    }
    for rate in 501..=1000 {
        assert_eq!(sample_stride(rate as f32), 2, "{rate} Hz");
    }
    assert_eq!(sample_stride(f32::NAN), 1);
    assert_eq!(sample_stride(1e9), 255);
}

#[test]
fn the_band_passed_value_changes_only_at_the_detectors_samples() {
    // 250 Hz: the detector runs at 250 / 4 = 62.5 Hz, so the value is held
    // for four inputs at a time.
    let mut p = Pipeline::new(Config::new(250.0)).unwrap();
    assert_eq!(p.band_passed(), 0.0, "nothing before the first sample");
    let mut changes = 0;
    let mut last = p.band_passed();
    for n in 0..2500 {
        let t = n as f32 / 250.0;
        p.push(1000.0 * libm::sinf(2.0 * core::f32::consts::PI * 1.2 * t) + 2000.0);
        if p.band_passed() != last {
            changes += 1;
            assert_eq!(p.samples() % 4, 0, "changed at input {}", p.samples());
            last = p.band_passed();
        }
    }
    assert!(changes > 500, "{changes} changes");
}

#[test]
fn the_band_passed_value_passes_the_heart_band_and_removes_dc() {
    // A 1.2 Hz sine of amplitude 1000 on a DC of 2000 at 250 Hz. The band
    // is Butterworth 0.5 Hz high-pass and 8 Hz low-pass, order 2 each;
    // a Butterworth filter's magnitude is 1 / sqrt(1 + (f/fc)^(2n)) for the
    // low-pass and 1 / sqrt(1 + (fc/f)^(2n)) for the high-pass (S.
    // Butterworth, "On the theory of filter amplifiers", 1930): at 1.2 Hz
    // 0.99975 × 0.98536 = 0.985, so an amplitude of 985.
    let mut p = Pipeline::new(Config::new(250.0)).unwrap();
    let mut peak = 0.0f32;
    for n in 0..(250 * 30) {
        let t = n as f32 / 250.0;
        p.push(1000.0 * libm::sinf(2.0 * core::f32::consts::PI * 1.2 * t) + 2000.0);
        if n >= 250 * 20 {
            peak = peak.max(p.band_passed().abs());
        }
    }
    assert!((peak - 985.4).abs() < 20.0, "amplitude {peak}");
    // DC alone: the filters settle on the first sample, nothing passes.
    let mut p = Pipeline::new(Config::new(250.0)).unwrap();
    for _ in 0..2500 {
        p.push(2000.0);
        assert!(p.band_passed().abs() < 0.01, "{}", p.band_passed());
    }
}
