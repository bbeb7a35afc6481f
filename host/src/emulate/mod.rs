//! Running a recording through the firmware on an emulated board, and
//! reading back what it sent. Two cores ([`Core`]): QEMU's mps2-an386
//! (Cortex-M4F, the default) and its microbit (Cortex-M0 without an FPU),
//! the same firmware built for each one's target.
//!
//! The host writes a samples feed ([`plethwire_dsp::feed`]: header with the
//! pipeline's `Config`, then `f32` samples), starts QEMU on the emulated
//! firmware (`firmware/emulated`), and decodes the wire frames it sends
//! back: a hello, the beats and state changes, a final status. Two links:
//!
//! * [`Link::File`]: feed and frames are semihosting files in a temporary
//!   folder; fast, for whole recordings. It can also count the pipeline's
//!   instructions ([`Emulation::count_instructions`]).
//! * [`Link::Uart`]: the feed goes into QEMU's standard input, which is
//!   UART0's receive line, and the frames come out of its standard output,
//!   as they would from a real board's serial port (about 10 kB/s).
//!
//! [`Emulation::serve_serial_link`] makes the board a serial device: the
//! UART mode fed in real time, its output on a pseudo-terminal linked at a
//! path for `plethwire listen` (`serial_link.rs`, `pty.rs`).
//!
//! [`compare`] then checks the board's events against
//! [`crate::replay::replay`] bit for bit.

mod board;
mod compare;
mod cores;
mod elf;
mod firmware;
mod perf;
mod pty;
mod run;
mod serial_link;
mod session;

pub use board::{
    build_firmware, build_firmware_for, build_firmware_in, find_qemu, firmware_target_installed,
    qemu_args, runner_args, runner_args_for, target_installed, BuildError, FIRMWARE_PROGRAM,
    FIRMWARE_TARGET, ICOUNT_ARGS, SEMIHOSTING,
};
pub use compare::{
    beat_difference, block_difference, compare, Agreement, BoardEvents, Disagreement,
};
pub use cores::Core;
pub use elf::{check_elf, check_elf_for, ElfProblem};
pub use firmware::{Firmware, FirmwareError, FirmwareSearch, FIRMWARE_VAR, SOURCE_VAR};
pub use perf::{parse as parse_perf, PerfError, PerfReport};
pub use pty::LinkedPty;
pub use serial_link::{LinkReport, PacedFeed};
pub use session::{Session, StreamError};

use std::path::PathBuf;
use std::time::Duration;

use plethwire_dsp::feed::FeedHeader;
use plethwire_dsp::pipeline::Config;
use plethwire_dsp::wire::Frame;

/// How samples reach the board and frames come back.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Link {
    /// Semihosting files.
    File,
    /// UART0 on QEMU's standard input and output.
    Uart,
}

/// One run to make.
#[derive(Debug, Clone)]
pub struct Emulation {
    /// `qemu-system-arm` ([`find_qemu`]).
    pub qemu: PathBuf,
    /// The core, and so the QEMU machine, it runs on.
    pub core: Core,
    /// The emulated firmware's ELF for that core ([`FirmwareSearch::locate`]).
    pub elf: PathBuf,
    /// The link.
    pub link: Link,
    /// Count the pipeline's instructions (file link only; runs QEMU with
    /// `-icount shift=0`).
    pub count_instructions: bool,
    /// Kill QEMU and fail after this long; `None` waits for ever.
    pub timeout: Option<Duration>,
}

/// Why a run failed; one line.
#[derive(Debug, thiserror::Error)]
pub enum EmulateError {
    /// No usable `qemu-system-arm`.
    #[error("qemu-system-arm not found: install it (Debian/Ubuntu: `apt-get install qemu-system-arm`) or set PLETHWIRE_QEMU")]
    NoQemu,
    /// Instruction counting was asked for over the UART.
    #[error("instruction counting works over semihosting files, not the UART")]
    CountingNeedsFiles,
    /// A host-side operation failed.
    #[error("{what}: {source}")]
    Io {
        /// What was being done, e.g. `cannot write the samples feed`.
        what: String,
        /// The operating system's error.
        source: std::io::Error,
    },
    /// The board exited with a failure; its last words on standard error.
    #[error("the emulated board failed: {0}")]
    Board(String),
    /// The run took longer than its timeout.
    #[error("the emulated board did not finish within {} s and was stopped", .0.as_secs())]
    Timeout(Duration),
    /// A serial link's path is taken by something that is not a symlink.
    #[error("{0} exists and is not a symlink; choose another path for the serial link")]
    LinkInTheWay(PathBuf),
    /// A serial link was given no samples to feed.
    #[error("the serial link has no samples to feed")]
    EmptyFeed,
    /// The perf report is unreadable.
    #[error(transparent)]
    Perf(#[from] PerfError),
}

impl Emulation {
    /// Feed `samples` (taken as `f32`, as [`crate::replay::replay`] does)
    /// with `config` to the board, hand every frame to `on_frame` as it
    /// arrives, and return the session once the board has finished.
    pub fn run(
        &self,
        samples: &[f64],
        config: Config,
        on_frame: &mut dyn FnMut(&Frame),
    ) -> Result<Session, EmulateError> {
        if self.count_instructions && self.link == Link::Uart {
            return Err(EmulateError::CountingNeedsFiles);
        }
        let header = FeedHeader {
            config,
            samples: samples.len() as u64,
        };
        let mut feed = Vec::with_capacity(header.feed_len() as usize);
        feed.extend_from_slice(&header.encode());
        for &x in samples {
            feed.extend_from_slice(&(x as f32).to_le_bytes());
        }
        match self.link {
            Link::File => run::over_files(self, &feed, header.samples, on_frame),
            Link::Uart => run::over_uart(self, feed, header.samples, on_frame),
        }
    }
}
