//! The project's core invariant, first instance: the firmware running on an
//! (emulated) Cortex-M4F and the host produce the same numbers, bit for bit,
//! for filter design and for filtering.

use std::time::Duration;

use plethwire_checks::selfcheck::{self, SelfCheck};
use plethwire_checks::{
    build_emulated_firmware, firmware_target_installed, need, needs, qemu, run_emulated,
};
use plethwire_dsp::design::butterworth_bandpass;
use plethwire_dsp::filter::{Cascade, Delta, Df2t};
use plethwire_dsp::pipeline::{BandSections, Config};

/// Must match the firmware's `ORDER`, `LOW_HZ`, `HIGH_HZ`, `FS_HZ`; a
/// mismatch shows up as differing section coefficients.
const ORDER: usize = 2;
const LOW_HZ: f64 = 0.5;
const HIGH_HZ: f64 = 8.0;
const FS_HZ: f64 = 100.0;
/// The firmware's number of built-in samples.
const SAMPLES: usize = 64;

/// Generous: the run takes well under a second, but CI machines can be slow.
const QEMU_TIMEOUT: Duration = Duration::from_secs(60);

/// Build, run under QEMU and parse; `None` when a prerequisite is missing
/// outside CI.
fn run_firmware() -> Option<SelfCheck> {
    if !need(needs::FIRMWARE_TARGET, firmware_target_installed()) {
        return None;
    }
    if !need(needs::QEMU, qemu().is_some()) {
        return None;
    }
    let elf = build_emulated_firmware();
    let (status, stdout) = run_emulated(&elf, QEMU_TIMEOUT);
    assert!(
        status.success(),
        "emulated firmware exited with {status}; its output:\n{stdout}"
    );
    let report = selfcheck::parse(&stdout)
        .unwrap_or_else(|e| panic!("unreadable self-check report: {e}\n{stdout}"));
    Some(report)
}

#[test]
fn emulated_firmware_matches_host_bit_for_bit() {
    let Some(report) = run_firmware() else {
        return;
    };
    // Without these the comparisons below could pass on an empty report.
    assert_eq!(report.samples.len(), SAMPLES, "sample count");
    let design = butterworth_bandpass(ORDER, LOW_HZ, HIGH_HZ, FS_HZ).unwrap();
    let host_sections = design.sections();
    assert_eq!(
        host_sections.len(),
        2,
        "an order-2 band-pass is two sections"
    );
    assert_eq!(report.sections.len(), host_sections.len(), "section count");

    // (a) Design: the device's soft-float f64 maths against the host's.
    for (i, (device, host)) in report.sections.iter().zip(host_sections).enumerate() {
        let host_bits = [host.b0, host.b1, host.b2, host.a1, host.a2].map(f64::to_bits);
        assert_eq!(
            device.coefficients,
            host_bits,
            "section {i}: device coefficients {:?} differ from host {:?}",
            device.values(),
            host_bits.map(f64::from_bits)
        );
    }

    // (b) Filtering: the device's FPU against the host's, on the inputs the
    // device printed.
    let mut delta: Cascade<Delta, 2> = design.cascade().unwrap();
    let mut df2t: Cascade<Df2t, 2> = design.cascade().unwrap();
    for (n, s) in report.samples.iter().enumerate() {
        let x = f32::from_bits(s.x);
        let (yd, yt) = (delta.process(x), df2t.process(x));
        assert_eq!(
            s.delta,
            yd.to_bits(),
            "sample {n} (x = {x:e}): device Delta output {:e} != host {yd:e}",
            f32::from_bits(s.delta)
        );
        assert_eq!(
            s.df2t,
            yt.to_bits(),
            "sample {n} (x = {x:e}): device Df2t output {:e} != host {yt:e}",
            f32::from_bits(s.df2t)
        );
    }
}

/// Guards against a degenerate report (for example all-zero input or a
/// filter stuck at one value), which would make the bit-for-bit comparison
/// above prove little.
#[test]
fn emulated_report_exercises_the_filters() {
    let Some(report) = run_firmware() else {
        return;
    };
    let xs: Vec<f32> = report.samples.iter().map(|s| f32::from_bits(s.x)).collect();
    assert!(xs.iter().all(|x| x.is_finite()), "inputs must be finite");
    let distinct_inputs = {
        let mut bits: Vec<u32> = report.samples.iter().map(|s| s.x).collect();
        bits.sort_unstable();
        bits.dedup();
        bits.len()
    };
    assert!(
        distinct_inputs > SAMPLES / 2,
        "inputs barely vary ({distinct_inputs} distinct values)"
    );
    for (name, ys) in [
        (
            "Delta",
            report.samples.iter().map(|s| s.delta).collect::<Vec<_>>(),
        ),
        (
            "Df2t",
            report.samples.iter().map(|s| s.df2t).collect::<Vec<_>>(),
        ),
    ] {
        let ys: Vec<f32> = ys.into_iter().map(f32::from_bits).collect();
        assert!(ys.iter().all(|y| y.is_finite()), "{name} output not finite");
        assert!(
            ys.windows(2).any(|w| w[0] != w[1]),
            "{name} output is constant"
        );
    }
}

/// A firmware that hangs must fail the check rather than stall the suite:
/// with no time at all to run, QEMU is killed and `run_emulated` panics.
#[test]
fn a_run_past_its_deadline_is_killed() {
    if !need(needs::FIRMWARE_TARGET, firmware_target_installed()) {
        return;
    }
    if !need(needs::QEMU, qemu().is_some()) {
        return;
    }
    let elf = build_emulated_firmware();
    let outcome = std::panic::catch_unwind(|| run_emulated(&elf, Duration::ZERO));
    let message = outcome
        .err()
        .and_then(|p| p.downcast::<String>().ok())
        .expect("run_emulated panics with a message when the deadline passes");
    assert!(message.contains("did not exit"), "{message}");
}

/// The rate a real board's `src/rate.rs` sets (`SAMPLE_RATE_HZ`).
fn board_rate(board: &str) -> f32 {
    let path = format!(
        "{}/../firmware/{board}/src/rate.rs",
        env!("CARGO_MANIFEST_DIR")
    );
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path}: {e}"));
    let value = text
        .split("SAMPLE_RATE_HZ: u32 =")
        .nth(1)
        .and_then(|rest| rest.split(';').next())
        .unwrap_or_else(|| panic!("{path}: no SAMPLE_RATE_HZ"));
    value.trim().parse().unwrap()
}

/// The real boards run filters designed at build time, on the PC
/// (firmware/*/build.rs, `BandSections::design` written out by
/// `BandSections::source`), where `Pipeline::new` would design them on the
/// chip. The device's own design and the build script's must be the same
/// bits, and both the host's, at the boards' rates and across the range.
#[test]
fn filters_designed_at_build_time_are_the_devices_own_design() {
    let Some(report) = run_firmware() else {
        return;
    };
    assert_eq!(report.bands.len(), report.built.len());
    assert!(report.bands.len() >= 3, "{} bands", report.bands.len());
    let rates: Vec<f32> = report.bands.iter().map(|b| f32::from_bits(b[0])).collect();
    for board in ["stm32f411", "rp2040"] {
        let rate = board_rate(board);
        assert!(
            rates.contains(&rate),
            "{board}'s {rate} Hz not among {rates:?}"
        );
    }
    for (i, (device, built)) in report.bands.iter().zip(&report.built).enumerate() {
        let fs = f32::from_bits(device[0]);
        assert_eq!(device, built, "{fs} Hz: device design != build script's");
        let host = BandSections::design(&Config::new(fs)).unwrap();
        let d = |d: &Delta| [d.c0, d.c1, d.c2, d.g1, d.g2];
        let host_bits: Vec<u32> = [host.sample_rate_hz, host.band_low_hz, host.band_high_hz]
            .into_iter()
            .chain(d(&host.lowpass))
            .chain(d(&host.highpass))
            .map(f32::to_bits)
            .collect();
        assert_eq!(
            &device[..],
            &host_bits[..],
            "band {i}, {fs} Hz: device != host"
        );
        // Not a degenerate design: the low-pass passes DC, the high-pass
        // blocks it exactly (c2 = 0).
        assert!(host.lowpass.c2 > 0.0 && host.highpass.c2 == 0.0, "{host:?}");
    }
}
