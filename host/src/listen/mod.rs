//! Listening to a board: decode its frames, show them, record them, and
//! ride out unplugging and line noise. Behind `plethwire listen`.
//!
//! The parts, each usable alone:
//!
//! * [`Session`] turns bytes into [`Event`]s: it owns the frame decoder
//!   (which resynchronises at every 0x00 and counts damage) and maps the
//!   board's sample numbers onto the record's ([`Timeline`]).
//! * [`run`] is the loop around it: open the source through a
//!   [`Connector`], read, and when the source goes away, close it, say so,
//!   and try the same path again every [`Settings::retry_every`] until it
//!   comes back or [`Settings::give_up_after`] passes. A reconnect
//!   resynchronises the decoder and continues the same recording.
//! * [`Recorder`] writes the beats as WFDB annotations and the samples as
//!   a format-16 WFDB record ([`Scale`] says how values become 16 bits);
//!   [`Summary`] is the JSON summary next to them. [`Capture`] keeps all
//!   of them readable while the session runs, so a killed recorder loses
//!   at most the last second.
//! * [`Screen`] shows events as text lines or JSON lines.
//! * [`SerialConnector`] is the real serial port.
//! * [`view`] is the live page on 127.0.0.1 (`listen --view`), one more
//!   sink.
//!
//! ```
//! use plethwire::listen::{Event, Session};
//! use plethwire_dsp::wire::{Encoder, Message, Status, MAX_FRAME};
//! let status = Status { led_drive: 30_000, dc_level: 0.5, ambient_level: 0.01,
//!     measured: Status::MEASURED_ALL, clipped_samples: 0, adc_overruns: 0,
//!     dropped_frames: 0, rejected_samples: 0 };
//! let mut buf = [0u8; MAX_FRAME];
//! let mut bytes = vec![0x55, 0x13, 0x00]; // line noise first
//! bytes.extend(Encoder::new().encode(&Message::Status(status), &mut buf).unwrap());
//! let mut session = Session::new(None);
//! let mut events: Vec<Event> = Vec::new();
//! session.feed(&bytes, std::time::Instant::now(), &mut events).unwrap();
//! assert!(events.iter().any(|e| matches!(e, Event::Status { .. })));
//! assert_eq!(session.stats().damaged, 1);
//! ```

mod beat_file;
mod capture;
mod checks;
mod clock;
mod event;
mod fields;
mod json;
mod link;
mod port;
mod recorder;
mod scale;
mod screen;
mod session;
mod summary;
mod text;
mod timeline;
pub mod view;

#[cfg(test)]
mod tests;
#[cfg(test)]
mod tests_jumps;
#[cfg(test)]
mod tests_wire2;

pub use beat_file::BeatFile;
pub use capture::Capture;
pub use clock::{record_name, utc_text};
pub use event::{BeatSeen, Counts, Event, Progress, Sink, StateSeen};
pub use fields::{HelloFields, LinkFields, StatusFields};
pub use link::{run, Connector, Ending, ListenError, NeverCause, Settings};
pub use port::{PortLink, SerialConnector, READ_TIMEOUT};
pub use recorder::{nearest, session_files, Recorder, SampleCounts, Written, SCALE_AFTER_S};
pub use scale::{Scale, ScaleSource, INVALID};
pub use screen::{Screen, CAUTION, CHECKS_EVERY_S};
pub use session::{foreign_version_message, Session, LINK_EVERY, QUIET_AFTER};
pub use summary::{summary_path, Setup, Summary, FLUSH_EVERY, RUNNING, SUMMARY_FORMAT};
pub use timeline::{Timeline, LONG_SLACK_S, MAX_GAP_S, RESTART_SLACK};
