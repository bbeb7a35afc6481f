//! The project's invariant on real recordings: the firmware on the emulated
//! Cortex-M4F board streams the same beat events as the host replay, bit
//! for bit, from the same samples: over semihosting files for whole
//! recordings, and over the emulated UART as a real board would. The
//! stream itself must arrive whole (no damaged or lost frames, a hello
//! first and a status last).
//!
//! Recordings: CapnoBase (Karlen et al., IEEE TBME 60(7):1946, 2013) at
//! 300 Hz and BIDMC (Pimentel et al., IEEE TBME 64(8):1914, 2017) at
//! 125 Hz, from ../shared/data.

use plethwire::emulate::{EmulateError, Link};
use plethwire_checks::emulation::{
    assert_identical, default_config, emulation, run_both, shared_record,
};
use plethwire_checks::{build_emulated_firmware, shared_data_dir};
use plethwire_cli as cli;
use plethwire_dsp::pipeline::Config;

/// A whole recording over semihosting files.
fn whole_record_matches(relative: &str, at_least_beats: usize) {
    let Some(e) = emulation(Link::File, false) else {
        return;
    };
    let Some(rec) = shared_record(relative) else {
        return;
    };
    let samples = &rec.signal.samples;
    let (session, host) = run_both(&e, samples, default_config(&rec));
    assert_eq!(session.samples_fed, samples.len() as u64);
    let beats = assert_identical(relative, &session, &host);
    // Guards against comparing two empty lists: these are 8-minute records.
    assert!(
        beats >= at_least_beats,
        "{relative}: only {beats} beats compared"
    );
    eprintln!(
        "{relative}: {} samples, {beats} beats and {} state changes identical, {} frames",
        samples.len(),
        host.replay.states.len(),
        session.frames.len()
    );
}

#[test]
fn capnobase_cb0009_whole_record_bit_for_bit() {
    whole_record_matches("capnobase/cb0009", 800);
}

#[test]
fn capnobase_cb0031_whole_record_bit_for_bit() {
    whole_record_matches("capnobase/cb0031", 500);
}

#[test]
fn bidmc01_whole_record_bit_for_bit() {
    whole_record_matches("bidmc/bidmc01", 700);
}

#[test]
fn bidmc45_whole_record_bit_for_bit() {
    whole_record_matches("bidmc/bidmc45", 450);
}

/// 60 s of a 300 Hz record down the emulated UART (72 kB, 5 to 10 s),
/// frames back on it.
#[test]
fn uart_link_streams_the_same_beats() {
    let Some(e) = emulation(Link::Uart, false) else {
        return;
    };
    let Some(rec) = shared_record("capnobase/cb0031") else {
        return;
    };
    let n = (60.0 * rec.signal.fs) as usize;
    let samples = &rec.signal.samples[..n];
    let (session, host) = run_both(&e, samples, default_config(&rec));
    let beats = assert_identical("cb0031 over the UART", &session, &host);
    assert!(beats >= 60, "only {beats} beats in 60 s");
    eprintln!("cb0031, first 60 s over the UART: {beats} beats identical");
}

/// A configuration the pipeline refuses is refused on the board too, with
/// its reason, and the run fails instead of yielding an empty stream.
#[test]
fn the_board_reports_a_refused_configuration() {
    let Some(e) = emulation(Link::File, false) else {
        return;
    };
    let samples = vec![0.5; 100];
    let err = e
        .run(&samples, Config::new(10.0), &mut |_| {})
        .expect_err("10 Hz is below the pipeline's range");
    let text = err.to_string();
    assert!(matches!(err, EmulateError::Board(_)), "{text}");
    assert!(
        text.contains("SampleRate") && !text.contains('\n'),
        "{text}"
    );
}

/// `plethwire emulate` itself: the stream on standard output, the
/// annotation file, the bit-for-bit verdict.
#[test]
fn the_emulate_command_shows_beats_and_writes_annotations() {
    let Some(_) = emulation(Link::File, false) else {
        return;
    };
    let Some(_) = shared_record("bidmc/bidmc45") else {
        return;
    };
    let record = shared_data_dir().unwrap().join("bidmc/bidmc45");
    let out_dir = tempfile::tempdir().unwrap();
    let elf = build_emulated_firmware();
    let args: Vec<std::ffi::OsString> = [
        "plethwire".as_ref(),
        "emulate".as_ref(),
        record.as_os_str(),
        "--seconds".as_ref(),
        "30".as_ref(),
        "--elf".as_ref(),
        elf.as_os_str(),
        "--out".as_ref(),
        out_dir.path().as_os_str(),
    ]
    .into_iter()
    .map(Into::into)
    .collect();
    let mut out = Vec::new();
    cli::run(args, &mut out).unwrap_or_else(|f| panic!("{:?}", f.message));
    let text = String::from_utf8(out).unwrap();
    let beat_lines = text.lines().filter(|l| l.contains(" beat ")).count();
    assert!(beat_lines >= 20, "{text}");
    assert!(
        text.contains("host replay identical, bit for bit"),
        "{text}"
    );
    assert!(text.contains("0 damaged, 0 lost"), "{text}");
    let ann = out_dir.path().join("bidmc45.pwire");
    let read = plethwire_records::read_annotations(&ann).unwrap();
    assert_eq!(read.len(), beat_lines, "one annotation per beat shown");
}
