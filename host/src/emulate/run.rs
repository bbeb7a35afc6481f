//! Starting QEMU, feeding it and collecting its frames while it runs.

use std::fs::File;
use std::io::{Read, Write};
use std::path::Path;
use std::process::{Child, ChildStderr, Command, ExitStatus, Stdio};
use std::sync::mpsc::{self, Receiver, RecvTimeoutError};
use std::thread::{self, JoinHandle};
use std::time::{Duration, Instant};

use plethwire_dsp::wire::Frame;

use super::board::qemu_args;
use super::perf;
use super::session::{Collector, Session};
use super::{EmulateError, Emulation};

/// How often a running board's output file is looked at.
const POLL: Duration = Duration::from_millis(20);
/// File names in the run's temporary folder (QEMU runs there, and the
/// firmware opens them relative to it).
const FEED: &str = "feed.bin";
const FRAMES: &str = "frames.bin";
const PERF: &str = "perf.txt";

fn io(what: &str) -> impl Fn(std::io::Error) -> EmulateError + '_ {
    move |source| EmulateError::Io {
        what: what.to_owned(),
        source,
    }
}

/// Start QEMU in `dir` with the firmware command line `args`.
pub(super) fn start(
    e: &Emulation,
    dir: &Path,
    args: &[&str],
    stdin: Stdio,
) -> Result<(Child, JoinHandle<Vec<u8>>), EmulateError> {
    // QEMU runs in the temporary folder, so the ELF's path must not be
    // relative to ours.
    let elf = std::path::absolute(&e.elf).map_err(io("cannot resolve the firmware path"))?;
    let mut child = Command::new(&e.qemu)
        .args(qemu_args(e.core, &elf, args, e.count_instructions))
        .current_dir(dir)
        .stdin(stdin)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .map_err(|source| EmulateError::Io {
            what: format!("cannot start {}", e.qemu.display()),
            source,
        })?;
    let stderr = drain(child.stderr.take().expect("stderr is piped"));
    Ok((child, stderr))
}

/// Read standard error to its end on a thread of its own, so a chatty QEMU
/// cannot block on a full pipe.
fn drain(mut pipe: ChildStderr) -> JoinHandle<Vec<u8>> {
    thread::spawn(move || {
        let mut buf = Vec::new();
        let _ = pipe.read_to_end(&mut buf);
        buf
    })
}

/// Kill the board after `timeout` has passed since `started`.
fn check_deadline(e: &Emulation, child: &mut Child, started: Instant) -> Result<(), EmulateError> {
    match e.timeout {
        Some(t) if started.elapsed() > t => {
            let _ = child.kill();
            let _ = child.wait();
            Err(EmulateError::Timeout(t))
        }
        _ => Ok(()),
    }
}

/// An exit status other than success becomes the board's last line on
/// standard error.
pub(super) fn judge_exit(
    status: ExitStatus,
    stderr: JoinHandle<Vec<u8>>,
) -> Result<(), EmulateError> {
    let text = String::from_utf8_lossy(&stderr.join().unwrap_or_default()).into_owned();
    if status.success() {
        return Ok(());
    }
    Err(EmulateError::Board(format!(
        "{} ({status})",
        last_words(&text)
    )))
}

/// The line of standard error that says what went wrong: the firmware's own
/// (`plethwire-emulated: ...`, `panic ...`, `fault ...`) or QEMU's
/// (`qemu...: ...`, before any register dump), else the last one.
fn last_words(stderr: &str) -> &str {
    let said = |l: &&str| {
        ["plethwire-emulated:", "panic ", "fault ", "qemu"]
            .iter()
            .any(|p| l.starts_with(p))
    };
    let mut lines = stderr.lines().map(str::trim).filter(|l| !l.is_empty());
    lines
        .clone()
        .find(said)
        .or_else(|| lines.next_back())
        .unwrap_or("no message")
}

/// Read what `file` has gained since the last call and decode it.
fn pump_file(
    file: &mut File,
    c: &mut Collector,
    on_frame: &mut dyn FnMut(&Frame),
) -> Result<(), EmulateError> {
    let mut buf = Vec::new();
    file.read_to_end(&mut buf)
        .map_err(io("cannot read the board's frames"))?;
    c.push(&buf, on_frame);
    Ok(())
}

/// The whole feed through semihosting files.
pub(super) fn over_files(
    e: &Emulation,
    feed: &[u8],
    samples: u64,
    on_frame: &mut dyn FnMut(&Frame),
) -> Result<Session, EmulateError> {
    let dir = tempfile::tempdir().map_err(io("cannot make a temporary folder"))?;
    std::fs::write(dir.path().join(FEED), feed).map_err(io("cannot write the samples feed"))?;
    // Made empty now so it can be followed from the start; the firmware
    // truncates it when it opens it.
    let frames_path = dir.path().join(FRAMES);
    File::create(&frames_path).map_err(io("cannot create the frames file"))?;
    let mut frames = File::open(&frames_path).map_err(io("cannot open the frames file"))?;
    let args: &[&str] = if e.count_instructions {
        &["perf", FEED, FRAMES, PERF]
    } else {
        &["stream", FEED, FRAMES]
    };
    let (mut child, stderr) = start(e, dir.path(), args, Stdio::null())?;
    let started = Instant::now();
    let mut c = Collector::new(samples);
    let status = loop {
        let exited = child.try_wait().map_err(io("cannot watch QEMU"))?;
        pump_file(&mut frames, &mut c, on_frame)?;
        if let Some(status) = exited {
            break status;
        }
        check_deadline(e, &mut child, started)?;
        thread::sleep(POLL);
    };
    judge_exit(status, stderr)?;
    let perf = if e.count_instructions {
        let text = std::fs::read_to_string(dir.path().join(PERF))
            .map_err(io("cannot read the board's perf report"))?;
        let report = perf::parse(&text)?;
        if report.core != e.core {
            return Err(EmulateError::Board(format!(
                "the firmware counted on the {} machine, not the {}'s",
                report.core.machine(),
                e.core.describe()
            )));
        }
        Some(report)
    } else {
        None
    };
    Ok(c.finish(perf))
}

/// Standard output in chunks, as it comes, on a thread of its own.
pub(super) fn chunks(mut out: impl Read + Send + 'static) -> Receiver<Vec<u8>> {
    let (tx, rx) = mpsc::channel();
    thread::spawn(move || {
        let mut buf = [0u8; 4096];
        while let Ok(n) = out.read(&mut buf) {
            if n == 0 || tx.send(buf[..n].to_vec()).is_err() {
                break;
            }
        }
    });
    rx
}

/// The feed down UART0, frames back on it.
pub(super) fn over_uart(
    e: &Emulation,
    feed: Vec<u8>,
    samples: u64,
    on_frame: &mut dyn FnMut(&Frame),
) -> Result<Session, EmulateError> {
    let dir = tempfile::tempdir().map_err(io("cannot make a temporary folder"))?;
    let (mut child, stderr) = start(e, dir.path(), &["uart"], Stdio::piped())?;
    let mut stdin = child.stdin.take().expect("stdin is piped");
    // QEMU takes a byte whenever the UART's receive buffer is free; the
    // pipe holds the rest. A board that stops reading makes this write
    // fail once QEMU is gone, which is reported by the exit status.
    let writer = thread::spawn(move || {
        let _ = stdin.write_all(&feed);
    });
    let rx = chunks(child.stdout.take().expect("stdout is piped"));
    let started = Instant::now();
    let mut c = Collector::new(samples);
    loop {
        match rx.recv_timeout(POLL) {
            Ok(bytes) => c.push(&bytes, on_frame),
            Err(RecvTimeoutError::Timeout) => {}
            // Standard output closed: QEMU is exiting.
            Err(RecvTimeoutError::Disconnected) => break,
        }
        check_deadline(e, &mut child, started)?;
    }
    let status = child.wait().map_err(io("cannot wait for QEMU"))?;
    let _ = writer.join();
    judge_exit(status, stderr)?;
    Ok(c.finish(None))
}

#[cfg(test)]
mod tests {
    use super::last_words;

    #[test]
    fn the_telling_line_of_standard_error_is_chosen() {
        let dump = "qemu: fatal: Lockup: can't escalate 3 to HardFault\n\nR00=00000000\nFPSCR: 0\n";
        assert_eq!(
            last_words(dump),
            "qemu: fatal: Lockup: can't escalate 3 to HardFault"
        );
        let ours = "some warning\nplethwire-emulated: samples feed: bad magic\n";
        assert_eq!(
            last_words(ours),
            "plethwire-emulated: samples feed: bad magic"
        );
        assert_eq!(last_words("a\nb\n\n"), "b");
        assert_eq!(last_words(""), "no message");
    }
}
