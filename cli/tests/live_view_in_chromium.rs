//! The live page in a real browser: the emulated board as a serial device
//! at 250 Hz (`plethwire emulate --serial-link`), `plethwire listen --view`
//! on its link, the page in headless Chromium driven over WebDriver
//! (`plethwire_checks::webdriver`, Debian's chromium-driver).
//!
//! Checked through the page's DOM (the ids and attributes the page
//! promises): the waveform gets points and keeps getting them; the heart
//! rate shown is the beats' median (smoothed) heart rate exactly as
//! `listen --json` prints it; every gauge is refreshed; the page gets at
//! least 10 messages per second of stream, the stream's time taken from
//! the samples' own numbers (a second event-stream client reads them);
//! an unplugged and replugged board shows as gone, then back, and the
//! points come again; a paused page keeps its picture while messages
//! come; a reloaded page starts with the last 10 s. A screenshot is kept in
//! `$CARGO_TARGET_DIR/artefacts/live-view.png` (path printed). Every wait
//! is a poll with a generous limit; nothing is timed.
//!
//! The signal is our own made-up finger at rest (`emulate` without a
//! record).

mod serial_link_support;

use plethwire_checks::browser::chromium;
use plethwire_checks::webdriver::{chromedriver, Browser};
use plethwire_checks::{need, needs};
use serde_json::Value;
use serial_link_support::{firmware, wait_until, SerialLink, PATIENCE};
use std::io::{BufRead, BufReader, Write};
use std::net::TcpStream;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::mpsc::{self, Receiver};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

const RATE_HZ: f64 = 250.0;
/// The page's promise: at least this many messages a second.
const MESSAGES_PER_S: f64 = 10.0;
/// Stream time over which the message rate is counted, s.
const COUNTED_S: f64 = 15.0;

/// A running `plethwire listen --view --json`: its stdout lines (JSON)
/// and the page's address from its stderr.
struct Listener {
    child: Child,
    lines: Receiver<String>,
    url: String,
}

fn line_reader(pipe: impl std::io::Read + Send + 'static) -> Receiver<String> {
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        for line in BufReader::new(pipe).lines().map_while(Result::ok) {
            if tx.send(line).is_err() {
                break;
            }
        }
    });
    rx
}

impl Listener {
    fn start(link: &Path, out: &Path) -> Self {
        let mut child = Command::new(env!("CARGO_BIN_EXE_plethwire"))
            .args([
                "listen",
                "--view",
                "--view-port",
                "0",
                "--json",
                "--wait",
                "120",
            ])
            .arg("--port")
            .arg(link)
            .arg("--out")
            .arg(out)
            .args(["--name", "live"])
            .stdin(Stdio::null())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("start plethwire listen");
        let lines = line_reader(child.stdout.take().unwrap());
        let errors = line_reader(child.stderr.take().unwrap());
        let deadline = Instant::now() + PATIENCE;
        let mut said = Vec::new();
        let url = loop {
            let left = deadline.saturating_duration_since(Instant::now());
            let line = errors.recv_timeout(left).unwrap_or_else(|e| {
                panic!("no `live view:` line on listen's stderr ({e}); it said: {said:#?}")
            });
            if let Some(url) = line.strip_prefix("live view: ") {
                break url.trim().to_owned();
            }
            said.push(line);
        };
        assert!(
            url.starts_with("http://127.0.0.1:") && url.ends_with('/'),
            "{url}"
        );
        Self { child, lines, url }
    }

    /// The `median_hr_bpm` of each beat printed since the last call.
    fn medians(&self, into: &mut Vec<f32>) {
        for line in self.lines.try_iter() {
            let v: Value = serde_json::from_str(&line).unwrap_or(Value::Null);
            if v["event"] == "beat" {
                if let Some(m) = v["median_hr_bpm"].as_f64() {
                    into.push(m as f32);
                }
            }
        }
    }
}

impl Drop for Listener {
    fn drop(&mut self) {
        let _ = Command::new("kill")
            .args(["-INT", &self.child.id().to_string()])
            .status();
        let deadline = Instant::now() + Duration::from_secs(10);
        while self.child.try_wait().ok().flatten().is_none() && Instant::now() < deadline {
            std::thread::sleep(Duration::from_millis(20));
        }
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

/// A second event-stream client: counts messages and keeps the newest
/// sample number seen.
#[derive(Default)]
struct Stream {
    messages: u64,
    newest_sample: Option<i64>,
}

fn follow_events(url: &str) -> Arc<Mutex<Stream>> {
    let host = url
        .trim_start_matches("http://")
        .trim_end_matches('/')
        .to_owned();
    let mut tcp = TcpStream::connect(&host).expect("connect to the live view");
    write!(
        tcp,
        "GET /events HTTP/1.1\r\nHost: {host}\r\nAccept: text/event-stream\r\n\r\n"
    )
    .unwrap();
    let seen = Arc::new(Mutex::new(Stream::default()));
    let into = seen.clone();
    std::thread::spawn(move || {
        for line in BufReader::new(tcp).lines().map_while(Result::ok) {
            let Some(data) = line.strip_prefix("data:") else {
                continue;
            };
            let m: Value = serde_json::from_str(data.trim()).expect("a JSON message");
            let newest = m["samples"]
                .as_array()
                .and_then(|s| s.last())
                .and_then(|p| p[0].as_i64());
            let mut s = into.lock().unwrap();
            s.messages += 1;
            if newest.is_some() {
                s.newest_sample = newest;
            }
        }
    });
    seen
}

/// One value out of the page.
fn read(b: &Browser, script: &str) -> Value {
    b.execute(script, &[])
        .unwrap_or_else(|e| panic!("{script}: {e}"))
}

fn number(b: &Browser, script: &str) -> f64 {
    let v = read(b, script);
    v.as_str()
        .and_then(|s| s.parse().ok())
        .or(v.as_f64())
        .unwrap_or_else(|| panic!("{script}: {v}"))
}

const POINTS: &str = "return document.getElementById('wave').dataset.points;";
const CONNECTED: &str = "return document.getElementById('board').dataset.connected;";
const LINK_FRAMES: &str = "return document.getElementById('link').dataset.frames;";
const UPDATES: &str = "return document.body.dataset.updates;";
const GAUGES: &str = "return Array.from(document.querySelectorAll('[data-gauge]'), \
                      g => [g.dataset.gauge, Number(g.dataset.updates)]);";
const HR: &str =
    "const h = document.getElementById('hr'); return [h.dataset.bpm, h.textContent.trim()];";

/// Poll `script` until `want` accepts its value; that value.
fn poll(b: &Browser, what: &str, script: &str, want: impl Fn(&Value) -> bool) -> Value {
    let mut last = Value::Null;
    wait_until(what, || {
        last = read(b, script);
        want(&last)
    });
    last
}

/// Wait for more points than there are now.
fn points_grow(b: &Browser, what: &str) {
    let before = number(b, POINTS);
    wait_until(what, || number(b, POINTS) > before);
}

/// The heart rate shown is the latest beat's median heart rate as listen
/// printed it. The page and listen's output are read one after the
/// other, so a beat may come between the reads: poll until they agree.
fn heart_rate_agrees(b: &Browser, listener: &Listener) -> f32 {
    let mut medians = Vec::new();
    let mut seen = String::new();
    wait_until("the page's heart rate equals listen's", || {
        let hr = read(b, HR);
        listener.medians(&mut medians);
        let (Some(bpm), Some(shown)) = (hr[0].as_str(), hr[1].as_str()) else {
            return false;
        };
        seen = format!("page {bpm} ({shown}), listen {:?}", medians.last());
        let Ok(page) = bpm.parse::<f64>() else {
            return false;
        };
        let agrees = medians.last() == Some(&(page as f32));
        if agrees {
            assert_eq!(shown, format!("{}", page.round()), "{seen}");
        }
        agrees
    });
    eprintln!("heart rate: {seen}");
    medians.last().copied().unwrap()
}

/// Every gauge refreshed at least once more than now.
fn gauges_update(b: &Browser) {
    let names = |v: &Value| -> Vec<(String, f64)> {
        serde_json::from_value(v.clone()).expect("[name, updates] pairs")
    };
    let before = names(&read(b, GAUGES));
    assert_eq!(before.len(), 6, "{before:?}");
    wait_until("every gauge is refreshed", || {
        let now = names(&read(b, GAUGES));
        now.iter().zip(&before).all(|(n, b)| n.1 > b.1)
    });
}

/// Messages the page got per second of stream, the stream's time from
/// the samples' numbers seen by the second client.
fn message_rate(b: &Browser, stream: &Mutex<Stream>) -> f64 {
    let newest = || stream.lock().unwrap().newest_sample;
    wait_until("samples on the second stream", || newest().is_some());
    let (u0, i0) = (number(b, UPDATES), newest().unwrap());
    let end = i0 + (COUNTED_S * RATE_HZ) as i64;
    wait_until("the counted stretch of stream", || newest().unwrap() >= end);
    let (u1, i1) = (number(b, UPDATES), newest().unwrap());
    let rate = (u1 - u0) / ((i1 - i0) as f64 / RATE_HZ);
    eprintln!(
        "page messages: {} over {:.1} s of stream: {rate:.2} a second",
        u1 - u0,
        (i1 - i0) as f64 / RATE_HZ
    );
    rate
}

/// A hash of what the waveform's canvas shows now.
const CANVAS: &str = "const d = document.getElementById('wave').toDataURL(); let h = 0; \
                      for (let i = 0; i < d.length; i++) h = (h * 31 + d.charCodeAt(i)) | 0; \
                      return h;";
const PAUSE: &str = "document.getElementById('pause').click(); \
                     return document.getElementById('pause').getAttribute('aria-pressed');";

/// Pausing freezes the drawing while messages keep coming; resuming
/// draws again.
fn pause_keeps_the_stream(b: &Browser) {
    assert_eq!(read(b, PAUSE), "true");
    let (picture, updates) = (read(b, CANVAS), number(b, UPDATES));
    wait_until("messages while paused", || {
        number(b, UPDATES) >= updates + 5.0
    });
    assert_eq!(read(b, CANVAS), picture, "the drawing changed while paused");
    assert_eq!(read(b, PAUSE), "false");
    wait_until("drawing again after the pause", || {
        read(b, CANVAS) != picture
    });
}

/// `$CARGO_TARGET_DIR/artefacts`, else `target/artefacts` beside this
/// test's executable.
fn artefacts() -> PathBuf {
    let target = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| {
            let exe = std::env::current_exe().unwrap();
            exe.ancestors().nth(3).unwrap().to_path_buf()
        });
    let dir = target.join("artefacts");
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn the_live_page_shows_the_emulated_board_in_chromium() {
    let Some(elf) = firmware() else { return };
    let Some(browser_exe) = chromium() else {
        need(needs::CHROMIUM, false);
        return;
    };
    let Some(driver) = chromedriver() else {
        need(needs::CHROMEDRIVER, false);
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("board");
    let board = SerialLink::start(&elf, &path, &["--rate", "250"]);
    let listener = Listener::start(&path, dir.path());
    let b = Browser::open(&driver, &browser_exe, (1280, 1000)).expect("a browser session");
    b.navigate(&listener.url).unwrap();
    let cautions = read(
        &b,
        "return document.getElementById('cautions').textContent.toLowerCase();",
    );
    let cautions = cautions.as_str().unwrap();
    for word in [
        "not a medical device",
        "iec 62471",
        "iec 60601-1",
        "qualified practice",
    ] {
        assert!(cautions.contains(word), "{word}: {cautions}");
    }
    poll(&b, "waveform points", POINTS, |v| {
        v.as_str().is_some_and(|p| p != "0")
    });
    points_grow(&b, "the waveform's points grow");

    // The replug, while the 10 s window is still filling.
    board.stop();
    poll(&b, "the board shown gone", CONNECTED, |v| v == "false");
    let board = SerialLink::start(&elf, &path, &["--rate", "250"]);
    poll(&b, "the board shown back", CONNECTED, |v| v == "true");
    points_grow(&b, "points after the replug");

    let stream = follow_events(&listener.url);
    let bpm = heart_rate_agrees(&b, &listener);
    assert!(
        (60.0..85.0).contains(&bpm),
        "a finger at 72 bpm shows {bpm}"
    );
    gauges_update(&b);
    let rate = message_rate(&b, &stream);
    assert!(
        rate >= MESSAGES_PER_S,
        "{rate:.2} messages per second of stream"
    );
    // Made up in a 12-bit ADC's counts around 2000 of 4095 (rails in the
    // board's hello): the DC gauge near half the range.
    let dc = number(
        &b,
        "return document.querySelector('[data-gauge=dc]').dataset.value;",
    );
    assert!((0.4..0.6).contains(&dc), "DC at {dc} of the range");
    poll(&b, "frames counted on the page", LINK_FRAMES, |v| {
        v.as_str().is_some_and(|n| n != "0")
    });
    let damaged = read(
        &b,
        "return document.getElementById('link').dataset.damaged;",
    );
    assert_eq!(damaged, "0", "a clean link");

    pause_keeps_the_stream(&b);

    // A reload starts full: the first message's snapshot holds the last
    // ~10 s, so at least 8 s of points come at once.
    b.navigate(&listener.url).unwrap();
    poll(&b, "a reloaded page full at once", POINTS, |v| {
        v.as_str()
            .and_then(|p| p.parse::<f64>().ok())
            .is_some_and(|p| p >= 8.0 * RATE_HZ)
    });
    poll(&b, "the heart rate after a reload", HR, |v| v[0] != "");

    let png = b.screenshot().unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    let shot = artefacts().join("live-view.png");
    std::fs::write(&shot, &png).unwrap();
    // Seen also when the test passes (libtest keeps eprintln! for failures).
    let _ = std::io::stderr().write_all(format!("screenshot: {}\n", shot.display()).as_bytes());
    b.close().unwrap();
    drop(listener);
    board.stop();
}
