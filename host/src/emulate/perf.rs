//! The emulated board's instruction count report (`perf` mode).
//!
//! The firmware writes one `key value` per line between the header
//! `plethwire-emulated perf v2` and `end`; `docs/performance.md` explains
//! the method. Parsing is strict: a missing or inconsistent figure is an
//! error, never a zero.

use serde::Serialize;

use super::Core;

/// First line of a version-2 report.
pub const HEADER: &str = "plethwire-emulated perf v2";

/// Nanoseconds in a second: one instruction is 1 ns under `-icount shift=0`.
const NS_PER_S: u64 = 1_000_000_000;

/// What one run of `Pipeline::push` over a recording cost on the board.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PerfReport {
    /// The core whose machine the firmware says it ran on (`machine
    /// mps2-an386` or `microbit`).
    pub core: Core,
    /// Samples pushed (the recording; `finish` is not counted).
    pub samples: u64,
    /// SysTick ticks inside the brackets around each `push`.
    pub push_ticks: u64,
    /// Ticks inside as many empty brackets: what the measuring costs.
    pub empty_ticks: u64,
    /// Ticks of the dearest single `push` (to a tick).
    pub max_push_ticks: u64,
    /// Ticks the 4000-instruction calibration block took
    /// ([`Self::expected_calibration_ticks`] when SysTick counts
    /// instructions).
    pub calibration_ticks: u64,
    /// SysTick's clock in Hz: a tick is `1e9 / core_clock_hz` instructions
    /// (40 at 25 MHz, 62.5 at 16 MHz).
    pub core_clock_hz: u64,
    /// Instructions of all pushes, the measuring subtracted.
    pub instructions: u64,
    /// `instructions / samples`.
    pub instructions_per_sample: f64,
    /// Bytes of RAM the firmware claims (statics and stack).
    pub ram_bytes: u64,
    /// Bytes of it the statics take (`.data`, `.bss`, `.uninit`).
    pub static_bytes: u64,
    /// The deepest the stack went in the run, bytes (painted and read back).
    pub stack_peak_bytes: u64,
}

impl PerfReport {
    /// Instructions of the dearest single `push`, to within a tick.
    pub fn max_instructions(&self) -> u64 {
        ticks_to_instructions(self.max_push_ticks, self.core_clock_hz)
    }

    /// Ticks the calibration block takes when SysTick counts instructions
    /// (4000 instructions at this clock: 100 at 25 MHz, 64 at 16 MHz).
    pub fn expected_calibration_ticks(&self) -> u64 {
        4000 * self.core_clock_hz / NS_PER_S
    }

    /// RAM the run used: the statics and the stack's peak, bytes.
    pub fn ram_used_bytes(&self) -> u64 {
        self.static_bytes + self.stack_peak_bytes
    }
}

/// Instructions in `ticks` of a SysTick clocked at `clock_hz`, rounded as
/// the firmware rounds them.
fn ticks_to_instructions(ticks: u64, clock_hz: u64) -> u64 {
    (ticks * NS_PER_S + clock_hz / 2) / clock_hz.max(1)
}

/// What is wrong with a perf report; one line.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PerfError {
    /// The first line is not the report's header.
    #[error("the perf report does not start with {HEADER:?}")]
    NoHeader,
    /// A line is not `key value`.
    #[error("perf report line {0:?} is not `key value`")]
    NotKeyValue(String),
    /// The closing `end` line is missing.
    #[error("the perf report has no `end` (the board stopped early?)")]
    NoEnd,
    /// A field is missing.
    #[error("the perf report has no {0}")]
    Missing(String),
    /// A count is not a whole number.
    #[error("perf report: {key} is not a whole number")]
    NotWhole {
        /// The field.
        key: String,
        /// Why it does not parse.
        source: std::num::ParseIntError,
    },
    /// The machine is not one of ours.
    #[error("perf report: unknown machine {0:?}")]
    UnknownMachine(String),
    /// The stack's peak exceeds the RAM.
    #[error("perf report: the statics and the stack's peak exceed the RAM")]
    RamMismatch,
    /// The per-sample figure is not a number.
    #[error("perf report: instructions_per_sample is not a number")]
    NotNumber(#[source] std::num::ParseFloatError),
    /// The empty brackets cost more than the pushes.
    #[error("perf report: the empty brackets cost more than the pushes")]
    EmptyCostsMore,
    /// The instruction total is not the net ticks times instructions per tick.
    #[error("perf report: instructions do not match the ticks")]
    TicksMismatch,
    /// The per-sample figure is not the total over the samples.
    #[error("perf report: the per-sample figure does not match the total")]
    MeanMismatch,
}

/// Parse a report; the error says what is wrong in one line.
pub fn parse(text: &str) -> Result<PerfReport, PerfError> {
    let mut lines = text.lines();
    if lines.next() != Some(HEADER) {
        return Err(PerfError::NoHeader);
    }
    let mut fields: Vec<(&str, &str)> = Vec::new();
    let mut ended = false;
    for line in lines {
        if line == "end" {
            ended = true;
            break;
        }
        let (k, v) = line
            .split_once(' ')
            .ok_or_else(|| PerfError::NotKeyValue(line.to_owned()))?;
        fields.push((k, v));
    }
    if !ended {
        return Err(PerfError::NoEnd);
    }
    let get = |key: &str| {
        fields
            .iter()
            .find(|(k, _)| *k == key)
            .map(|(_, v)| *v)
            .ok_or_else(|| PerfError::Missing(key.to_owned()))
    };
    let int = |key: &str| {
        get(key)?
            .parse::<u64>()
            .map_err(|source| PerfError::NotWhole {
                key: key.to_owned(),
                source,
            })
    };
    let name = get("machine")?;
    let core = Core::ALL
        .into_iter()
        .find(|c| c.machine() == name)
        .ok_or_else(|| PerfError::UnknownMachine(name.to_owned()))?;
    let r = PerfReport {
        core,
        samples: int("samples")?,
        push_ticks: int("push_ticks")?,
        empty_ticks: int("empty_ticks")?,
        max_push_ticks: int("max_push_ticks")?,
        calibration_ticks: int("calibration_ticks")?,
        core_clock_hz: int("core_clock_hz")?,
        instructions: int("instructions")?,
        instructions_per_sample: get("instructions_per_sample")?
            .parse::<f64>()
            .map_err(PerfError::NotNumber)?,
        ram_bytes: int("ram_bytes")?,
        static_bytes: int("static_bytes")?,
        stack_peak_bytes: int("stack_peak_bytes")?,
    };
    let net = r
        .push_ticks
        .checked_sub(r.empty_ticks)
        .ok_or(PerfError::EmptyCostsMore)?;
    if ticks_to_instructions(net, r.core_clock_hz) != r.instructions {
        return Err(PerfError::TicksMismatch);
    }
    if r.ram_used_bytes() > r.ram_bytes {
        return Err(PerfError::RamMismatch);
    }
    let mean = r.instructions as f64 / r.samples.max(1) as f64;
    if (mean - r.instructions_per_sample).abs() > 0.006 {
        return Err(PerfError::MeanMismatch);
    }
    Ok(PerfReport {
        instructions_per_sample: mean,
        ..r
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = "plethwire-emulated perf v2\nmachine mps2-an386\nsamples 4\n\
        push_ticks 110\nempty_ticks 10\nmax_push_ticks 30\ncalibration_nops 4000\n\
        calibration_ticks 100\ncore_clock_hz 25000000\ninstructions 4000\n\
        instructions_per_sample 1000.00\nram_bytes 262144\nstatic_bytes 16\n\
        stack_peak_bytes 20000\nend\n";

    /// The microbit's: 62.5 instructions a tick, rounded to the nearest.
    const M0: &str = "plethwire-emulated perf v2\nmachine microbit\nsamples 3\n\
        push_ticks 11\nempty_ticks 2\nmax_push_ticks 5\ncalibration_nops 4000\n\
        calibration_ticks 64\ncore_clock_hz 16000000\ninstructions 563\n\
        instructions_per_sample 187.67\nram_bytes 32768\nstatic_bytes 16\n\
        stack_peak_bytes 19604\nend\n";

    #[test]
    fn reads_a_report() {
        let r = parse(GOOD).unwrap();
        assert_eq!(r.samples, 4);
        assert_eq!(r.instructions, 4000);
        assert_eq!(r.instructions_per_sample, 1000.0);
        assert_eq!(r.max_instructions(), 1200);
        assert_eq!(r.expected_calibration_ticks(), 100);
        assert_eq!(r.core, Core::M4f);
        let m0 = parse(M0).unwrap();
        assert_eq!(m0.instructions, 563);
        assert_eq!(m0.max_instructions(), 313);
        assert_eq!(m0.expected_calibration_ticks(), 64);
        assert_eq!(m0.ram_used_bytes(), 19620);
    }

    #[test]
    fn refuses_cut_or_inconsistent_reports() {
        assert!(parse(&GOOD.replace("end\n", "")).is_err());
        assert!(parse(&GOOD.replace("instructions 4000", "instructions 4040")).is_err());
        assert!(parse(&GOOD.replace("1000.00", "999.00")).is_err());
        assert!(parse(&GOOD.replace("samples 4\n", "")).is_err());
        assert!(parse(&GOOD.replace("v2", "v1")).is_err());
        assert!(parse(&GOOD.replace("mps2-an386", "lm3s6965evb")).is_err());
        assert!(parse(&GOOD.replace("stack_peak_bytes 20000", "stack_peak_bytes 262140")).is_err());
        assert!(parse(&M0.replace("instructions 563", "instructions 562")).is_err());
    }
}
