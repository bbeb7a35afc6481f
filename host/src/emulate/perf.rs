//! The emulated board's instruction count report (`perf` mode).
//!
//! The firmware writes one `key value` per line between the header
//! `plethwire-emulated perf v1` and `end`; `docs/performance.md` explains
//! the method. Parsing is strict: a missing or inconsistent figure is an
//! error, never a zero.

use serde::Serialize;

/// First line of a version-1 report.
pub const HEADER: &str = "plethwire-emulated perf v1";

/// What one run of `Pipeline::push` over a recording cost on the board.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PerfReport {
    /// Samples pushed (the recording; `finish` is not counted).
    pub samples: u64,
    /// SysTick ticks inside the brackets around each `push`.
    pub push_ticks: u64,
    /// Ticks inside as many empty brackets: what the measuring costs.
    pub empty_ticks: u64,
    /// Ticks of the dearest single `push` (to a tick).
    pub max_push_ticks: u64,
    /// Ticks the 4000-instruction calibration block took (100 when
    /// SysTick counts instructions).
    pub calibration_ticks: u64,
    /// Instructions per tick (40).
    pub instructions_per_tick: u64,
    /// Instructions of all pushes, the measuring subtracted.
    pub instructions: u64,
    /// `instructions / samples`.
    pub instructions_per_sample: f64,
}

impl PerfReport {
    /// Instructions of the dearest single `push`, to within a tick.
    pub fn max_instructions(&self) -> u64 {
        self.max_push_ticks * self.instructions_per_tick
    }
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
    let r = PerfReport {
        samples: int("samples")?,
        push_ticks: int("push_ticks")?,
        empty_ticks: int("empty_ticks")?,
        max_push_ticks: int("max_push_ticks")?,
        calibration_ticks: int("calibration_ticks")?,
        instructions_per_tick: int("instructions_per_tick")?,
        instructions: int("instructions")?,
        instructions_per_sample: get("instructions_per_sample")?
            .parse::<f64>()
            .map_err(PerfError::NotNumber)?,
    };
    let net = r
        .push_ticks
        .checked_sub(r.empty_ticks)
        .ok_or(PerfError::EmptyCostsMore)?;
    if net * r.instructions_per_tick != r.instructions {
        return Err(PerfError::TicksMismatch);
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

    const GOOD: &str = "plethwire-emulated perf v1\nsamples 4\npush_ticks 110\n\
        empty_ticks 10\nmax_push_ticks 30\ncalibration_nops 4000\ncalibration_ticks 100\n\
        instructions_per_tick 40\ninstructions 4000\ninstructions_per_sample 1000.00\nend\n";

    #[test]
    fn reads_a_report() {
        let r = parse(GOOD).unwrap();
        assert_eq!(r.samples, 4);
        assert_eq!(r.instructions, 4000);
        assert_eq!(r.instructions_per_sample, 1000.0);
        assert_eq!(r.max_instructions(), 1200);
    }

    #[test]
    fn refuses_cut_or_inconsistent_reports() {
        assert!(parse(&GOOD.replace("end\n", "")).is_err());
        assert!(parse(&GOOD.replace("instructions 4000", "instructions 4040")).is_err());
        assert!(parse(&GOOD.replace("1000.00", "999.00")).is_err());
        assert!(parse(&GOOD.replace("samples 4\n", "")).is_err());
        assert!(parse(&GOOD.replace("v1", "v2")).is_err());
    }
}
