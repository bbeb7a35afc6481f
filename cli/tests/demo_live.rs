//! `plethwire demo` on a terminal is live: each phase line is printed
//! while the ride streams, between the progress bar's frames, not held
//! until the end. The demo runs on a pseudo-terminal; the test looks only
//! at the order of what it printed (lines against the bar's percentages),
//! never at the time it took.

use nix::fcntl::{fcntl, FcntlArg, FdFlag};
use nix::pty::{openpty, Winsize};
use std::io::Read;
use std::process::{Command, Stdio};

/// Every percentage the bar drew, with its byte position in `text`.
fn bar_frames(text: &str) -> Vec<(usize, u32)> {
    let b = text.as_bytes();
    let mut frames = Vec::new();
    for (i, _) in text.match_indices('%') {
        let digits = b[..i]
            .iter()
            .rev()
            .take_while(|c| c.is_ascii_digit())
            .count();
        if digits > 0 {
            if let Ok(p) = text[i - digits..i].parse() {
                frames.push((i, p));
            }
        }
    }
    frames
}

#[test]
fn phase_lines_come_while_the_bar_is_still_moving() {
    let size = Winsize {
        ws_row: 40,
        ws_col: 120,
        ws_xpixel: 0,
        ws_ypixel: 0,
    };
    let pty = openpty(&size, None).expect("a pseudo-terminal");
    for fd in [&pty.master, &pty.slave] {
        fcntl(fd, FcntlArg::F_SETFD(FdFlag::FD_CLOEXEC)).unwrap();
    }
    let dir = tempfile::tempdir().unwrap();
    // 240 s of ride at 60 times real time: 4 s of streaming.
    let mut child = Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(["demo", "--no-board", "--speed", "60", "--out"])
        .arg(dir.path().join("ride"))
        .current_dir(dir.path())
        .stdin(Stdio::null())
        .stdout(Stdio::from(pty.slave.try_clone().unwrap()))
        .stderr(Stdio::from(pty.slave))
        .spawn()
        .expect("run plethwire demo");
    let mut master = std::fs::File::from(pty.master);
    let mut bytes = Vec::new();
    let mut buf = [0u8; 4096];
    // Until the demo exits and its end of the terminal closes (EIO).
    while let Ok(n) = master.read(&mut buf) {
        if n == 0 {
            break;
        }
        bytes.extend_from_slice(&buf[..n]);
    }
    let status = child.wait().unwrap();
    let text = String::from_utf8_lossy(&bytes).into_owned();
    assert!(status.success(), "{text}");
    let recovery = text
        .find("150.0 s  ── recovery")
        .unwrap_or_else(|| panic!("no recovery line in:\n{text}"));
    let frames = bar_frames(&text);
    // Recovery starts at 62.5 % of the ride: the bar went on moving after
    // its line was printed (held lines would all follow the last frame).
    let later: Vec<u32> = frames
        .iter()
        .filter(|(at, _)| *at > recovery)
        .map(|f| f.1)
        .collect();
    assert!(
        later.iter().any(|p| (60..=95).contains(p)),
        "frames after the recovery line: {later:?}\n{text}"
    );
    let before: Vec<u32> = frames
        .iter()
        .filter(|(at, _)| *at < recovery)
        .map(|f| f.1)
        .collect();
    assert!(
        before.iter().all(|p| *p <= 70),
        "frames before the recovery line: {before:?}"
    );
    // The cautions stay on the screen.
    assert!(text.contains("not a medical device"), "{text}");
}
