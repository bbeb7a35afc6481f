//! Counting the pipeline's instructions with SysTick.
//!
//! QEMU's cycle counter (DWT) is not emulated, but under `-icount shift=0`
//! every instruction advances virtual time by exactly 1 ns, and SysTick,
//! clocked from the 25 MHz system clock, then ticks once per 40
//! instructions. Each `push` is bracketed by two SysTick reads; an empty
//! bracket, taken just before, measures what the reads themselves cost, and
//! is subtracted. A single bracket is exact only to a tick, but the tick's
//! phase wanders from sample to sample, so over a recording the sums are
//! exact to a few instructions per thousand samples.
//!
//! Before the run, a block of 4000 `nop`s is timed: without `-icount` the
//! ticks follow the host's clock and the count would be meaningless, so the
//! run is refused unless it comes to 100 ticks (±1).

use core::fmt::Write;
use core::sync::atomic::{compiler_fence, Ordering};

use cortex_m::peripheral::syst::SystClkSource;
use cortex_m::peripheral::SYST;
use plethwire_dsp::pipeline::{Output, Pipeline};

use crate::semihost::{HostError, HostFile, Mode};
use crate::session::{Push, Totals};

/// Instructions per SysTick tick: 25 MHz system clock, 1 ns per
/// instruction under `-icount shift=0`.
pub const INSTRUCTIONS_PER_TICK: u64 = 40;
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

/// The one call being measured; never inlined, so its cost is the cost of
/// a call to `push` as any firmware makes it.
#[inline(never)]
fn timed_push(pipeline: &mut Pipeline, x: f32) -> Output {
    pipeline.push(x)
}

impl Counter {
    /// Start SysTick free-running on the processor clock, without
    /// interrupts, and calibrate it.
    #[allow(unsafe_code)] // the calibration's inline `nop`s
    pub fn start(mut syst: SYST) -> Result<Self, &'static str> {
        syst.set_clock_source(SystClkSource::Core);
        syst.set_reload(RELOAD);
        syst.clear_current();
        syst.disable_interrupt();
        syst.enable_counter();
        let a = now();
        // SAFETY: nothing but no-operations.
        unsafe { core::arch::asm!(".rept 4000", "nop", ".endr", options(nomem, nostack)) };
        let b = now();
        let calibration_ticks = ticks(a, b);
        let expected = (CALIBRATION_NOPS / INSTRUCTIONS_PER_TICK) as u32;
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
        let instructions = net_ticks * INSTRUCTIONS_PER_TICK;
        // Hundredths, in integers: the report must not depend on float
        // formatting.
        let hundredths = (instructions * 100 + n / 2).checked_div(n).unwrap_or(0);
        let text_failed = writeln!(f, "plethwire-emulated perf v1")
            .and_then(|_| writeln!(f, "samples {n}"))
            .and_then(|_| writeln!(f, "push_ticks {}", self.push_ticks))
            .and_then(|_| writeln!(f, "empty_ticks {}", self.empty_ticks))
            .and_then(|_| writeln!(f, "max_push_ticks {}", self.max_push_ticks))
            .and_then(|_| writeln!(f, "calibration_nops {CALIBRATION_NOPS}"))
            .and_then(|_| writeln!(f, "calibration_ticks {}", self.calibration_ticks))
            .and_then(|_| writeln!(f, "instructions_per_tick {INSTRUCTIONS_PER_TICK}"))
            .and_then(|_| writeln!(f, "instructions {instructions}"))
            .and_then(|_| {
                writeln!(
                    f,
                    "instructions_per_sample {}.{:02}",
                    hundredths / 100,
                    hundredths % 100
                )
            })
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
