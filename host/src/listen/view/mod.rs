//! The live page of `plethwire listen --view`: a small HTTP/1.1 server on
//! 127.0.0.1 only (std's sockets, nothing else), serving one page with
//! everything it needs inside it (`GET /`) and server-sent events
//! (`GET /events`): a snapshot on connecting, then one message every
//! [`EVERY`] with what is new. [`ViewSink`] is one more [`Sink`] of the
//! session, so the recording goes on exactly as without the page.
//!
//! * `live.rs` the state the page shows (the last [`WINDOW_S`] of
//!   samples, beats, state, status, link, board, checks);
//! * `message.rs` the message, `http.rs` requests and responses,
//!   `server.rs` the accepting and broadcasting threads, `sink.rs` the
//!   sink; `page.html`, `page.css`, `page.js` the page.
//!
//! ```no_run
//! use plethwire::listen::view::View;
//! let view = View::start(0).unwrap();
//! eprintln!("live view: {}", view.url());
//! let mut sink = view.sink(); // hand it events, as any Sink
//! # let _ = &mut sink;
//! ```
//!
//! [`Sink`]: crate::listen::Sink

mod http;
mod live;
mod message;
mod server;
mod sink;

#[cfg(test)]
mod tests;

pub use live::{GAUGES, WINDOW_S};
pub use message::{BeatMark, BoardFields, LinkCounts, Message, Point};
pub use server::{ENDED, EVERY, MAX_STREAMS};
pub use sink::ViewSink;

use std::net::{Ipv4Addr, SocketAddr, TcpListener, TcpStream};
use std::sync::atomic::Ordering;
use std::sync::{Arc, Mutex};
use std::thread::JoinHandle;

/// The page, its style and its script joined into one document.
fn page() -> String {
    include_str!("page.html")
        .replace("/*STYLE*/", include_str!("page.css"))
        .replace("/*SCRIPT*/", include_str!("page.js"))
}

/// Why the live page could not be served.
#[derive(Debug, thiserror::Error)]
pub enum ViewError {
    /// Another program listens on the port.
    #[error("127.0.0.1:{port} is already in use by another program")]
    InUse {
        /// The port asked for.
        port: u16,
    },
    /// The system refused the port for another reason.
    #[error("cannot serve on 127.0.0.1:{port}: {source}")]
    Bind {
        /// The port asked for.
        port: u16,
        /// What the system said.
        source: std::io::Error,
    },
    /// The server's threads could not be started.
    #[error("cannot start the live view: {0}")]
    Thread(std::io::Error),
}

/// The running server; dropping it says goodbye to the open pages and
/// stops it.
pub struct View {
    addr: SocketAddr,
    shared: server::Shared,
    threads: Vec<JoinHandle<()>>,
}

impl View {
    /// Serves on 127.0.0.1 at `port` (0: any free port).
    pub fn start(port: u16) -> Result<Self, ViewError> {
        let listener = TcpListener::bind((Ipv4Addr::LOCALHOST, port)).map_err(|e| {
            if e.kind() == std::io::ErrorKind::AddrInUse {
                ViewError::InUse { port }
            } else {
                ViewError::Bind { port, source: e }
            }
        })?;
        let addr = listener
            .local_addr()
            .map_err(|source| ViewError::Bind { port, source })?;
        let live = Arc::new(Mutex::new(live::Live::default()));
        let shared = server::Shared::new(live, page(), addr.port());
        let mut view = Self {
            addr,
            shared: shared.clone(),
            threads: Vec::new(),
        };
        // Pushed one by one, so a failure stops those already running.
        let accept = server::accept(listener, shared.clone()).map_err(ViewError::Thread)?;
        view.threads.push(accept);
        let broadcast = server::broadcast(shared).map_err(ViewError::Thread)?;
        view.threads.push(broadcast);
        Ok(view)
    }

    /// The address served on (always 127.0.0.1).
    pub fn addr(&self) -> SocketAddr {
        self.addr
    }

    /// The page's address, `http://127.0.0.1:PORT/`.
    pub fn url(&self) -> String {
        format!("http://{}/", self.addr)
    }

    /// A sink that feeds this page.
    pub fn sink(&self) -> ViewSink {
        ViewSink::new(Arc::clone(&self.shared.live))
    }

    /// Shows a live-checks report on the page ([`ViewSink::set_checks`]).
    pub fn set_checks<T: serde::Serialize>(&self, report: &T) {
        self.sink().set_checks(report);
    }
}

impl Drop for View {
    fn drop(&mut self) {
        self.shared.stop.store(true, Ordering::SeqCst);
        // The accepting thread waits in accept(): one last connection
        // wakes it to see the flag.
        let _ = TcpStream::connect(self.addr);
        for t in self.threads.drain(..) {
            let _ = t.join();
        }
    }
}
