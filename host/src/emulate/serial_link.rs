//! The emulated board as a serial device: the firmware in its UART mode,
//! fed its samples at their own rate (a 250 Hz signal arrives as 250
//! samples a second), its UART output put on a pseudo-terminal whose slave
//! is linked at a path, so `plethwire listen --port PATH` reads it as it
//! would a board on a USB serial adapter.

use std::io::Write;
use std::path::Path;
use std::process::{ChildStdin, Stdio};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::mpsc::{Receiver, RecvTimeoutError};
use std::thread;
use std::time::{Duration, Instant};

use plethwire_dsp::feed::FeedHeader;
use plethwire_dsp::pipeline::Config;

use super::pty::LinkedPty;
use super::run::{chunks, judge_exit, start};
use super::{EmulateError, Emulation, Link};

/// Samples of a feed with no end: about 35 000 years at 250 Hz.
const ENDLESS: u64 = 1 << 48;
/// How often the pacer hands the board the samples that have come due.
const PACE: Duration = Duration::from_millis(10);
/// How often the relay looks at the stop flag when the board is quiet.
const POLL: Duration = Duration::from_millis(20);
/// How long the port stays after the board's last byte, so a listener
/// reads it before the hang-up.
const LINGER: Duration = Duration::from_millis(500);

/// What the link feeds the board.
#[derive(Debug, Clone)]
pub struct PacedFeed {
    /// The pipeline's settings; its sample rate paces the feed.
    pub config: Config,
    /// The samples, in order, from the first again after the last.
    pub samples: Vec<f32>,
    /// Samples to feed in all; `None` feeds until stopped.
    pub total: Option<u64>,
}

/// What a link did.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LinkReport {
    /// Samples handed to the board.
    pub fed: u64,
    /// Bytes the board sent on the line.
    pub sent_bytes: u64,
    /// Of those, bytes the terminal could not take (nobody reading).
    pub lost_bytes: u64,
    /// Seconds from the board's start to its end.
    pub seconds: f64,
    /// Whether it was stopped (else the feed ran out).
    pub stopped: bool,
}

impl LinkReport {
    /// Bytes a second on the line.
    pub fn bytes_per_second(&self) -> f64 {
        if self.seconds > 0.0 {
            self.sent_bytes as f64 / self.seconds
        } else {
            0.0
        }
    }
}

/// Hand the board each sample once it is due, until the feed ends or
/// `quit` says so. A write error means QEMU is gone, which its exit
/// status reports.
fn pace(
    mut to: ChildStdin,
    feed: &PacedFeed,
    started: Instant,
    quit: &dyn Fn() -> bool,
    fed: &AtomicU64,
) {
    let total = feed.total.unwrap_or(ENDLESS);
    let header = FeedHeader {
        config: feed.config,
        samples: total,
    };
    if to.write_all(&header.encode()).is_err() {
        return;
    }
    let rate = f64::from(feed.config.sample_rate_hz);
    let len = feed.samples.len() as u64;
    let mut n = 0u64;
    let mut buf = Vec::new();
    while n < total && !quit() {
        let due = ((started.elapsed().as_secs_f64() * rate) as u64 + 1).min(total);
        buf.clear();
        for i in n..due {
            buf.extend_from_slice(&feed.samples[(i % len) as usize].to_le_bytes());
        }
        if to.write_all(&buf).and_then(|_| to.flush()).is_err() {
            return;
        }
        n = due;
        fed.store(n, Ordering::Relaxed);
        thread::sleep(PACE);
    }
}

/// Put what the board sends on the terminal until it ends or `stop` is
/// set; `counts` gains the bytes sent and the bytes lost.
fn relay(
    rx: &Receiver<Vec<u8>>,
    pty: &mut LinkedPty,
    stop: &AtomicBool,
    counts: &mut (u64, u64),
) -> Result<(), EmulateError> {
    while !stop.load(Ordering::SeqCst) {
        match rx.recv_timeout(POLL) {
            Ok(bytes) => {
                counts.0 += bytes.len() as u64;
                counts.1 += pty.send(&bytes)?;
            }
            Err(RecvTimeoutError::Timeout) => {}
            // Standard output closed: QEMU is exiting.
            Err(RecvTimeoutError::Disconnected) => break,
        }
    }
    Ok(())
}

impl Emulation {
    /// Run the board on `feed` with its UART on a pseudo-terminal linked
    /// at `link`, until the feed ends or `stop` is set (e.g. by Ctrl-C).
    /// `on_ready` hears the terminal's own path once the link is there.
    /// The link is gone when this returns, whatever the outcome.
    pub fn serve_serial_link(
        &self,
        link: &Path,
        feed: &PacedFeed,
        stop: &AtomicBool,
        on_ready: &mut dyn FnMut(&Path),
    ) -> Result<LinkReport, EmulateError> {
        if feed.samples.is_empty() || feed.total == Some(0) {
            return Err(EmulateError::EmptyFeed);
        }
        let mut pty = LinkedPty::open(link)?;
        on_ready(pty.target());
        let board = Emulation {
            link: Link::Uart,
            count_instructions: false,
            timeout: None,
            ..self.clone()
        };
        let dir = tempfile::tempdir().map_err(|source| EmulateError::Io {
            what: "cannot make a temporary folder".into(),
            source,
        })?;
        let (mut child, stderr) = start(&board, dir.path(), &["uart"], Stdio::piped())?;
        let stdin = child.stdin.take().expect("stdin is piped");
        let rx = chunks(child.stdout.take().expect("stdout is piped"));
        let started = Instant::now();
        let fed = AtomicU64::new(0);
        let ended = AtomicBool::new(false);
        let quit = || stop.load(Ordering::SeqCst) || ended.load(Ordering::SeqCst);
        let mut counts = (0u64, 0u64);
        let relayed = thread::scope(|s| {
            s.spawn(|| pace(stdin, feed, started, &quit, &fed));
            let relayed = relay(&rx, &mut pty, stop, &mut counts);
            ended.store(true, Ordering::SeqCst);
            if relayed.is_err() || stop.load(Ordering::SeqCst) {
                let _ = child.kill();
            }
            relayed
        });
        let (sent, lost) = counts;
        let seconds = started.elapsed().as_secs_f64();
        let status = child.wait().map_err(|source| EmulateError::Io {
            what: "cannot wait for QEMU".into(),
            source,
        })?;
        relayed?;
        // A Ctrl-C at the terminal reaches QEMU too, perhaps before the
        // flag is seen: a board killed while stopping is no failure.
        if !status.success() {
            thread::sleep(POLL);
        }
        let stopped = stop.load(Ordering::SeqCst);
        if stopped {
            drop(stderr);
        } else {
            judge_exit(status, stderr)?;
            thread::sleep(LINGER);
        }
        drop(pty);
        Ok(LinkReport {
            fed: fed.load(Ordering::Relaxed),
            sent_bytes: sent,
            lost_bytes: lost,
            seconds,
            stopped,
        })
    }
}
