//! Running shared recordings through the emulated board
//! (`plethwire::emulate`) and holding its events against the host replay,
//! for the checks in `tests/tests/emulated_*.rs`.

use std::path::PathBuf;
use std::time::Duration;

use plethwire::emulate::{block_difference, target_installed, Core, Emulation, Link, Session};
use plethwire::replay::{load, replay, sample_blocks, Recording, Replay, Source};
use plethwire_dsp::pipeline::{BeatEvent, Config};
use plethwire_dsp::wire::SampleBlock;

use crate::{build_emulated_firmware_for, need, needs, qemu, shared_data_dir};

/// Longer than any run needs (a whole recording takes a few seconds, 60 s
/// over the UART about ten), short enough to catch a hang.
pub const RUN_TIMEOUT: Duration = Duration::from_secs(180);

/// An emulation over `link` on the default core (the Cortex-M4F), the
/// firmware built; `None` (after [`need`]) when QEMU or the firmware
/// target is missing outside CI.
pub fn emulation(link: Link, count_instructions: bool) -> Option<Emulation> {
    emulation_on(Core::M4f, link, count_instructions)
}

/// [`emulation`] on `core`.
pub fn emulation_on(core: Core, link: Link, count_instructions: bool) -> Option<Emulation> {
    let what = match core {
        Core::M4f => needs::FIRMWARE_TARGET,
        Core::M0 => needs::M0_FIRMWARE_TARGET,
    };
    if !need(what, target_installed(core.target())) {
        return None;
    }
    let qemu = qemu();
    if !need(needs::QEMU, qemu.is_some()) {
        return None;
    }
    Some(Emulation {
        qemu: qemu?,
        core,
        elf: build_emulated_firmware_for(core),
        link,
        count_instructions,
        timeout: Some(RUN_TIMEOUT),
    })
}

/// The shared record `relative` (e.g. `capnobase/cb0009`); `None` (after
/// [`need`]) when the shared data is missing outside CI. A record that is
/// missing from a present data folder is a failure.
pub fn shared_record(relative: &str) -> Option<Recording> {
    let dir = shared_data_dir();
    if !need(needs::SHARED_DATA, dir.is_some()) {
        return None;
    }
    let path: PathBuf = dir?.join(relative);
    Some(load(&path, &Source::default()).unwrap_or_else(|e| panic!("{relative}: {e}")))
}

/// The configuration `plethwire replay` uses by default for `rec`.
pub fn default_config(rec: &Recording) -> Config {
    Config::new(rec.signal.fs as f32)
}

/// What the host computes from the samples: the replay's events and the
/// sample blocks the board should send.
#[derive(Debug, Clone)]
pub struct Host {
    /// Beats, state changes, counters.
    pub replay: Replay,
    /// `plethwire::replay::sample_blocks`.
    pub blocks: Vec<SampleBlock>,
}

/// Run `samples` on the board and on the host; panics on any failure of the
/// run or of the stream. Returns both.
pub fn run_both(e: &Emulation, samples: &[f64], config: Config) -> (Session, Host) {
    let mut seen = 0usize;
    let session = e
        .run(samples, config, &mut |_| seen += 1)
        .unwrap_or_else(|err| panic!("emulated run failed: {err}"));
    assert_eq!(
        seen,
        session.frames.len(),
        "every frame reaches the callback"
    );
    let host = Host {
        replay: replay(samples, config).expect("host replay"),
        blocks: sample_blocks(samples, config).expect("host sample blocks"),
    };
    (session, host)
}

/// Every field of a beat, floats as bit patterns, in the wire's order.
type BeatBits = (
    u64,
    Option<u64>,
    u64,
    Option<u32>,
    Option<u32>,
    Option<u32>,
    u32,
    u32,
    u8,
);

fn beat_bits(b: &BeatEvent) -> BeatBits {
    let bits = |v: Option<f32>| v.map(f32::to_bits);
    (
        b.peak_index,
        b.onset_index,
        b.emitted_at,
        bits(b.ibi_ms),
        bits(b.hr_bpm),
        bits(b.hr_smoothed_bpm),
        b.amplitude.to_bits(),
        b.quality.to_bits(),
        b.flags.0,
    )
}

/// The stream is whole, and the board's beats, state changes and sample
/// blocks equal the host's field by field, bit for bit (every sample of
/// every block, raw and band-passed). Returns the number of beats.
pub fn assert_identical(label: &str, session: &Session, both: &Host) -> usize {
    let host = &both.replay;
    if let Err(e) = session.verify() {
        panic!("{label}: {e}");
    }
    let s = session.stats;
    assert_eq!(
        (s.damaged, s.crc_errors, s.dropped_bytes, s.lost_frames),
        (0, 0, 0, 0),
        "{label}: damaged or lost frames"
    );
    let hello = session.hello().expect("verified");
    assert_eq!(
        hello.sample_rate_hz.to_bits(),
        (host.fs as f32).to_bits(),
        "{label}: the board ran at another rate"
    );
    let beats = session.beats();
    for (i, (b, h)) in beats.iter().zip(&host.beats).enumerate() {
        assert_eq!(
            beat_bits(b),
            beat_bits(h),
            "{label}: beat {i} differs\n board {b:?}\n host  {h:?}"
        );
    }
    assert_eq!(beats.len(), host.beats.len(), "{label}: number of beats");
    assert_eq!(session.states(), host.states, "{label}: state changes");
    let status = session.status().expect("verified");
    assert_eq!(
        (
            status.rejected_samples as u64,
            status.clipped_samples as u64
        ),
        (host.rejected, host.clipped),
        "{label}: the board's counters"
    );
    let blocks = session.blocks();
    for (i, (b, h)) in blocks.iter().zip(&both.blocks).enumerate() {
        if let Some((field, board, host)) = block_difference(b, h) {
            panic!(
                "{label}: sample block {i} (from input sample {}) differs in {field}: \
                 board {board}, host {host}",
                h.first_index
            );
        }
    }
    assert_eq!(blocks.len(), both.blocks.len(), "{label}: sample blocks");
    // Guards against two empty lists: every sample fed is in a block.
    let covered: u64 = blocks
        .iter()
        .map(|b| u64::from(b.count) * u64::from(b.stride))
        .sum();
    assert!(
        covered >= session.samples_fed && covered < session.samples_fed + 16 * 2,
        "{label}: blocks cover {covered} of {} samples",
        session.samples_fed
    );
    beats.len()
}
