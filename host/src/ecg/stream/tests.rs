//! The streamed reference against the whole-array one, on the invented
//! trains of `test_ecg` (demo data: the check is equality with
//! [`EcgReference::new`], not any outside value).

use super::*;
use crate::ecg::stages::{band_passed, sanitised};
use crate::ecg::test_ecg::{ecg_train, TestEcg};

fn streamed(ecg: &[f64], fs: f64, block: usize, blocks: BandBlocks) -> EcgReference {
    let mut source = SliceSource {
        samples: ecg,
        block,
    };
    EcgReference::streamed_with(&mut source, fs, blocks).unwrap()
}

/// Streamed equals whole for reading blocks of 1, 7 and 4096 samples, the
/// default band blocks and short ones (many boundaries to check).
fn same(ecg: &[f64], fs: f64, what: &str) -> EcgReference {
    let whole = EcgReference::new(ecg, fs).unwrap();
    let short = BandBlocks {
        block_s: 0.7,
        margin_s: 15.0,
        spill: true,
    };
    for blocks in [BandBlocks::default(), short] {
        for block in [1, 7, 4096] {
            let got = streamed(ecg, fs, block, blocks);
            assert_eq!(got, whole, "{what}: {block}-sample blocks, {blocks:?}");
        }
    }
    whole
}

fn train(o: TestEcg) -> Vec<f64> {
    ecg_train(&o).0
}

#[test]
fn streamed_equals_whole_at_every_rate_and_polarity() {
    for fs in [100.0, 125.0, 250.0, 360.0, 500.0, 1000.0] {
        for inverted in [false, true] {
            let o = TestEcg {
                fs,
                inverted,
                seconds: 75.0,
                ..TestEcg::default()
            };
            let r = same(&train(o), fs, &format!("{fs} Hz, inverted {inverted}"));
            assert!(r.r_peaks.len() > 80, "{fs} Hz: {}", r.r_peaks.len());
        }
    }
}

#[test]
fn streamed_equals_whole_on_hard_trains() {
    let hard = [
        TestEcg {
            bpm: 170.0,
            ..TestEcg::default()
        },
        TestEcg {
            bpm: 40.0,
            ..TestEcg::default()
        },
        TestEcg {
            t_wave: 0.6,
            ..TestEcg::default()
        },
        TestEcg {
            small_every: 5,
            ..TestEcg::default()
        },
    ];
    for o in hard {
        same(&train(o.clone()), o.fs, &format!("{o:?}"));
    }
}

#[test]
fn streamed_equals_whole_with_missing_samples_and_rails() {
    let fs = 250.0;
    let mut x = train(TestEcg {
        seconds: 90.0,
        ..TestEcg::default()
    });
    x[..300].fill(f64::NAN);
    x[5000..5200].fill(f64::NAN);
    x[9000] = f64::INFINITY;
    // Clipped at both rails for a while, and a 40 s lead-off (held flat).
    let (lo, hi) = (-0.6, 0.9);
    for v in &mut x[12000..14000] {
        *v = v.clamp(lo, hi);
    }
    x[14000..14100].fill(hi);
    x[15000..22000].fill(f64::NAN);
    x[20000..20060].fill(lo);
    let r = same(&x, fs, "missing and rails");
    assert!(r.unusable.len() >= 3, "{:?}", r.unusable);
}

#[test]
fn streamed_equals_whole_on_flat_short_and_empty_signals() {
    let fs = 360.0;
    same(&[], fs, "empty");
    same(&[f64::NAN; 5000], fs, "all missing");
    same(&[0.25; 5000], fs, "flat");
    same(&[0.25, f64::NAN, -3.0], fs, "three samples");
    for seconds in [1.0, 2.5, 12.0] {
        let o = TestEcg {
            seconds,
            fs,
            ..TestEcg::default()
        };
        same(&train(o), fs, &format!("{seconds} s"));
    }
}

#[test]
fn band_values_have_the_whole_arrays_bits() {
    let fs = 500.0;
    let mut x = train(TestEcg {
        fs,
        seconds: 100.0,
        ..TestEcg::default()
    });
    x[20000..21000].fill(f64::NAN);
    let whole = band_passed(&sanitised(&x), fs);
    let blocks = BandBlocks {
        block_s: 3.0,
        margin_s: 40.0,
        spill: false,
    };
    let mut got = vec![f64::NAN; x.len()];
    let mut source = SliceSource {
        samples: &x,
        block: 333,
    };
    for_each_band_value(&mut source, fs, blocks, |i, v| got[i] = v).unwrap();
    let bits = |v: &[f64]| v.iter().map(|b| b.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&got), bits(&whole));
}

#[test]
fn a_margin_too_short_is_caught_and_the_file_used() {
    // Runs from rest 50 ms before each boundary cannot have settled: the
    // bit check at the boundaries must say so.
    let fs = 250.0;
    let x = train(TestEcg::default());
    let blocks = BandBlocks {
        block_s: 1.0,
        margin_s: 0.05,
        spill: false,
    };
    let mut source = SliceSource {
        samples: &x,
        block: 100,
    };
    let err = EcgReference::streamed_with(&mut source, fs, blocks).unwrap_err();
    assert!(matches!(err, EcgStreamError::Unsettled { .. }), "{err}");
    let spilled = BandBlocks {
        spill: true,
        ..blocks
    };
    assert_eq!(
        streamed(&x, fs, 100, spilled),
        EcgReference::new(&x, fs).unwrap()
    );
}

#[test]
fn a_long_flat_stretch_goes_through_the_file_with_the_same_bits() {
    // 150 s held flat in the middle: longer than the look-ahead, where
    // two runs of the filter need not agree; whichever way the band-pass
    // goes, its bits are the whole array's.
    let fs = 500.0;
    let mut x = train(TestEcg {
        fs,
        seconds: 300.0,
        ..TestEcg::default()
    });
    x[50_000..125_000].fill(f64::NAN);
    let whole = band_passed(&sanitised(&x), fs);
    let mut got = vec![f64::NAN; x.len()];
    let mut source = SliceSource {
        samples: &x,
        block: 4096,
    };
    for_each_band_value(&mut source, fs, BandBlocks::default(), |i, v| got[i] = v).unwrap();
    assert!(got
        .iter()
        .zip(&whole)
        .all(|(a, b)| a.to_bits() == b.to_bits()));
    // The look-ahead alone does not settle there: the file was needed.
    let no_file = BandBlocks {
        spill: false,
        ..BandBlocks::default()
    };
    let err = EcgReference::streamed_with(&mut source, fs, no_file).unwrap_err();
    assert!(matches!(err, EcgStreamError::Unsettled { .. }), "{err}");
    let r = streamed(&x, fs, 4096, BandBlocks::default());
    assert_eq!(r, EcgReference::new(&x, fs).unwrap());
}

#[test]
fn rates_and_changing_sources_are_refused() {
    let x = [0.0; 100];
    let mut source = SliceSource {
        samples: &x,
        block: 10,
    };
    let err = EcgReference::streamed(&mut source, 50.0).unwrap_err();
    assert!(matches!(
        err,
        EcgStreamError::Ecg(EcgError::UnsupportedRate(_))
    ));
    // A source that gives one sample more each pass.
    struct Growing(Vec<f64>);
    impl EcgSource for Growing {
        fn each_block(
            &mut self,
            sink: &mut dyn FnMut(&[f64]) -> Result<(), EcgStreamError>,
        ) -> Result<(), EcgStreamError> {
            self.0.push(0.0);
            sink(&self.0)
        }
    }
    let err = EcgReference::streamed(&mut Growing(vec![0.0; 500]), 250.0).unwrap_err();
    assert!(
        matches!(
            err,
            EcgStreamError::Changed {
                first: 501,
                now: 502
            }
        ),
        "{err}"
    );
}
