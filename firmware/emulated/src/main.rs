//! plethwire firmware for two QEMU machines: `mps2-an386` (Cortex-M4F,
//! built for `thumbv7em-none-eabihf`) and `microbit` (Cortex-M0 without an
//! FPU, built for `thumbv6m-none-eabi`); [`machine`] holds what differs.
//!
//! What it does depends on the semihosting command line
//! (`-semihosting-config enable=on,target=native,arg=...`), whose first
//! word must be `plethwire-emulated` for any of the run modes:
//!
//! | command line | mode |
//! |---|---|
//! | (none: QEMU passes the kernel's file name) | self-check ([`selfcheck`]), report on standard output |
//! | `plethwire-emulated stream FEED FRAMES` | whole recording: samples feed from the host file `FEED`, frames to the host file `FRAMES` |
//! | `plethwire-emulated perf FEED FRAMES REPORT` | as `stream`, every `push` timed ([`perf`], needs `-icount shift=0`), figures to the host file `REPORT` |
//! | `plethwire-emulated uart` | samples feed on UART0's receive line, frames on its transmit line |
//!
//! The feed and the frames are documented in `docs/wire-format.md`; the
//! session loop is [`session::run`]. Errors go to the host's standard error
//! as one line `plethwire-emulated: ...` (never to standard output, which in
//! UART mode carries the frames) and make QEMU exit with status 1; a panic
//! prints `panic <message>` and a hard fault `fault <frame>` there too.

#![no_std]
#![no_main]

mod links;
mod machine;
mod perf;
mod selfcheck;
mod semihost;
mod session;
mod stack;
// The UART of the machine built for: the mps2-an386's CMSDK UART or the
// nRF51's, with the same calls.
#[cfg_attr(machine = "microbit", path = "uart_nrf51.rs")]
mod uart;

use core::fmt::Write;
use core::panic::PanicInfo;

use cortex_m_rt::{entry, exception, ExceptionFrame};
use cortex_m_semihosting::debug::{self, EXIT_FAILURE, EXIT_SUCCESS};

use links::{FileFeed, FileSink, UartFeed, UartSink};
use semihost::HostFile;
use session::{Plain, RunError};

/// The first word of a command line that selects a run mode.
const PROGRAM: &str = "plethwire-emulated";

#[entry]
fn main() -> ! {
    stack::paint();
    let mut buf = [0u8; 512];
    let outcome = match semihost::command_line(&mut buf) {
        Ok(line) => dispatch(line),
        Err(e) => Err(Failure::Run(e.into())),
    };
    match outcome {
        Ok(()) => exit(true),
        Err(failure) => {
            say_on_stderr(format_args!("plethwire-emulated: {failure}"));
            exit(false)
        }
    }
}

/// Why the firmware gave up.
enum Failure {
    /// The command line names no known mode or has the wrong arguments.
    Usage,
    /// The perf mode could not count instructions.
    Counter(&'static str),
    /// A session stopped.
    Run(RunError),
}

impl core::fmt::Display for Failure {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Usage => f.write_str(
                "usage: plethwire-emulated (stream FEED FRAMES | perf FEED FRAMES REPORT | uart)",
            ),
            Self::Counter(why) => f.write_str(why),
            Self::Run(e) => write!(f, "{e}"),
        }
    }
}

impl From<RunError> for Failure {
    fn from(e: RunError) -> Self {
        Self::Run(e)
    }
}

/// Run the mode the command line names.
fn dispatch(line: &str) -> Result<(), Failure> {
    let mut words = line.split(' ').filter(|w| !w.is_empty());
    if words.next() != Some(PROGRAM) {
        selfcheck::run();
        return Ok(());
    }
    let mut args = [""; 4];
    let mut n = 0;
    for w in words {
        if n == args.len() {
            return Err(Failure::Usage);
        }
        args[n] = w;
        n += 1;
    }
    match &args[..n] {
        [] => selfcheck::run(),
        ["stream", feed, frames] => over_files(feed, frames, None)?,
        ["perf", feed, frames, report] => over_files(feed, frames, Some(report))?,
        ["uart"] => {
            let (rx, tx) = uart::take();
            let mut sink = UartSink(tx);
            session::run(&mut UartFeed(rx), &mut sink, &mut Plain)?;
            sink.0.flush();
        }
        _ => return Err(Failure::Usage),
    }
    Ok(())
}

/// A session over the host files `feed` and `frames`, counted when there
/// is a `report` to write. One path for both modes, so the feed's buffer
/// is on the stack once (the microbit's RAM is small).
fn over_files(feed: &str, frames: &str, report: Option<&str>) -> Result<(), Failure> {
    let counter = match report {
        Some(_) => {
            let syst = cortex_m::Peripherals::take()
                .ok_or(Failure::Counter("the core peripherals are taken"))?
                .SYST;
            Some(perf::Counter::start(syst).map_err(Failure::Counter)?)
        }
        None => None,
    };
    let (mut src, mut sink) = (FileFeed::open(feed)?, FileSink::create(frames)?);
    match (counter, report) {
        (Some(mut counter), Some(report)) => {
            let totals = session::run(&mut src, &mut sink, &mut counter)?;
            counter
                .report(&totals, report)
                .map_err(|e| Failure::Run(e.into()))?;
        }
        _ => {
            session::run(&mut src, &mut sink, &mut Plain)?;
        }
    }
    Ok(())
}

/// One line on the host's standard error; nothing if that fails (there is
/// nowhere else to say it).
fn say_on_stderr(args: core::fmt::Arguments<'_>) {
    if let Ok(mut err) = HostFile::stderr() {
        let _ = writeln!(err, "{args}");
    }
}

/// Stop QEMU with status 0 (`ok`) or 1.
fn exit(ok: bool) -> ! {
    debug::exit(if ok { EXIT_SUCCESS } else { EXIT_FAILURE });
    // Only reached without a semihosting host (e.g. on real hardware).
    loop {
        cortex_m::asm::wfi();
    }
}

/// Report the panic to the host and make QEMU exit with a failure status.
#[panic_handler]
fn panic(info: &PanicInfo) -> ! {
    say_on_stderr(format_args!("panic {info}"));
    exit(false)
}

/// Without this a fault would spin forever and only the host's timeout
/// would notice; report it and fail fast instead.
#[exception]
#[allow(unsafe_code)] // cortex-m-rt declares the handler `unsafe`
unsafe fn HardFault(frame: &ExceptionFrame) -> ! {
    say_on_stderr(format_args!("fault {frame:?}"));
    exit(false)
}
