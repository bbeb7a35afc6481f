//! The emulated board as a serial device (`plethwire emulate
//! --serial-link`) run by the real binary, for the tests that read it or
//! listen to it.
#![allow(dead_code)] // each test file uses a different subset

use plethwire::emulate::Link;
use plethwire_checks::emulation::emulation;
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::mpsc::{self, Receiver};
use std::time::{Duration, Instant};

/// Long enough for a slow machine, short enough to fail a hang.
pub const PATIENCE: Duration = Duration::from_secs(90);

/// The emulated firmware's ELF, built; `None` (after `need`) when QEMU or
/// the firmware's target is missing outside CI.
pub fn firmware() -> Option<PathBuf> {
    emulation(Link::Uart, false).map(|e| e.elf)
}

/// Poll `done` every 20 ms until it holds; panics naming `what` after
/// [`PATIENCE`].
pub fn wait_until(what: &str, mut done: impl FnMut() -> bool) {
    let deadline = Instant::now() + PATIENCE;
    while !done() {
        assert!(Instant::now() < deadline, "{what}: not within {PATIENCE:?}");
        std::thread::sleep(Duration::from_millis(20));
    }
}

/// A running `plethwire emulate --serial-link`.
pub struct SerialLink {
    child: Child,
    /// The link's path.
    pub path: PathBuf,
    lines: Receiver<String>,
}

impl SerialLink {
    /// Start it at `path` on `elf` with `args` (e.g. `--rate 250`), and
    /// wait until the link is there.
    pub fn start(elf: &Path, path: &Path, args: &[&str]) -> Self {
        let mut child = Command::new(env!("CARGO_BIN_EXE_plethwire"))
            .arg("emulate")
            .arg("--serial-link")
            .arg(path)
            .arg("--firmware")
            .arg(elf)
            .args(args)
            .stdin(Stdio::null())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("start plethwire emulate");
        let out = child.stdout.take().unwrap();
        let (tx, lines) = mpsc::channel();
        std::thread::spawn(move || {
            for line in BufReader::new(out).lines().map_while(Result::ok) {
                if tx.send(line).is_err() {
                    break;
                }
            }
        });
        let mut link = Self {
            child,
            path: path.to_path_buf(),
            lines,
        };
        wait_until("the serial link appears", || {
            if let Ok(Some(status)) = link.child.try_wait() {
                panic!("emulate --serial-link ended ({status}): {}", link.stderr());
            }
            std::fs::read_link(path).is_ok()
        });
        link
    }

    fn stderr(&mut self) -> String {
        let mut err = String::new();
        if let Some(mut e) = self.child.stderr.take() {
            let _ = e.read_to_string(&mut err);
        }
        err
    }

    /// Ask it to stop as Ctrl-C does.
    pub fn interrupt(&self) {
        let ok = Command::new("kill")
            .args(["-INT", &self.child.id().to_string()])
            .status()
            .expect("run kill");
        assert!(ok.success());
    }

    /// Wait for it to end; its exit status, stdout lines and stderr.
    pub fn finish(mut self) -> (ExitStatus, Vec<String>, String) {
        let mut status = None;
        wait_until("emulate --serial-link ends", || {
            status = self.child.try_wait().unwrap();
            status.is_some()
        });
        let err = self.stderr();
        let mut lines = Vec::new();
        while let Ok(line) = self.lines.recv_timeout(Duration::from_secs(5)) {
            lines.push(line);
        }
        (status.unwrap(), lines, err)
    }

    /// Stop it as Ctrl-C does and check it ended well, its link gone.
    pub fn stop(self) {
        self.interrupt();
        let path = self.path.clone();
        let (status, lines, err) = self.finish();
        assert!(status.success(), "{status}: {err}");
        assert!(
            lines.iter().any(|l| l.trim_start().starts_with("closed")),
            "{lines:?}"
        );
        assert!(std::fs::symlink_metadata(&path).is_err(), "the link stays");
    }
}

impl Drop for SerialLink {
    fn drop(&mut self) {
        // Only on a failed test: do not leave the board running. Ctrl-C
        // first, so it stops its QEMU and removes its link.
        if self.child.try_wait().ok().flatten().is_none() {
            self.interrupt();
            let deadline = Instant::now() + Duration::from_secs(10);
            while self.child.try_wait().ok().flatten().is_none() && Instant::now() < deadline {
                std::thread::sleep(Duration::from_millis(20));
            }
            let _ = self.child.kill();
            let _ = self.child.wait();
        }
    }
}
