//! The listening loop: open the port, read, and when it goes away, close
//! it and keep trying the same path until it comes back or we give up.
//! The port is behind [`Connector`], so the loop runs on any byte source.

use std::io::{self, Read};
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

use super::event::{Event, Sink};
use super::session::Session;

/// Opens the byte source, again after each loss.
pub trait Connector {
    /// The open source. Its `read` must come back within a short time when
    /// nothing arrives (an error of kind `TimedOut` or `WouldBlock`), so
    /// the loop can notice Ctrl-C and the time limit; `Ok(0)` or any other
    /// error means the source went away.
    type Link: Read;

    /// Try to open the source. An error of kind `NotFound` means "not
    /// there (yet)"; at the start, any other error ends the session.
    fn open(&mut self) -> io::Result<Self::Link>;

    /// The source as the user named it, for messages.
    fn name(&self) -> String;
}

/// Timing of a session.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Settings {
    /// Pause between attempts to open the port.
    pub retry_every: Duration,
    /// How long to keep trying, at the start and after each loss.
    pub give_up_after: Duration,
    /// Length of the whole session, if limited.
    pub duration: Option<Duration>,
}

impl Default for Settings {
    /// Retry every 0.5 s, give up after 30 s, no time limit.
    fn default() -> Self {
        Self {
            retry_every: Duration::from_millis(500),
            give_up_after: Duration::from_secs(30),
            duration: None,
        }
    }
}

/// Why a session that had the port open ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Ending {
    /// Asked to stop (Ctrl-C, a termination signal).
    Stopped,
    /// The session's time was up.
    TimeUp,
    /// The port went away and did not come back in time.
    PortGone,
}

/// Why a session never got going, or broke off.
#[derive(Debug)]
pub enum ListenError {
    /// Opening the port failed for a reason that waiting will not cure
    /// (no permission, in use, not a serial port).
    Refused(io::Error),
    /// The port was never opened.
    NeverOpened {
        /// How long we tried.
        waited: Duration,
        /// Why we stopped trying.
        cause: NeverCause,
    },
    /// The sink failed (screen or files).
    Sink(io::Error),
}

/// Why a port that never opened stopped being tried.
#[derive(Debug)]
pub enum NeverCause {
    /// It did not appear within the give-up time; the last attempt's error.
    GaveUp(io::Error),
    /// The session was stopped or ran out of time first.
    Ended(Ending),
}

/// How often the waits look at the stop flag.
const TICK: Duration = Duration::from_millis(50);

/// Read errors that only mean "nothing yet".
fn is_idle(e: &io::Error) -> bool {
    matches!(
        e.kind(),
        io::ErrorKind::TimedOut | io::ErrorKind::WouldBlock | io::ErrorKind::Interrupted
    )
}

/// Run a session until stopped, out of time, or the port is gone for
/// good. Every event goes to `sink`; the session keeps the counts.
pub fn run<C: Connector>(
    connector: &mut C,
    session: &mut Session,
    sink: &mut dyn Sink,
    settings: &Settings,
    stop: &AtomicBool,
) -> Result<Ending, ListenError> {
    let start = Instant::now();
    let deadline = settings.duration.map(|d| start + d);
    // The reason to end now, if any.
    let ending = || {
        if stop.load(Ordering::SeqCst) {
            Some(Ending::Stopped)
        } else if deadline.is_some_and(|d| Instant::now() >= d) {
            Some(Ending::TimeUp)
        } else {
            None
        }
    };
    let mut lost_at: Option<Instant> = None;
    let mut buf = [0u8; 512];
    loop {
        let mut link = match open_link(connector, settings, start, lost_at, &ending)? {
            Ok(link) => link,
            Err(end) => return Ok(end),
        };
        session.opened(Instant::now());
        let again_after = lost_at.map(|t| t.elapsed());
        sink.event(&Event::Opened {
            port: connector.name(),
            again_after,
        })
        .map_err(ListenError::Sink)?;
        let reason = loop {
            if let Some(end) = ending() {
                return Ok(end);
            }
            let got = link.read(&mut buf);
            let now = Instant::now();
            let fed = match got {
                Ok(0) => break "the port hung up".to_string(),
                Ok(n) => session.feed(&buf[..n], now, sink),
                Err(e) if is_idle(&e) => session.idle(now, sink),
                Err(e) => break e.to_string(),
            };
            fed.and_then(|()| sink.tick(now, &session.progress()))
                .map_err(ListenError::Sink)?;
        };
        drop(link);
        session.lost();
        lost_at = Some(Instant::now());
        sink.event(&Event::Lost {
            port: connector.name(),
            reason,
        })
        .map_err(ListenError::Sink)?;
    }
}

/// Open the link: at the start, or again after it was lost at `lost_at`,
/// trying every `settings.retry_every`. `Ok(Err(ending))` when the session
/// ends first (stopped, out of time, the port gone for good).
fn open_link<C: Connector>(
    connector: &mut C,
    settings: &Settings,
    start: Instant,
    lost_at: Option<Instant>,
    ending: &dyn Fn() -> Option<Ending>,
) -> Result<Result<C::Link, Ending>, ListenError> {
    let since = lost_at.unwrap_or(start);
    // After a loss, wait before the first attempt: a vanishing device
    // node is best left a moment.
    let mut next_try = if lost_at.is_some() {
        since + settings.retry_every
    } else {
        since
    };
    loop {
        if let Some(end) = ending() {
            return match lost_at {
                Some(_) => Ok(Err(end)),
                None => Err(ListenError::NeverOpened {
                    waited: start.elapsed(),
                    cause: NeverCause::Ended(end),
                }),
            };
        }
        if Instant::now() < next_try {
            std::thread::sleep(TICK.min(next_try - Instant::now()));
            continue;
        }
        match connector.open() {
            Ok(link) => return Ok(Ok(link)),
            Err(e) if lost_at.is_none() && e.kind() != io::ErrorKind::NotFound => {
                return Err(ListenError::Refused(e));
            }
            Err(e) if since.elapsed() >= settings.give_up_after => {
                return match lost_at {
                    Some(_) => Ok(Err(Ending::PortGone)),
                    None => Err(ListenError::NeverOpened {
                        waited: since.elapsed(),
                        cause: NeverCause::GaveUp(e),
                    }),
                };
            }
            Err(_) => next_try += settings.retry_every,
        }
    }
}
