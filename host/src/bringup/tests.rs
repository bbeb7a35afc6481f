//! The checks on synthetic blocks of known content; every expected value is
//! worked out by hand in the comment beside it.

use super::ambient::ambient_share;
use super::clipping::clipped_share;
use super::hum::mains_hum;
use super::perfusion::perfusion_index;
use super::pulse_bits::pulse_bits;
use super::settling::drive_settling;
use super::snr::heart_snr;
use super::spectrum::periodogram;
use super::{AdcRange, Block, BringupError, Verdict};
use std::f64::consts::PI;

/// A 12-bit ADC read in codes.
fn codes12() -> AdcRange {
    AdcRange::new(0.0, 4095.0, 1.0).unwrap()
}

/// `dc` plus sines given as (frequency Hz, amplitude), `n` samples at `fs`.
fn signal(fs: f64, n: usize, dc: f64, sines: &[(f64, f64)]) -> Vec<f64> {
    (0..n)
        .map(|i| {
            let t = i as f64 / fs;
            dc + sines
                .iter()
                .map(|(f, a)| a * (2.0 * PI * f * t).sin())
                .sum::<f64>()
        })
        .collect()
}

fn close(a: f64, b: f64, tol: f64) {
    assert!((a - b).abs() <= tol, "{a} is not within {tol} of {b}");
}

#[test]
fn perfusion_index_of_a_sine_on_a_known_dc() {
    // 120 Hz puts samples on the 1.2 Hz sine's crest (n = 25: phase π/2) and
    // trough (n = 75: 3π/2), so peak-to-peak is exactly 2 × 20 = 40; ten
    // seconds are 12 whole cycles, so the mean is the DC, 2000.
    // PI = 40 / 2000 × 100 = 2 %.
    let x = signal(120.0, 1200, 2000.0, &[(1.2, 20.0)]);
    let check = perfusion_index(&Block::new(&x, 120.0, codes12()).unwrap());
    close(check.value.unwrap(), 2.0, 1e-9);
    assert_eq!(check.verdict, Verdict::Clear);
    // Amplitude 5: 10 / 2000 × 100 = 0.5 %, between 0.2 and 1.
    let x = signal(120.0, 1200, 2000.0, &[(1.2, 5.0)]);
    let check = perfusion_index(&Block::new(&x, 120.0, codes12()).unwrap());
    close(check.value.unwrap(), 0.5, 1e-9);
    assert_eq!(check.verdict, Verdict::Borderline);
    // Nothing above the low rail: no DC to divide by.
    let x = vec![0.0; 100];
    let check = perfusion_index(&Block::new(&x, 120.0, codes12()).unwrap());
    assert_eq!((check.value, check.verdict), (None, Verdict::NotMeasurable));
}

#[test]
fn bits_of_pulse_in_codes_and_in_volts() {
    // Peak-to-peak 40 codes (as above): log2 40 = 5.3219, under 6 bits.
    let x = signal(120.0, 1200, 2000.0, &[(1.2, 20.0)]);
    let check = pulse_bits(&Block::new(&x, 120.0, codes12()).unwrap());
    close(check.value.unwrap(), 40f64.log2(), 1e-9);
    assert_eq!(check.verdict, Verdict::Borderline);
    // In volts, 3.3 V over 4096 codes: a sine of 64 codes amplitude spans
    // 128 codes = 2^7, so 7 bits.
    let step = 3.3 / 4096.0;
    let adc = AdcRange::new(0.0, 3.3, step).unwrap();
    let x = signal(120.0, 1200, 1.5, &[(1.2, 64.0 * step)]);
    let check = pulse_bits(&Block::new(&x, 120.0, adc).unwrap());
    close(check.value.unwrap(), 7.0, 1e-9);
    assert_eq!(check.verdict, Verdict::Clear);
    // A flat block has no pulse.
    let x = vec![1000.0; 50];
    let check = pulse_bits(&Block::new(&x, 120.0, codes12()).unwrap());
    assert_eq!((check.value, check.verdict), (None, Verdict::Trouble));
}

#[test]
fn periodogram_of_a_sine_on_its_bin() {
    // 1000 samples at 100 Hz: bins 0.1 Hz apart, 1.2 Hz is bin 12. A sine of
    // amplitude A on a bin has |X| = A N / 2, density |X|² / (fs N), doubled
    // one-sided: A² N / (2 fs) = 1000 / 200 = 5 per Hz; all other bins 0.
    let x = signal(100.0, 1000, 7.0, &[(1.2, 1.0)]);
    let psd = periodogram(&x, 100.0);
    assert_eq!(psd.len(), 501);
    close(psd[12], 5.0, 1e-9);
    close(psd[0], 0.0, 1e-9);
    close(psd[13], 0.0, 1e-9);
    // Parseval: the bins times 0.1 Hz sum to the variance, A² / 2 = 0.5.
    close(psd.iter().sum::<f64>() * 0.1, 0.5, 1e-9);
}

#[test]
fn heart_band_snr_against_a_known_out_of_band_sine() {
    // 1.2 Hz amplitude 1 (power 1/2) in the band, 10 Hz amplitude 0.1
    // (power 0.01/2) outside: ratio 100, 20 dB.
    let x = signal(100.0, 1000, 500.0, &[(1.2, 1.0), (10.0, 0.1)]);
    let check = heart_snr(&Block::new(&x, 100.0, codes12()).unwrap()).unwrap();
    close(check.value.unwrap(), 20.0, 1e-6);
    assert_eq!(check.verdict, Verdict::Clear);
    // 10 Hz amplitude 0.5 (power 0.125): ratio 4, 6.02 dB, between 3 and 10.
    let x = signal(100.0, 1000, 500.0, &[(1.2, 1.0), (10.0, 0.5)]);
    let check = heart_snr(&Block::new(&x, 100.0, codes12()).unwrap()).unwrap();
    close(check.value.unwrap(), 10.0 * 4f64.log10(), 1e-6);
    assert_eq!(check.verdict, Verdict::Borderline);
    // 5 s is shorter than the 8 s the spectral checks take.
    let x = signal(100.0, 500, 500.0, &[(1.2, 1.0)]);
    let err = heart_snr(&Block::new(&x, 100.0, codes12()).unwrap()).unwrap_err();
    assert!(err.to_string().contains("block length"), "{err}");
}

#[test]
fn mains_hum_of_a_known_sine() {
    // 10 s at 250 Hz: 1.2 Hz amplitude 1 is 12 whole cycles (heart band
    // power 1/2); 50 Hz amplitude 0.05 is 500 cycles, power 0.05² / 2 =
    // 0.00125. 0.00125 / 0.5 = 1/400: -26.02 dB. Nothing at 60 Hz.
    let x = signal(250.0, 2500, 2000.0, &[(1.2, 1.0), (50.0, 0.05)]);
    let hum = mains_hum(&Block::new(&x, 250.0, codes12()).unwrap()).unwrap();
    assert_eq!(hum[0].mains_hz, 50.0);
    close(hum[0].check.value.unwrap(), -10.0 * 400f64.log10(), 1e-6);
    assert_eq!(hum[0].check.verdict, Verdict::Clear);
    assert!(hum[1].check.value.unwrap() < -100.0, "{:?}", hum[1]);
    // 60 Hz amplitude 2: power 2, four times the pulse's: +6.02 dB.
    let x = signal(250.0, 2500, 2000.0, &[(1.2, 1.0), (60.0, 2.0)]);
    let hum = mains_hum(&Block::new(&x, 250.0, codes12()).unwrap()).unwrap();
    close(hum[1].check.value.unwrap(), 10.0 * 4f64.log10(), 1e-6);
    assert_eq!(hum[1].check.verdict, Verdict::Trouble);
}

#[test]
fn mains_hum_at_or_above_nyquist_is_not_measurable() {
    // 100 Hz: Nyquist is 50 Hz, neither 50 nor 60 Hz lies below it. 110 Hz:
    // Nyquist 55 Hz, 50 Hz only.
    for (fs, measurable) in [(100.0, [false, false]), (110.0, [true, false])] {
        let x = signal(fs, 1100, 2000.0, &[(1.2, 1.0)]);
        let hum = mains_hum(&Block::new(&x, fs, codes12()).unwrap()).unwrap();
        for (h, m) in hum.iter().zip(measurable) {
            assert_eq!(h.check.verdict != Verdict::NotMeasurable, m, "{h:?}");
            assert_eq!(h.check.value.is_some(), m, "{h:?}");
        }
        assert!(hum[1].check.message.contains("not measurable"));
    }
}

#[test]
fn clipped_share_counts_the_rails_and_one_code_inside() {
    // Of 100 samples: 3 at 4095, 1 at 4094 and 1 at 1 (within one code of a
    // rail), 1 at 4093 (two codes in, not clipped): 5 / 100 = 5 %.
    let mut x = vec![2000.0; 100];
    x[..6].copy_from_slice(&[4095.0, 4095.0, 4095.0, 4094.0, 1.0, 4093.0]);
    let check = clipped_share(&Block::new(&x, 100.0, codes12()).unwrap());
    close(check.value.unwrap(), 0.05, 1e-12);
    assert_eq!(check.verdict, Verdict::Trouble);
    // One of 200 at the low rail: 0.5 %, under 1 %.
    let mut x = vec![2000.0; 200];
    x[7] = 0.0;
    let check = clipped_share(&Block::new(&x, 100.0, codes12()).unwrap());
    close(check.value.unwrap(), 0.005, 1e-12);
    assert_eq!(check.verdict, Verdict::Borderline);
    let x = vec![2000.0; 200];
    let check = clipped_share(&Block::new(&x, 100.0, codes12()).unwrap());
    assert_eq!((check.value, check.verdict), (Some(0.0), Verdict::Clear));
}

#[test]
fn ambient_share_of_the_led_on_level() {
    // 100 / 1000 = 10 % (clear at most), 300 / 1000 = 30 %, 600 / 1000 = 60 %.
    for (ambient, share, verdict) in [
        (100.0, 0.1, Verdict::Clear),
        (300.0, 0.3, Verdict::Borderline),
        (600.0, 0.6, Verdict::Trouble),
    ] {
        let check = ambient_share(ambient, 1000.0).unwrap();
        close(check.value.unwrap(), share, 1e-12);
        assert_eq!(check.verdict, verdict);
    }
    let err = ambient_share(-1.0, 1000.0).unwrap_err();
    assert!(err.to_string().contains("ambient level"), "{err}");
    let err = ambient_share(10.0, 0.0).unwrap_err();
    assert!(err.to_string().contains("LED-on level"), "{err}");
}

#[test]
fn drive_settling_since_the_last_change_over_tolerance() {
    // At 10 Hz: a step at index 2, then steps of 0.4 (under the 0.5
    // tolerance) until index 32. Last change at 2, last value at 32:
    // 30 / 10 = 3 s, at least 2 s, settled.
    let mut drive = vec![5.0, 5.0];
    drive.extend((0..31).map(|i| 6.0 + 0.4 * (i % 2) as f64));
    let s = drive_settling(&drive, 10.0, 0.5).unwrap();
    close(s.since_change_s, 3.0, 1e-12);
    assert!(s.settled);
    assert_eq!(s.check.verdict, Verdict::Clear);
    // With a 0.3 tolerance the last 0.4 step (index 32) counts: 0 s.
    let s = drive_settling(&drive, 10.0, 0.3).unwrap();
    close(s.since_change_s, 0.0, 1e-12);
    assert!(!s.settled);
    assert_eq!(s.check.verdict, Verdict::Borderline);
    // No change at all: the whole span, 4 values at 10 Hz = 0.3 s.
    let s = drive_settling(&[7.0; 4], 10.0, 0.0).unwrap();
    close(s.since_change_s, 0.3, 1e-12);
    assert!(!s.settled);
    let err = drive_settling(&[7.0], 10.0, 0.0).unwrap_err();
    assert!(matches!(
        err,
        BringupError::TooFew {
            name: "LED drive values",
            ..
        }
    ));
}

#[test]
fn bad_parameters_are_named() {
    let x = [1.0, 2.0, 3.0, f64::NAN];
    let err = Block::new(&x, 100.0, codes12()).unwrap_err();
    assert_eq!(
        err,
        BringupError::NotFinite {
            name: "samples",
            index: 3
        }
    );
    let err = Block::new(&[1.0, 2.0], 0.0, codes12()).unwrap_err();
    assert!(err.to_string().contains("sample rate"), "{err}");
    let err = AdcRange::new(5.0, 1.0, 1.0).unwrap_err();
    assert!(err.to_string().contains("adc high"), "{err}");
    let err = AdcRange::new(0.0, 1.0, 0.0).unwrap_err();
    assert!(err.to_string().contains("adc step"), "{err}");
}

#[test]
fn band_bins_and_parseval_equal_the_whole_periodogram() {
    // The live checks' shortcut: the heart band's bins alone, and the
    // power above DC as the mean square (Parseval's theorem), against the
    // sums over the whole periodogram, at even and odd lengths.
    use super::spectrum::{band_power, band_power_of, centred, power_above_dc};
    for n in [500, 501] {
        let x: Vec<f64> = (0..n)
            .map(|i| {
                let t = i as f64 / 50.0;
                3.0 + (2.0 * PI * 1.1 * t).sin()
                    + 0.3 * (2.0 * PI * 7.0 * t).cos()
                    + 0.01 * ((i * 7919) % 13) as f64
            })
            .collect();
        let psd = periodogram(&x, 50.0);
        let c = centred(&x);
        let whole = band_power(&psd, n, 50.0, 0.5, 3.7);
        assert!((band_power_of(&c, 50.0, 0.5, 3.7) - whole).abs() < 1e-12 * whole);
        let df = 50.0 / n as f64;
        let above: f64 = psd.iter().skip(1).map(|p| p * df).sum();
        assert!((power_above_dc(&c) - above).abs() < 1e-12 * above, "n {n}");
    }
}
