//! `plethwire listen --view` through the real binary and a pretend board
//! on a pseudo-terminal: the page is served on 127.0.0.1 at the printed
//! address, its event stream follows the board (samples exactly as sent,
//! an unplug and a replug), a second page starts from a snapshot, the
//! recording is the same as without the page, and a taken port is one
//! line and exit status 1. The browser itself is the Chromium test's.

mod listen_support;

use listen_support::*;
use plethwire_records::{read_annotations, Record};
use serde_json::{json, Value};
use std::io::{BufRead, BufReader, Read, Write};
use std::net::{Ipv4Addr, TcpListener, TcpStream};
use std::process::{Child, Command, Stdio};
use std::sync::mpsc::{self, Receiver};

const BLOCKS: u64 = 40;

/// `plethwire listen ARGS` with its stderr lines on a channel and its
/// stdout drained (so a full pipe never stalls it).
fn spawn(args: &[&str]) -> (Child, Receiver<String>) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .arg("listen")
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut out = child.stdout.take().unwrap();
    std::thread::spawn(move || std::io::copy(&mut out, &mut std::io::sink()));
    let err = child.stderr.take().unwrap();
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        for line in BufReader::new(err).lines().map_while(Result::ok) {
            let _ = tx.send(line);
        }
    });
    (child, rx)
}

fn get(port: u16, path: &str) -> String {
    let mut s = TcpStream::connect((Ipv4Addr::LOCALHOST, port)).unwrap();
    s.set_read_timeout(Some(PATIENCE)).unwrap();
    write!(s, "GET {path} HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\n\r\n").unwrap();
    let mut answer = String::new();
    s.read_to_string(&mut answer).unwrap();
    answer
}

/// The page's event stream, message by message.
struct Stream(BufReader<TcpStream>);

impl Stream {
    fn open(port: u16) -> Self {
        let mut s = TcpStream::connect((Ipv4Addr::LOCALHOST, port)).unwrap();
        s.set_read_timeout(Some(PATIENCE)).unwrap();
        write!(s, "GET /events HTTP/1.1\r\nHost: 127.0.0.1:{port}\r\n\r\n").unwrap();
        Self(BufReader::new(s))
    }

    fn next(&mut self) -> Value {
        let mut line = String::new();
        loop {
            line.clear();
            assert_ne!(self.0.read_line(&mut line).unwrap(), 0, "the stream ended");
            if let Some(data) = line.strip_prefix("data: ") {
                return serde_json::from_str(data.trim_end()).unwrap();
            }
        }
    }

    /// Messages until `want` accepts one; samples on the way gathered.
    fn until(&mut self, samples: &mut Vec<Value>, want: impl Fn(&Value) -> bool) -> Value {
        for _ in 0..2000 {
            let m = self.next();
            if let Some(Value::Array(s)) = m.get("samples") {
                samples.extend(s.iter().cloned());
            }
            if want(&m) {
                return m;
            }
        }
        panic!("no such message in 2000");
    }
}

fn connected(m: &Value, yes: bool) -> bool {
    m["board"]["connected"] == yes
}

#[test]
fn the_page_follows_the_board_and_the_recording_stays_exact() {
    let dir = tempfile::tempdir().unwrap();
    let port = dir.path().join("board");
    let out = dir.path().join("rec");
    let mut board = Board::new(&port);
    board.plug_in();
    let args = [
        "--port",
        port.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ];
    let more = [
        "--name",
        "bench",
        "--wait",
        "5",
        "--view",
        "--view-port",
        "0",
    ];
    let (mut child, err) = spawn(&[&args[..], &more].concat());
    let line = err.recv_timeout(PATIENCE).expect("the live view's address");
    let url = line
        .strip_prefix("live view: http://127.0.0.1:")
        .expect(&line);
    let web: u16 = url.strip_suffix('/').unwrap().parse().unwrap();

    let page = get(web, "/");
    assert!(page.starts_with("HTTP/1.1 200 OK\r\n") && page.contains("IEC 62471"));
    let mut stream = Stream::open(web);
    let mut samples = Vec::new();
    stream.until(&mut samples, |m| connected(m, true));
    board.send(&hello());
    for b in 0..BLOCKS {
        board.send(&block(16 * b));
    }
    board.send(&beat(300, Some(800.0), 0));
    board.send(&status(1000));
    stream.until(&mut samples, |m| m.get("status").is_some());
    while samples.len() < (16 * BLOCKS) as usize {
        stream.until(&mut samples, |m| m.get("samples").is_some());
    }
    for (n, s) in samples.iter().enumerate() {
        let n = n as u64;
        // Each value with the digits of its f32: read back, bit for bit.
        let f32_at = |k: usize| s[k].as_f64().map(|v| v as f32);
        assert_eq!(s[0], json!(n), "sample {n}");
        assert_eq!(f32_at(1), Some(raw_at(n)), "raw {n}");
        assert_eq!(f32_at(2), Some(filtered_at(n)), "filtered {n}");
    }
    // A second page starts full.
    let snap = Stream::open(web).next();
    assert_eq!(snap["snapshot"], true);
    assert_eq!(
        snap["samples"].as_array().unwrap().len(),
        (16 * BLOCKS) as usize
    );
    assert_eq!(snap["beats"][0]["median_hr_bpm"], 72.5);
    // Unplugged, then back.
    board.unplug();
    stream.until(&mut samples, |m| connected(m, false));
    board.plug_in();
    stream.until(&mut samples, |m| connected(m, true));

    let ok = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(ok.success());
    let status = child.wait().unwrap();
    let rest: Vec<String> = err.try_iter().collect();
    assert!(status.success(), "{status:?} {rest:?}");
    // The recording is what the board sent, page or no page.
    let rec = Record::open(out.join("bench")).unwrap();
    assert_eq!(rec.len() as u64, 16 * BLOCKS);
    let raw = rec.read_physical(0).unwrap();
    assert!((0..16 * BLOCKS).all(|n| raw[n as usize] == f64::from(raw_at(n))));
    let ann = read_annotations(out.join("bench.pwire")).unwrap();
    assert_eq!(ann.iter().map(|a| a.sample).collect::<Vec<_>>(), [300]);
    // The page is gone with listen.
    assert!(TcpStream::connect((Ipv4Addr::LOCALHOST, web)).is_err());
}

#[test]
fn a_taken_view_port_is_one_line_and_exit_status_1() {
    let dir = tempfile::tempdir().unwrap();
    let held = TcpListener::bind((Ipv4Addr::LOCALHOST, 0)).unwrap();
    let taken = held.local_addr().unwrap().port().to_string();
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args([
            "listen",
            "--port",
            "/dev/no-such-board",
            "--view",
            "--view-port",
            &taken,
        ])
        .arg("--out")
        .arg(dir.path())
        .stdin(Stdio::null())
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert_eq!(
        err.trim_end(),
        format!(
            "plethwire: live view: 127.0.0.1:{taken} is already in use by another program; \
             choose another --view-port (0: any free port)"
        )
    );
    // Refused before anything started: no banner, no files.
    assert!(out.stdout.is_empty());
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
}

#[test]
fn the_help_tells_of_the_page_and_a_view_port_needs_the_view() {
    let help = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(["listen", "--help"])
        .output()
        .unwrap();
    let help = String::from_utf8_lossy(&help.stdout);
    for words in [
        "--view",
        "--view-port",
        "127.0.0.1",
        "IEC 62471",
        "USB isolator",
    ] {
        assert!(help.contains(words), "help lacks {words}:\n{help}");
    }
    let out = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(["listen", "--port", "/dev/null", "--view-port", "9000"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
}
