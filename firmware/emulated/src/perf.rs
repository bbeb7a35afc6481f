//! Counting the pipeline's instructions with SysTick.
//!
//! QEMU's cycle counter (DWT) is not emulated, but under `-icount shift=0`
//! every instruction advances virtual time by exactly 1 ns, and SysTick,
//! clocked from the machine's processor clock ([`machine::CORE_CLOCK_HZ`]),
//! then ticks once per 40 instructions on the mps2-an386 (25 MHz) and once
//! per 62.5 on the microbit (16 MHz). Each `push` is bracketed by two
//! SysTick reads; an empty bracket, taken just before, measures what the
//! reads themselves cost, and is subtracted. A single bracket is exact only
//! to a tick, but the tick's phase wanders from sample to sample, so over a
//! recording the sums are exact to a few instructions per thousand samples.
//!
//! Before the run, a block of 4000 `nop`s is timed: without `-icount` the
//! ticks follow the host's clock and the count would be meaningless, so the
//! run is refused unless it comes to 4000 instructions' worth of ticks (±1).
//!
//! The report also says how much RAM the run took: the statics and the
//! deepest the stack went ([`crate::stack`]).

use core::fmt::Write;
use core::sync::atomic::{compiler_fence, Ordering};

use cortex_m::peripheral::syst::SystClkSource;
use cortex_m::peripheral::SYST;
use plethwire_dsp::pipeline::{Output, Pipeline};

use crate::machine;
use crate::semihost::{HostError, HostFile, Mode};
use crate::session::{Push, Totals};
use crate::stack;

/// Nanoseconds in a second: one instruction is 1 ns under `-icount shift=0`.
const NS_PER_S: u64 = 1_000_000_000;
/// SysTick's largest reload value (24 bits): it wraps every 2^24 ticks.
const RELOAD: u32 = 0x00FF_FFFF;
/// Instructions in the calibration block.
const CALIBRATION_NOPS: u64 = 4000;

/// Times every `push` with SysTick.
pub struct Counter {
    _syst: SYST,
    push_ticks: u64,
    empty_ticks: u64,
    max_push_ticks: u32,
    calibration_ticks: u32,
}

/// The counter's current value (counts down).
#[inline(always)]
fn now() -> u32 {
    // Keeps the compiler from moving work into or out of a bracket.
    compiler_fence(Ordering::SeqCst);
    let t = SYST::get_current();
    compiler_fence(Ordering::SeqCst);
    t
}

/// Ticks from `start` to `end`, across at most one wrap.
#[inline(always)]
fn ticks(start: u32, end: u32) -> u32 {
    start.wrapping_sub(end) & RELOAD
}

/// SysTick's ticks over [`CALIBRATION_NOPS`] `nop`s (and the call and
/// return around them, two instructions more).
fn calibrate() -> u32 {
    let a = now();
    nops();
    let b = now();
    ticks(a, b)
}

/// The calibration block, in a function of its own: a literal load after
/// 8000 bytes of `nop`s in one function would be out of a Thumb-1 `ldr`'s
/// reach on the Cortex-M0.
#[inline(never)]
#[allow(unsafe_code)] // the inline `nop`s
fn nops() {
    // SAFETY: nothing but no-operations.
    unsafe { core::arch::asm!(".rept 4000", "nop", ".endr", options(nomem, nostack)) };
}

/// The one call being measured; never inlined, so its cost is the cost of
/// a call to `push` as any firmware makes it.
#[inline(never)]
fn timed_push(pipeline: &mut Pipeline, x: f32) -> Output {
    pipeline.push(x)
}

impl Counter {
    /// Start SysTick free-running on the processor clock, without
    /// interrupts, and calibrate it.
    pub fn start(mut syst: SYST) -> Result<Self, &'static str> {
        syst.set_clock_source(SystClkSource::Core);
        syst.set_reload(RELOAD);
        syst.clear_current();
        syst.disable_interrupt();
        syst.enable_counter();
        let calibration_ticks = calibrate();
        let expected = (CALIBRATION_NOPS * machine::CORE_CLOCK_HZ / NS_PER_S) as u32;
        if calibration_ticks.abs_diff(expected) > 1 {
            return Err("SysTick does not count instructions: run QEMU with `-icount shift=0`");
        }
        Ok(Self {
            _syst: syst,
            push_ticks: 0,
            empty_ticks: 0,
            max_push_ticks: 0,
            calibration_ticks,
        })
    }

    /// Write the figures for `totals` to the host file `name`, one
    /// `key value` per line (format in `docs/performance.md`).
    pub fn report(&self, totals: &Totals, name: &str) -> Result<(), HostError> {
        let mut f = HostFile::open(name, Mode::Write)?;
        let n = totals.samples;
        let net_ticks = self.push_ticks.saturating_sub(self.empty_ticks);
        let clock = machine::CORE_CLOCK_HZ;
        // Rounded to the nearest instruction: a tick need not be a whole
        // number of them (62.5 at 16 MHz).
        let instructions = (net_ticks * NS_PER_S + clock / 2) / clock;
        // Hundredths, in integers: the report must not depend on float
        // formatting.
        let hundredths = (instructions * 100 + n / 2).checked_div(n).unwrap_or(0);
        let text_failed = writeln!(f, "plethwire-emulated perf v2")
            .and_then(|_| writeln!(f, "machine {}", machine::NAME))
            .and_then(|_| writeln!(f, "samples {n}"))
            .and_then(|_| writeln!(f, "push_ticks {}", self.push_ticks))
            .and_then(|_| writeln!(f, "empty_ticks {}", self.empty_ticks))
            .and_then(|_| writeln!(f, "max_push_ticks {}", self.max_push_ticks))
            .and_then(|_| writeln!(f, "calibration_nops {CALIBRATION_NOPS}"))
            .and_then(|_| writeln!(f, "calibration_ticks {}", self.calibration_ticks))
            .and_then(|_| writeln!(f, "core_clock_hz {clock}"))
            .and_then(|_| writeln!(f, "instructions {instructions}"))
            .and_then(|_| {
                writeln!(
                    f,
                    "instructions_per_sample {}.{:02}",
                    hundredths / 100,
                    hundredths % 100
                )
            })
            .and_then(|_| writeln!(f, "ram_bytes {}", stack::ram_bytes()))
            .and_then(|_| writeln!(f, "static_bytes {}", stack::static_bytes()))
            .and_then(|_| writeln!(f, "stack_peak_bytes {}", stack::peak_bytes()))
            .and_then(|_| writeln!(f, "end"))
            .is_err();
        if text_failed {
            return Err(HostError("the host could not write the perf report"));
        }
        Ok(())
    }
}

impl Push for Counter {
    #[inline(always)]
    fn push(&mut self, pipeline: &mut Pipeline, x: f32) -> Output {
        let e0 = now();
        let e1 = now();
        let p0 = now();
        let out = timed_push(pipeline, x);
        let p1 = now();
        let t = ticks(p0, p1);
        self.empty_ticks += ticks(e0, e1) as u64;
        self.push_ticks += t as u64;
        self.max_push_ticks = self.max_push_ticks.max(t);
        out
    }
}
