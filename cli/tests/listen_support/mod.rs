//! A pretend board on a pseudo-terminal and the real `plethwire listen`
//! listening to it, for the tests without hardware.
//!
//! The port path handed to the listener is a symlink to the pty's slave,
//! so "unplugging" can make it vanish (the symlink goes, the master is
//! closed: the listener sees a hang-up) and "replugging" bring it back on
//! a new pty; a listener retrying a bare /dev/pts/N could otherwise open
//! some other test's terminal that got the same number.
#![allow(dead_code)] // each test file uses a different subset

use nix::fcntl::{open, OFlag};
use nix::pty::{grantpt, posix_openpt, ptsname_r, unlockpt, PtyMaster};
use nix::sys::stat::Mode;
use nix::sys::termios::{cfmakeraw, tcgetattr, tcsetattr, SetArg};
use plethwire_dsp::pipeline::{BeatEvent, BeatFlags, Options, SignalState, StateEvent};
use plethwire_dsp::wire::{
    cobs_encode, crc32, max_encoded_len, Encoder, Hello, Message, SampleBlock, Status, MAX_FRAME,
};
use std::io::{BufRead, BufReader, ErrorKind, Read, Write};
use std::os::fd::OwnedFd;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::mpsc::{self, Receiver, RecvTimeoutError};
use std::time::{Duration, Instant};

/// Long enough for a slow machine, short enough to fail a hang.
pub const PATIENCE: Duration = Duration::from_secs(60);

/// Sample rate of the pretend board.
pub const RATE_HZ: f32 = 250.0;
/// Its ADC rails: a 12-bit converter.
pub const RAILS: (f32, f32) = (0.0, 4095.0);

/// The board end of a plugged-in pty.
pub struct Plug {
    master: PtyMaster,
    // Held so the pty stays as it is until unplugged; never read.
    _slave: OwnedFd,
}

/// A pty pair whose descriptors are close-on-exec from the start. The
/// descriptors of `TTYPort::pair` are not, so a listener started by a
/// test (this one's or a parallel one's) would inherit the master, and
/// closing ours would then never hang up its port.
fn pty_pair() -> (PtyMaster, OwnedFd, String) {
    let flags = OFlag::O_RDWR | OFlag::O_NOCTTY | OFlag::O_CLOEXEC | OFlag::O_NONBLOCK;
    let master = posix_openpt(flags).expect("a pseudo-terminal");
    grantpt(&master).unwrap();
    unlockpt(&master).unwrap();
    let name = ptsname_r(&master).unwrap();
    let slave = open(
        Path::new(&name),
        OFlag::O_RDWR | OFlag::O_NOCTTY | OFlag::O_CLOEXEC,
        Mode::empty(),
    )
    .expect("open the pty's slave");
    // Raw until the listener sets its own mode: no echo, no line editing.
    let mut t = tcgetattr(&slave).unwrap();
    cfmakeraw(&mut t);
    tcsetattr(&slave, SetArg::TCSANOW, &t).unwrap();
    (master, slave, name)
}

/// The pretend board: numbers its frames and writes them to the pty.
pub struct Board {
    link: PathBuf,
    enc: Encoder,
    plug: Option<Plug>,
}

impl Board {
    /// A board whose port will appear at `link`.
    pub fn new(link: &Path) -> Self {
        Self {
            link: link.to_path_buf(),
            enc: Encoder::new(),
            plug: None,
        }
    }

    /// Make the port appear: a new pty, `link` pointing at its slave.
    pub fn plug_in(&mut self) {
        let (master, slave, target) = pty_pair();
        // Point a fresh symlink and rename it into place, so the listener
        // never sees a half-made one.
        let tmp = self.link.with_extension("new");
        let _ = std::fs::remove_file(&tmp);
        std::os::unix::fs::symlink(&target, &tmp).unwrap();
        std::fs::rename(&tmp, &self.link).unwrap();
        self.plug = Some(Plug {
            master,
            _slave: slave,
        });
    }

    /// Make the port vanish: the symlink goes, the pty is closed.
    pub fn unplug(&mut self) {
        let _ = std::fs::remove_file(&self.link);
        self.plug = None;
    }

    /// Bytes straight onto the line.
    pub fn raw(&mut self, bytes: &[u8]) {
        let plug = self.plug.as_mut().expect("plugged in");
        // Non-blocking, so a listener that stopped reading fails the test
        // instead of hanging it.
        let deadline = Instant::now() + PATIENCE;
        let mut rest = bytes;
        while !rest.is_empty() {
            match plug.master.write(rest) {
                Ok(n) => rest = &rest[n..],
                Err(e) if e.kind() == ErrorKind::WouldBlock && Instant::now() < deadline => {
                    std::thread::sleep(Duration::from_millis(1));
                }
                Err(e) => panic!("write to the pty: {e}"),
            }
        }
    }

    /// Encode `m` as the next frame.
    pub fn frame(&mut self, m: &Message) -> Vec<u8> {
        let mut buf = [0u8; MAX_FRAME];
        self.enc.encode(m, &mut buf).unwrap().to_vec()
    }

    /// Send `m` as the next frame.
    pub fn send(&mut self, m: &Message) {
        let bytes = self.frame(m);
        self.raw(&bytes);
    }
}

/// A status frame as a board of wire format `version` sends it (version
/// 1's 22-byte payload, all zero), its CRC intact, on the wire.
pub fn foreign_status(version: u8, seq: u16) -> Vec<u8> {
    let mut raw = vec![version, 4];
    raw.extend(seq.to_le_bytes());
    raw.resize(4 + 22, 0);
    raw.extend(crc32(&raw).to_le_bytes());
    let mut out = vec![0u8; max_encoded_len(raw.len())];
    let n = cobs_encode(&raw, &mut out).unwrap();
    out.truncate(n);
    out.push(0);
    out
}

/// The hello of the pretend board.
pub fn hello() -> Message {
    Message::Hello(Hello {
        firmware_version: [0, 4, 2],
        sample_rate_hz: RATE_HZ,
        options: Options {
            rails: Some(RAILS),
            ..Options::default()
        },
        adc_bits: 12,
    })
}

/// Raw sample `n`: whole ADC counts, so the record must hold them exactly.
pub fn raw_at(n: u64) -> f32 {
    (2000.0 + 600.0 * (n as f64 * 0.05).sin()).round() as f32
}

/// Filtered sample `n`: any float.
pub fn filtered_at(n: u64) -> f32 {
    (150.0 * (n as f64 * 0.05).cos() + 0.37) as f32
}

/// The 16 samples from `first`.
pub fn block(first: u64) -> Message {
    let mut b = SampleBlock {
        first_index: first,
        count: 16,
        stride: 1,
        raw: [0.0; 16],
        filtered: [0.0; 16],
    };
    for i in 0..16 {
        b.raw[i] = raw_at(first + i as u64);
        b.filtered[i] = filtered_at(first + i as u64);
    }
    Message::Samples(b)
}

/// A beat at `peak` with interval `ibi_ms` (none for the first) and flags.
pub fn beat(peak: u64, ibi_ms: Option<f32>, flags: u8) -> Message {
    Message::Beat(BeatEvent {
        peak_index: peak,
        onset_index: Some(peak - 30),
        emitted_at: peak + 40,
        ibi_ms,
        hr_bpm: ibi_ms.map(|i| 60_000.0 / i),
        hr_smoothed_bpm: ibi_ms.map(|_| 72.5),
        amplitude: 310.0,
        quality: 0.93,
        flags: BeatFlags(flags),
    })
}

/// A change of signal state at `at`.
pub fn state(at: u64, state: SignalState, previous: SignalState) -> Message {
    Message::State(StateEvent {
        state,
        previous,
        at,
    })
}

/// A status frame; `led` tells them apart.
pub fn status(led: u16) -> Message {
    Message::Status(Status {
        led_drive: led,
        dc_level: 0.48,
        ambient_level: 0.02,
        measured: Status::MEASURED_ALL,
        clipped_samples: 3,
        adc_overruns: 1,
        dropped_frames: 0,
        rejected_samples: 2,
    })
}

/// A running `plethwire listen`, its stdout read line by line.
pub struct Listener {
    child: Child,
    lines: Receiver<String>,
    /// Every stdout line so far.
    pub seen: Vec<String>,
}

impl Listener {
    /// Start `plethwire listen` with `args`.
    pub fn start(args: &[&str]) -> Self {
        let mut child = Command::new(env!("CARGO_BIN_EXE_plethwire"))
            .arg("listen")
            .args(args)
            .stdin(Stdio::null())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("start plethwire listen");
        let out = child.stdout.take().unwrap();
        let (tx, lines) = mpsc::channel();
        std::thread::spawn(move || {
            for line in BufReader::new(out).lines() {
                let Ok(line) = line else { break };
                if tx.send(line).is_err() {
                    break;
                }
            }
        });
        Self {
            child,
            lines,
            seen: Vec::new(),
        }
    }

    /// Wait for a stdout line that `want` accepts; returns it.
    pub fn wait_for(&mut self, what: &str, want: impl Fn(&str) -> bool) -> String {
        let deadline = Instant::now() + PATIENCE;
        loop {
            let left = deadline.saturating_duration_since(Instant::now());
            match self.lines.recv_timeout(left) {
                Ok(line) => {
                    self.seen.push(line.clone());
                    if want(&line) {
                        return line;
                    }
                }
                Err(RecvTimeoutError::Timeout) => {
                    panic!(
                        "no line with {what} within {PATIENCE:?}; seen: {:#?}",
                        self.seen
                    )
                }
                Err(RecvTimeoutError::Disconnected) => {
                    panic!("listener ended before {what}; seen: {:#?}", self.seen)
                }
            }
        }
    }

    /// The stdout lines that have come since the last call, without
    /// waiting.
    pub fn poll(&mut self) -> Vec<String> {
        let fresh: Vec<String> = self.lines.try_iter().collect();
        self.seen.extend(fresh.iter().cloned());
        fresh
    }

    /// Kill it as `kill -9` does (SIGKILL: it runs no further code) and
    /// wait until it is gone.
    pub fn kill_hard(mut self) {
        self.child.kill().expect("SIGKILL the listener");
        self.child.wait().expect("reap the listener");
    }

    /// Ask it to stop as Ctrl-C does.
    pub fn interrupt(&self) {
        let ok = Command::new("kill")
            .args(["-INT", &self.child.id().to_string()])
            .status()
            .expect("run kill");
        assert!(ok.success());
    }

    /// Wait for it to end; returns its status, all stdout lines, stderr.
    pub fn finish(mut self) -> (ExitStatus, Vec<String>, String) {
        let deadline = Instant::now() + PATIENCE;
        let status = loop {
            if let Some(s) = self.child.try_wait().unwrap() {
                break s;
            }
            assert!(
                Instant::now() < deadline,
                "listener still running after {PATIENCE:?}; seen: {:#?}",
                self.seen
            );
            std::thread::sleep(Duration::from_millis(20));
        };
        while let Ok(line) = self.lines.recv_timeout(Duration::from_secs(5)) {
            self.seen.push(line);
        }
        let mut err = String::new();
        self.child
            .stderr
            .take()
            .unwrap()
            .read_to_string(&mut err)
            .unwrap();
        (status, std::mem::take(&mut self.seen), err)
    }
}

impl Drop for Listener {
    fn drop(&mut self) {
        // Only on a failed test: do not leave the child running.
        if self.child.try_wait().ok().flatten().is_none() {
            let _ = self.child.kill();
            let _ = self.child.wait();
        }
    }
}
