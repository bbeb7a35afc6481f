//! The pipeline on a core without an FPU: the firmware built for
//! `thumbv6m-none-eabi` on QEMU's microbit machine (Cortex-M0, every float
//! operation in compiler-builtins' IEEE soft-float), over whole shared
//! recordings. Its beats, state changes and sample blocks must equal the
//! host replay's bit for bit (IEEE single precision without fused
//! multiply-add on both sides), and its cost, counted in instructions as
//! on the Cortex-M4F (docs/performance.md, "Method"), and the RAM it used
//! must stay as recorded in docs/performance.toml's `[m0]` section.
//!
//! Recordings: CapnoBase (Karlen et al., IEEE TBME 60(7):1946, 2013) at
//! 300 Hz and BIDMC (Pimentel et al., IEEE TBME 64(8):1914, 2017) at
//! 125 Hz, from ../shared/data.

use plethwire::emulate::{Core, Link, PerfReport};
use plethwire_checks::emulation::{
    assert_identical, default_config, emulation_on, run_both, shared_record,
};
use plethwire_checks::repo_root;
use serde::Deserialize;

#[derive(Deserialize)]
struct Book {
    m0: M0Book,
}

#[derive(Deserialize)]
struct M0Book {
    tolerance: f64,
    share_clock_hz: f64,
    share_rate_hz: f64,
    share_target: f64,
    ram_target_bytes: u64,
    record: Vec<M0Record>,
}

#[derive(Deserialize)]
struct M0Record {
    path: String,
    sample_rate_hz: f64,
    samples: u64,
    instructions_per_sample: f64,
    ram_used_bytes: u64,
}

fn book() -> M0Book {
    let path = repo_root().join("docs/performance.toml");
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let book: Book = toml::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    book.m0
}

/// `got` within `tolerance` of `want`, or a message saying both and how
/// to record the new figure.
fn within(what: &str, got: f64, want: f64, tolerance: f64, update: &str) {
    let ratio = got / want;
    assert!(
        (1.0 - tolerance..=1.0 + tolerance).contains(&ratio),
        "{what}: {got:.1} on the emulated Cortex-M0, {:+.1} % from the recorded {want:.1} \
         (allowed ±{:.0} %). {update}",
        100.0 * (ratio - 1.0),
        100.0 * tolerance
    );
}

/// Run `relative` counted on the M0, check it equals the host, and hold
/// its figures to the book.
fn check(relative: &str, at_least_beats: usize) {
    let m0 = book();
    let want = m0
        .record
        .iter()
        .find(|r| r.path == relative)
        .unwrap_or_else(|| panic!("docs/performance.toml [m0] has no record {relative}"));
    let Some(e) = emulation_on(Core::M0, Link::File, true) else {
        return;
    };
    let Some(rec) = shared_record(relative) else {
        return;
    };
    assert_eq!(rec.signal.fs, want.sample_rate_hz, "{relative}: rate");
    let (session, host) = run_both(&e, &rec.signal.samples, default_config(&rec));
    let label = format!("{relative} on the Cortex-M0");
    let beats = assert_identical(&label, &session, &host);
    assert!(beats >= at_least_beats, "{label}: only {beats} beats");
    let perf: PerfReport = session.perf.expect("counting was asked for");
    assert_eq!(perf.core, Core::M0, "{label}: the machine counted on");
    assert_eq!(perf.samples, want.samples, "{label}: samples counted");
    assert_eq!(
        perf.calibration_ticks,
        perf.expected_calibration_ticks(),
        "{label}: SysTick is not counting instructions"
    );
    let got = perf.instructions_per_sample;
    let share = got * m0.share_rate_hz / m0.share_clock_hz;
    let ram = perf.ram_used_bytes();
    eprintln!(
        "{label}: {beats} beats, {} state changes, {} sample blocks bit for bit; \
         {got:.1} instructions per sample (recorded {:.1}), dearest sample about {}; \
         {:.2} % of a {:.0} MHz core at {:.0} Hz (target {:.0} %); RAM {ram} bytes \
         ({} static, {} stack; recorded {}, target {})",
        host.replay.states.len(),
        host.blocks.len(),
        want.instructions_per_sample,
        perf.max_instructions(),
        100.0 * share,
        m0.share_clock_hz / 1e6,
        m0.share_rate_hz,
        100.0 * m0.share_target,
        perf.static_bytes,
        perf.stack_peak_bytes,
        want.ram_used_bytes,
        m0.ram_target_bytes
    );
    let update = format!(
        "If the change is deliberate, set instructions_per_sample = {got:.1} and \
         ram_used_bytes = {ram} for {relative} in docs/performance.toml [m0] and update the \
         table in docs/performance.md (regenerate with `plethwire emulate \
         ../shared/data/{relative} --core m0 --count-instructions --quiet`)."
    );
    within(
        &format!("{relative}: instructions per sample"),
        got,
        want.instructions_per_sample,
        m0.tolerance,
        &update,
    );
    within(
        &format!("{relative}: RAM used, bytes"),
        ram as f64,
        want.ram_used_bytes as f64,
        m0.tolerance,
        &update,
    );
    // The machine has the micro:bit's 16 KiB; a run past it would fault,
    // but say so plainly when the margin is gone.
    assert!(
        ram <= m0.ram_target_bytes,
        "{relative}: {ram} bytes of RAM used, more than the micro:bit's {}",
        m0.ram_target_bytes
    );
}

#[test]
fn capnobase_300_hz_on_the_m0_equals_the_host_and_costs_as_recorded() {
    check("capnobase/cb0009", 800);
}

#[test]
fn bidmc_125_hz_on_the_m0_equals_the_host_and_costs_as_recorded() {
    check("bidmc/bidmc01", 700);
}

/// 60 s of a 300 Hz record down the microbit's emulated UART, frames back
/// on it, as a real board would send them.
#[test]
fn the_m0_streams_the_same_beats_over_its_uart() {
    let Some(e) = emulation_on(Core::M0, Link::Uart, false) else {
        return;
    };
    let Some(rec) = shared_record("capnobase/cb0031") else {
        return;
    };
    let samples = &rec.signal.samples[..(60.0 * rec.signal.fs) as usize];
    let (session, host) = run_both(&e, samples, default_config(&rec));
    let beats = assert_identical("cb0031 over the M0's UART", &session, &host);
    assert!(beats >= 60, "only {beats} beats in 60 s");
    eprintln!("cb0031, first 60 s over the M0's UART: {beats} beats identical");
}

#[test]
fn the_m0_record_book_is_complete() {
    let m0 = book();
    assert!(m0.tolerance > 0.0 && m0.tolerance <= 0.10);
    // The yardstick: a 125 MHz Cortex-M0+ at 250 Hz, 5 % of it.
    assert_eq!(
        (m0.share_clock_hz, m0.share_rate_hz, m0.share_target),
        (125e6, 250.0, 0.05)
    );
    // The micro:bit's nRF51822 (16 KiB), the RAM the firmware should fit.
    assert_eq!(m0.ram_target_bytes, 16 * 1024);
    let rates: Vec<f64> = m0.record.iter().map(|r| r.sample_rate_hz).collect();
    assert!(
        rates.contains(&300.0) && rates.contains(&125.0),
        "{rates:?}"
    );
    for r in &m0.record {
        assert!(r.instructions_per_sample > 0.0 && r.samples > 0 && r.ram_used_bytes > 0);
    }
}

/// The bit equality above rests on both sides rounding every product and
/// every sum: Rust never contracts `a * b + c` into a fused multiply-add
/// on its own (it sets no fast-math flags), so the only way one could
/// enter the shared code is by name. No `mul_add` or `fma` anywhere in
/// plethwire-dsp, whose code both the boards and the host replay run.
#[test]
fn the_shared_code_asks_for_no_fused_multiply_add() {
    fn sources(dir: &std::path::Path, out: &mut Vec<std::path::PathBuf>) {
        for entry in std::fs::read_dir(dir).unwrap_or_else(|e| panic!("{}: {e}", dir.display())) {
            let path = entry.expect("a folder entry").path();
            if path.is_dir() {
                sources(&path, out);
            } else if path.extension().is_some_and(|x| x == "rs") {
                out.push(path);
            }
        }
    }
    let mut files = Vec::new();
    sources(&repo_root().join("shared-dsp/src"), &mut files);
    assert!(
        files.len() > 20,
        "only {} files in shared-dsp/src",
        files.len()
    );
    for file in files {
        let text = std::fs::read_to_string(&file).expect("a readable source file");
        for (n, line) in text.lines().enumerate() {
            let code = line.split("//").next().unwrap_or("");
            for word in ["mul_add", "fma(", "fmaf(", "fmaf16", "fma::"] {
                assert!(
                    !code.contains(word),
                    "{}:{}: `{word}` fuses a multiply and an add, which the boards \
                     without one would round differently: {line}",
                    file.display(),
                    n + 1
                );
            }
        }
    }
}
