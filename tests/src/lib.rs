//! `plethwire-checks`: the harness shared by plethwire's cross-checks.
//!
//! The integration tests in `tests/tests/` compare plethwire against things
//! outside the Rust build: the firmware running under QEMU, scipy, and the
//! recordings in `../shared/data`. This library finds those things, builds
//! and runs the emulated firmware, and decides what happens when something
//! is missing.
//!
//! # Missing tools: skip locally, fail in CI
//! A check whose tool or data is missing must never pass quietly. Every such
//! test starts with
//!
//! ```no_run
//! use plethwire_checks::{need, needs, qemu};
//! if !need(needs::QEMU, qemu().is_some()) {
//!     return;
//! }
//! ```
//!
//! [`need`] panics when the environment variable `CI` is `true` (so CI goes
//! red) and otherwise prints a `SKIPPED:` line that is visible even though
//! libtest captures test output.
//!
//! # Environment variables
//! * `CI`: `true` (or `1`) turns every skip into a failure.
//! * `PLETHWIRE_DATA`: folder holding the shared recordings
//!   (default `<repo>/../shared/data`).
//! * `PLETHWIRE_PYTHON`: Python interpreter to use (default `python3`, then
//!   `python`).
//! * `PLETHWIRE_QEMU`: `qemu-system-arm` binary to use (default: from `PATH`).
//! * `PLETHWIRE_CHROMIUM`: Chromium binary for the browser checks
//!   (default: `chromium`, then `chromium-browser`, from `PATH`).
//! * `PLETHWIRE_CHROMEDRIVER`: chromedriver for the live page's check
//!   ([`webdriver`]; default: `chromedriver` from `PATH`).

pub mod accuracy;
pub mod baseline;
pub mod beside;
pub mod browser;
pub mod emulation;
pub mod selfcheck;
pub mod webdriver;

pub use baseline::{baseline_detections, baseline_peaks, BaselineInput, BaselinePeaks};
pub use plethwire::emulate::{firmware_target_installed, FIRMWARE_TARGET};

use std::ffi::{OsStr, OsString};
use std::io::{self, Read, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, Command, ExitStatus, Stdio};
use std::sync::OnceLock;
use std::thread::{self, JoinHandle};
use std::time::{Duration, Instant};

use plethwire::emulate::{self, BuildError, Core};
use serde::de::DeserializeOwned;
use serde::Serialize;

/// What to pass to [`need`]: each names a prerequisite and how to get it, so
/// the CI failure message alone tells the reader what to do.
pub mod needs {
    /// QEMU for the Arm system emulator.
    pub const QEMU: &str = "qemu-system-arm (Debian/Ubuntu: `apt-get install qemu-system-arm`; \
         or set PLETHWIRE_QEMU; scripts/test-all installs it)";
    /// A Python with the scientific stack used as the reference.
    pub const PYTHON: &str =
        "python3 with numpy and scipy (`python3 -m pip install numpy scipy wfdb`; \
         or set PLETHWIRE_PYTHON; scripts/test-all installs them)";
    /// The shared recordings.
    pub const SHARED_DATA: &str =
        "the shared recordings folder `../shared/data` next to the repository \
         (or set PLETHWIRE_DATA to its path)";
    /// A headless browser for the pictures.
    pub const CHROMIUM: &str = "chromium (Debian/Ubuntu: `apt-get install chromium`; \
         or set PLETHWIRE_CHROMIUM; scripts/test-all installs it)";
    /// The WebDriver server for Chromium, for the live page's check.
    pub const CHROMEDRIVER: &str =
        "chromedriver (Debian/Ubuntu: `apt-get install chromium-driver`; \
         or set PLETHWIRE_CHROMEDRIVER; scripts/test-all installs it)";
    /// The Rust standard library for the emulated firmware's target.
    pub const FIRMWARE_TARGET: &str = "the Rust target thumbv7em-none-eabihf \
         (`rustup target add thumbv7em-none-eabihf`; scripts/test-all adds it)";
    /// The Rust standard library for the emulated Cortex-M0's target.
    pub const M0_FIRMWARE_TARGET: &str = "the Rust target thumbv6m-none-eabi \
         (`rustup target add thumbv6m-none-eabi`; scripts/test-all adds it)";
}

/// Whether skips must become failures: `CI` is `true` (any case) or `1`.
pub fn in_ci() -> bool {
    std::env::var("CI")
        .map(|v| v.eq_ignore_ascii_case("true") || v == "1")
        .unwrap_or(false)
}

/// Gate a test on a prerequisite.
///
/// Returns `true` when `available`. Otherwise, with `CI=true` it panics with
/// a message naming `what` (which should say how to install it, see
/// [`needs`]); without CI it prints `SKIPPED: ...` to stderr and returns
/// `false`, and the test is expected to `return` at once.
pub fn need(what: &str, available: bool) -> bool {
    if available {
        return true;
    }
    // libtest names each test's thread after the test; the main thread
    // (single-threaded runs) has no useful name.
    let test = thread::current()
        .name()
        .filter(|n| *n != "main")
        .map(|n| format!(" {n}"))
        .unwrap_or_default();
    if in_ci() {
        panic!(
            "missing prerequisite for{test}: {what}. CI=true, so this check may not be skipped."
        );
    }
    // Written to the stderr handle rather than with eprintln!, which libtest
    // captures and hides for passing tests: a skip must be seen.
    // One write, so parallel tests cannot interleave inside the line.
    let line = format!("SKIPPED{test}: missing {what} (with CI=true this is a failure)\n");
    let _ = io::stderr().write_all(line.as_bytes());
    false
}

/// The repository root (the folder holding the workspace `Cargo.toml`).
pub fn repo_root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the checks crate lives one level below the repository root")
        .to_path_buf()
}

/// The folder with the shared recordings, if it exists: `PLETHWIRE_DATA`
/// when set, else `<repo>/../shared/data`.
pub fn shared_data_dir() -> Option<PathBuf> {
    let dir = match std::env::var_os("PLETHWIRE_DATA") {
        Some(d) => PathBuf::from(d),
        None => repo_root().join("..").join("shared").join("data"),
    };
    dir.is_dir().then_some(dir)
}

/// A fresh `Command` for a Python interpreter that can import numpy and
/// scipy, or `None` when there is none.
///
/// The interpreter search (which starts Python once per candidate) runs once
/// per test process.
pub fn python() -> Option<Command> {
    static FOUND: OnceLock<Option<OsString>> = OnceLock::new();
    FOUND
        .get_or_init(|| {
            let candidates = std::env::var_os("PLETHWIRE_PYTHON")
                .into_iter()
                .chain(["python3".into(), "python".into()]);
            candidates.into_iter().find(|exe| {
                Command::new(exe)
                    .args(["-c", "import numpy, scipy"])
                    .stdin(Stdio::null())
                    .stdout(Stdio::null())
                    .stderr(Stdio::null())
                    .status()
                    .is_ok_and(|s| s.success())
            })
        })
        .as_ref()
        .map(Command::new)
}

/// Run Python with `args` (e.g. a script path and its arguments, or
/// `["-c", code]`), send `request` as JSON on its stdin and parse its stdout
/// as JSON.
///
/// Panics with Python's stderr when it fails, or when no suitable Python
/// exists; gate the test with `need(needs::PYTHON, python().is_some())`.
pub fn python_json<A, Req, Resp>(args: &[A], request: &Req) -> Resp
where
    A: AsRef<OsStr>,
    Req: Serialize + ?Sized,
    Resp: DeserializeOwned,
{
    let mut cmd = python().unwrap_or_else(|| panic!("no usable {}", needs::PYTHON));
    let mut child = cmd
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start python");
    let body = serde_json::to_vec(request).expect("request serialises to JSON");
    {
        // Dropping stdin closes it, so the script sees end of input.
        let mut stdin = child.stdin.take().expect("piped stdin");
        stdin.write_all(&body).expect("send request to python");
    }
    let out = child.wait_with_output().expect("wait for python");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        out.status.success(),
        "python failed ({}):\n{stderr}",
        out.status
    );
    serde_json::from_slice(&out.stdout).unwrap_or_else(|e| {
        panic!(
            "python's answer is not the expected JSON ({e}):\n{}\nstderr:\n{stderr}",
            String::from_utf8_lossy(&out.stdout)
        )
    })
}

/// The `qemu-system-arm` binary (`PLETHWIRE_QEMU`, else the first one on
/// `PATH`), if it exists and answers `--version`
/// ([`plethwire::emulate::find_qemu`]).
pub fn qemu() -> Option<PathBuf> {
    emulate::find_qemu().ok()
}

/// Build the emulated firmware ([`plethwire::emulate::build_firmware`]:
/// `cargo build --release` in `firmware/`) and return the path of its ELF,
/// normally `firmware/target/thumbv7em-none-eabihf/release/plethwire-emulated`.
///
/// The build runs once per test process. Panics with cargo's output if the
/// build fails.
pub fn build_emulated_firmware() -> PathBuf {
    build_emulated_firmware_for(Core::M4f)
}

/// [`build_emulated_firmware`] for `core` (`--target` its target), once
/// per core and test process.
pub fn build_emulated_firmware_for(core: Core) -> PathBuf {
    static ELF: [OnceLock<PathBuf>; 2] = [OnceLock::new(), OnceLock::new()];
    let at = Core::ALL
        .iter()
        .position(|c| *c == core)
        .expect("a known core");
    ELF[at]
        .get_or_init(|| match emulate::build_firmware_for(core) {
            Ok(elf) => elf,
            Err(BuildError::Failed {
                status,
                dir,
                stderr,
            }) => panic!(
                "firmware build failed ({status}) in {}:\n{stderr}",
                dir.display()
            ),
            Err(BuildError::NoExecutable { stderr }) => {
                panic!("cargo reported no existing plethwire-emulated executable:\n{stderr}")
            }
            Err(e) => panic!("firmware build: {e}"),
        })
        .clone()
}

/// Run `elf` in QEMU's mps2-an386 machine as the firmware's runner does
/// ([`plethwire::emulate::runner_args`]: the self-check) and return its
/// exit status and everything it printed on stdout.
///
/// QEMU's stderr is passed on through `eprint!` (shown when the test fails).
/// Panics if QEMU cannot be started, and kills it and panics (with the
/// output so far) if it has not exited after `timeout`: firmware that hangs
/// is a failure, not a wait.
pub fn run_emulated(elf: &Path, timeout: Duration) -> (ExitStatus, String) {
    run_emulated_on(Core::M4f, elf, timeout)
}

/// [`run_emulated`] on `core`'s machine ([`plethwire::emulate::runner_args_for`]).
pub fn run_emulated_on(core: Core, elf: &Path, timeout: Duration) -> (ExitStatus, String) {
    let exe = qemu().unwrap_or_else(|| panic!("no usable {}", needs::QEMU));
    let mut child = Command::new(&exe)
        .args(emulate::runner_args_for(core))
        .arg(elf)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("start {}: {e}", exe.display()));
    // Drain both pipes while waiting so a chatty QEMU cannot block on a full pipe.
    let stdout = drain(child.stdout.take().expect("piped stdout"));
    let stderr = drain(child.stderr.take().expect("piped stderr"));
    let Some(status) = wait_with_deadline(&mut child, timeout) else {
        let _ = child.kill();
        let _ = child.wait();
        panic!(
            "QEMU did not exit within {timeout:?} and was killed.\nstdout so far:\n{}\nstderr:\n{}",
            join_text(stdout),
            join_text(stderr)
        );
    };
    let out = join_text(stdout);
    let err = join_text(stderr);
    if !err.is_empty() {
        eprint!("qemu stderr:\n{err}");
    }
    (status, out)
}

/// Poll `child` until it exits or `timeout` passes (`None`).
fn wait_with_deadline(child: &mut Child, timeout: Duration) -> Option<ExitStatus> {
    let deadline = Instant::now() + timeout;
    loop {
        if let Some(status) = child.try_wait().expect("poll qemu") {
            return Some(status);
        }
        if Instant::now() >= deadline {
            return None;
        }
        thread::sleep(Duration::from_millis(10));
    }
}

/// Read a pipe to its end on a thread of its own.
fn drain<R: Read + Send + 'static>(mut pipe: R) -> JoinHandle<Vec<u8>> {
    thread::spawn(move || {
        let mut buf = Vec::new();
        let _ = pipe.read_to_end(&mut buf);
        buf
    })
}

/// The text a [`drain`] thread collected.
fn join_text(reader: JoinHandle<Vec<u8>>) -> String {
    String::from_utf8_lossy(&reader.join().unwrap_or_default()).into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_board_runs_the_machine_of_the_firmware_runner() {
        let config = std::fs::read_to_string(repo_root().join("firmware/.cargo/config.toml"))
            .expect("firmware/.cargo/config.toml exists");
        let table: toml::Table = config.parse().expect("firmware/.cargo/config.toml parses");
        for core in Core::ALL {
            let runner = table["target"][core.target()]["runner"]
                .as_str()
                .unwrap_or_else(|| panic!("the firmware config sets a runner for {core:?}"));
            assert_eq!(
                runner,
                format!(
                    "qemu-system-arm {}",
                    emulate::runner_args_for(core).join(" ")
                ),
                "{core:?}"
            );
        }
    }

    #[test]
    fn repo_root_is_the_workspace() {
        let root = repo_root();
        assert!(root.join("Cargo.toml").is_file());
        assert!(root.join("firmware/Cargo.toml").is_file());
        assert!(root.join("shared-dsp/Cargo.toml").is_file());
    }

    #[test]
    fn python_round_trips_json() {
        if !need(needs::PYTHON, python().is_some()) {
            return;
        }
        let code = "import json, sys, numpy\n\
                    r = json.load(sys.stdin)\n\
                    print(json.dumps({'sum': float(numpy.sum(r['xs'])), 'n': len(r['xs'])}))";
        let answer: serde_json::Value =
            python_json(&["-c", code], &serde_json::json!({ "xs": [1.0, 2.0, 3.5] }));
        assert_eq!(answer, serde_json::json!({ "sum": 6.5, "n": 3 }));
    }
}
