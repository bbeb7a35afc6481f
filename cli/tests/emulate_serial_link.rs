//! `plethwire emulate --serial-link`: the emulated board's frames arrive
//! on the linked pseudo-terminal, whole and in order (a hello at the
//! signal's rate first, beats, a status last when the feed ends), and the
//! link is gone when the board stops, at the end of --seconds or on
//! Ctrl-C. The signal is our own made-up finger at rest.

mod serial_link_support;

use plethwire_dsp::wire::{Decoder, Frame, Message};
use serial_link_support::{firmware, wait_until, SerialLink};
use std::io::{ErrorKind, Read};
use std::path::Path;

/// Read the port at `path` until it hangs up or `enough` says so; the
/// frames and the decoder's damaged count.
fn read_frames(path: &Path, enough: impl Fn(&[Frame]) -> bool) -> (Vec<Frame>, u64) {
    let mut port = std::fs::File::open(path).expect("open the link");
    let mut decoder = Decoder::new();
    let mut frames = Vec::new();
    let mut buf = [0u8; 4096];
    while !enough(&frames) {
        let n = match port.read(&mut buf) {
            Ok(n) => n,
            // A pseudo-terminal whose board end has closed: the hang-up.
            Err(e) if e.raw_os_error() == Some(5) => 0,
            Err(e) if e.kind() == ErrorKind::Interrupted => continue,
            Err(e) => panic!("read the link: {e}"),
        };
        if n == 0 {
            break;
        }
        for &b in &buf[..n] {
            if let Some(Ok(f)) = decoder.push(b) {
                frames.push(f);
            }
        }
    }
    (frames, decoder.stats().damaged)
}

#[test]
fn frames_arrive_on_the_link_and_it_vanishes_at_the_end() {
    let Some(elf) = firmware() else { return };
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("board");
    let link = SerialLink::start(&elf, &path, &["--rate", "250", "--seconds", "6"]);
    let (frames, damaged) = read_frames(&path, |_| false);
    let (status, lines, err) = link.finish();
    assert!(status.success(), "{status}: {err}");
    assert_eq!(damaged, 0);
    match &frames.first().expect("frames on the link").message {
        Message::Hello(h) => assert_eq!(h.sample_rate_hz, 250.0),
        m => panic!("the first frame is {m:?}, not a hello"),
    }
    assert!(
        matches!(frames.last().unwrap().message, Message::Status(_)),
        "a status last: {:?}",
        frames.last()
    );
    // 6 s of a 72 bpm finger: beats from the second or so on.
    let beats = frames
        .iter()
        .filter(|f| matches!(f.message, Message::Beat(_)))
        .count();
    assert!((4..=8).contains(&beats), "{beats} beats");
    let sequences: Vec<u16> = frames.iter().map(|f| f.seq).collect();
    assert!(
        sequences.windows(2).all(|w| w[1] == w[0].wrapping_add(1)),
        "{sequences:?}"
    );
    assert!(
        lines.iter().any(|l| l.contains("1500 samples fed")),
        "{lines:?}"
    );
    assert!(std::fs::symlink_metadata(&path).is_err(), "the link stays");
}

#[test]
fn ctrl_c_stops_a_looping_link_and_removes_it() {
    let Some(elf) = firmware() else { return };
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("board");
    let link = SerialLink::start(&elf, &path, &[]);
    let (frames, _) = read_frames(&path, |f| {
        f.iter()
            .filter(|f| matches!(f.message, Message::Beat(_)))
            .count()
            >= 2
    });
    assert!(matches!(frames[0].message, Message::Hello(ref h) if h.sample_rate_hz == 250.0));
    link.stop();
    wait_until("the link is gone", || {
        std::fs::symlink_metadata(&path).is_err()
    });
}

#[test]
fn a_file_in_the_way_of_the_link_is_refused_and_kept() {
    let Some(elf) = firmware() else { return };
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("board");
    std::fs::write(&path, "mine").unwrap();
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_plethwire"))
        .args(["emulate", "--serial-link"])
        .arg(&path)
        .arg("--firmware")
        .arg(&elf)
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(err.contains("is not a symlink"), "{err}");
    assert_eq!(std::fs::read_to_string(&path).unwrap(), "mine");
}
