//! The server's threads: one accepts connections and answers each request
//! on a short-lived thread of its own; one broadcasts a message to every
//! open event stream every [`EVERY`].

use std::io::Write;
use std::net::{TcpListener, TcpStream};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex, MutexGuard};
use std::thread::{self, JoinHandle};
use std::time::{Duration, Instant};

use super::http::{self, Route};
use super::live::Live;
use super::sink::lock;

/// Time between two messages on every event stream (12.5 a second, so a
/// message comes well within every 100 ms).
pub const EVERY: Duration = Duration::from_millis(80);
/// Most event streams served at once (browsers, tabs).
pub const MAX_STREAMS: usize = 16;
/// How long a request head or a write to a page may take before the
/// connection is given up.
const PATIENCE: Duration = Duration::from_secs(2);
/// Said on every open page when `listen` ends.
pub const ENDED: &str = "plethwire listen has ended: this page keeps its last picture";

/// Event streams: the new ones wait for their snapshot.
#[derive(Default)]
struct Streams {
    waiting: Vec<TcpStream>,
    open: Vec<TcpStream>,
}

impl Streams {
    fn len(&self) -> usize {
        self.waiting.len() + self.open.len()
    }
}

fn streams(s: &Mutex<Streams>) -> MutexGuard<'_, Streams> {
    s.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// What both threads share.
#[derive(Clone)]
pub struct Shared {
    pub live: Arc<Mutex<Live>>,
    pub stop: Arc<AtomicBool>,
    pub page: Arc<str>,
    pub port: u16,
    streams: Arc<Mutex<Streams>>,
}

impl Shared {
    pub fn new(live: Arc<Mutex<Live>>, page: String, port: u16) -> Self {
        Self {
            live,
            stop: Arc::new(AtomicBool::new(false)),
            page: page.into(),
            port,
            streams: Arc::default(),
        }
    }
}

/// Starts the accepting thread.
pub fn accept(listener: TcpListener, shared: Shared) -> std::io::Result<JoinHandle<()>> {
    thread::Builder::new()
        .name("view-accept".into())
        .spawn(move || {
            for stream in listener.incoming() {
                if shared.stop.load(Ordering::SeqCst) {
                    break;
                }
                let Ok(stream) = stream else { continue };
                let s = shared.clone();
                // A request that cannot get a thread is simply not answered.
                let _ = thread::Builder::new()
                    .name("view-request".into())
                    .spawn(move || answer(stream, &s));
            }
        })
}

/// Answers one request; an event stream is handed to the broadcaster.
fn answer(mut stream: TcpStream, shared: &Shared) {
    let _ = stream.set_read_timeout(Some(PATIENCE));
    let _ = stream.set_write_timeout(Some(PATIENCE));
    let _ = stream.set_nodelay(true);
    let Ok(route) = http::read_route(&mut stream, shared.port) else {
        return;
    };
    // A page that cannot be written to has gone: nothing to tell.
    let _ = match route {
        Route::Page => http::page(&mut stream, &shared.page),
        Route::Events => {
            let mut all = streams(&shared.streams);
            if all.len() >= MAX_STREAMS {
                http::busy(&mut stream)
            } else {
                let started = http::events_head(&mut stream);
                if started.is_ok() {
                    all.waiting.push(stream);
                }
                started
            }
        }
        other => http::refusal(&mut stream, other),
    };
}

/// Starts the broadcasting thread.
pub fn broadcast(shared: Shared) -> std::io::Result<JoinHandle<()>> {
    thread::Builder::new()
        .name("view-broadcast".into())
        .spawn(move || {
            let mut cursor = lock(&shared.live).cursor();
            let mut next = Instant::now();
            loop {
                next += EVERY;
                let now = Instant::now();
                match next.checked_duration_since(now) {
                    Some(wait) => thread::sleep(wait),
                    None => next = now,
                }
                let stopping = shared.stop.load(Ordering::SeqCst);
                cursor = send_all(&shared, cursor, stopping);
                if stopping {
                    break;
                }
            }
        })
}

/// One message to every open stream (the news since `cursor`) and a
/// snapshot to every new one, both taken at the same moment.
fn send_all(shared: &Shared, cursor: super::live::Cursor, last: bool) -> super::live::Cursor {
    let mut all = streams(&shared.streams);
    let (mut news, snapshot, now) = {
        let live = lock(&shared.live);
        let snapshot = (!all.waiting.is_empty()).then(|| live.snapshot());
        (live.since(&cursor), snapshot, live.cursor())
    };
    if last {
        news.notices.push(ENDED.into());
    }
    let news = news.event_text();
    all.open
        .retain_mut(|s| s.write_all(news.as_bytes()).is_ok());
    if let Some(snapshot) = snapshot {
        let mut snapshot = snapshot;
        if last {
            snapshot.notices.push(ENDED.into());
        }
        let text = snapshot.event_text();
        let waiting = std::mem::take(&mut all.waiting);
        let started = waiting
            .into_iter()
            .filter_map(|mut s| s.write_all(text.as_bytes()).is_ok().then_some(s));
        all.open.extend(started);
    }
    if last {
        for s in all.open.drain(..) {
            let _ = s.shutdown(std::net::Shutdown::Both);
        }
    }
    now
}
