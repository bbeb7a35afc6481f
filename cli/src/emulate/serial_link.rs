//! `plethwire emulate --serial-link PATH`: the emulated board as a serial
//! device for `plethwire listen`, fed a recording or a made-up finger at
//! rest in real time. The work is in
//! [`plethwire::emulate::Emulation::serve_serial_link`].

use std::io::Write;
use std::path::Path;

use plethwire::emulate::{find_qemu, Emulation, Link, LinkReport, PacedFeed};
use plethwire::replay::load;
use plethwire_dsp::pipeline::Config;
use plethwire_synth::{generate, HrSchedule, SynthOptions};

use super::{firmware_line, EmulateArgs};
use crate::Failure;

/// The made-up signal's rate when no --rate is given, Hz.
pub const DEFAULT_RATE_HZ: f64 = 250.0;
/// The made-up finger's heart rate, bpm (a resting adult, common practice).
const RESTING_BPM: f64 = 72.0;
/// Length of the made-up signal before it starts again, s: a whole number
/// of its 0.25 Hz breathing wander's periods, so only the pulse's phase
/// jumps where it joins.
const LOOP_S: f64 = 300.0;
/// The made-up signal's ADC range: a 12-bit converter's codes.
const MADE_UP_RAILS: (f32, f32) = (0.0, 4095.0);
/// The line's capacity at 115200 baud, 8N1 (10 bits a byte), bytes/s.
const LINE_BYTES_PER_S: f64 = 11_520.0;

/// Our bench scenario, invented: a finger resting on the sensor, in the
/// whole codes of a 12-bit ADC (DC near half the range, a pulse of 80
/// codes, breathing wander and a little noise), at `rate` Hz.
pub fn finger_at_rest(rate: f64) -> Result<Vec<f32>, Failure> {
    let rec = generate(&SynthOptions {
        sample_rate_hz: rate,
        duration_s: LOOP_S,
        hr: HrSchedule::constant(RESTING_BPM),
        pulse_amplitude: 80.0,
        dc_level: 2000.0,
        wander_amplitude: 12.0,
        noise_sd: 0.8,
        ..SynthOptions::default()
    })
    .map_err(|e| Failure::refused(format!("cannot make the signal: {e}")))?;
    // Whole codes, as an ADC gives them (so one step is one code).
    Ok(rec.samples.iter().map(|x| x.round()).collect())
}

/// The feed and the words that say what it is.
fn feed(args: &EmulateArgs) -> Result<(PacedFeed, String), Failure> {
    let (samples, fs, what) = match &args.record {
        Some(record) => {
            let rec = load(record, &args.pipeline.source()).map_err(Failure::refused)?;
            let samples = rec.signal.samples.iter().map(|&x| x as f32).collect();
            let what = format!("{} of {}", rec.signal.name, record.display());
            (samples, rec.signal.fs, what)
        }
        None => {
            let rate = args.pipeline.rate.unwrap_or(DEFAULT_RATE_HZ);
            plethwire_dsp::pipeline::check_sample_rate(rate)
                .map_err(|e| Failure::refused(format!("--rate: {e}")))?;
            let what = format!(
                "a made-up finger at rest ({RESTING_BPM} bpm, 12-bit ADC counts, rails 0:4095)"
            );
            (finger_at_rest(rate)?, rate, what)
        }
    };
    let total = args.seconds.map(|s| ((s * fs).round() as u64).max(1));
    let mut config: Config = args.pipeline.config(fs);
    if args.record.is_none() && config.options.rails.is_none() {
        // The made-up finger is in a 12-bit ADC's counts: its hello says
        // so, and listen's checks can weigh it against the range.
        config.options.rails = Some(MADE_UP_RAILS);
    }
    let how_long = match args.seconds {
        Some(s) => format!("for {s} s"),
        None => "looping until Ctrl-C".into(),
    };
    let words = format!("{what} at {fs} Hz, {how_long}");
    Ok((
        PacedFeed {
            config,
            samples,
            total,
        },
        words,
    ))
}

/// The last line: what went over the link.
fn closing_line(link: &Path, r: &LinkReport) -> String {
    let rate = r.bytes_per_second();
    format!(
        "  closed      {}: {} samples fed in {:.1} s, {} bytes on the line ({:.0} B/s, {:.1} % of \
         115200 baud's {LINE_BYTES_PER_S:.0} B/s), {} lost with nobody reading\n",
        link.display(),
        r.fed,
        r.seconds,
        r.sent_bytes,
        rate,
        100.0 * rate / LINE_BYTES_PER_S,
        r.lost_bytes
    )
}

/// Run `plethwire emulate --serial-link LINK`.
pub fn run(args: &EmulateArgs, link: &Path, out: &mut dyn Write) -> Result<(), Failure> {
    let firmware = args.firmware()?;
    let qemu = find_qemu().map_err(Failure::refused)?;
    let (feed, words) = feed(args)?;
    let stop = crate::stop::install("the serial link could not be removed")?;
    let emulation = Emulation {
        qemu,
        core: args.core,
        elf: firmware.elf.clone(),
        link: Link::Uart,
        count_instructions: false,
        timeout: None,
    };
    let mut failed_output = None;
    let mut ready = |target: &Path| {
        let text = format!(
            "serial link {} (-> {}): the emulated board fed {words}\n{}  read it with: \
             plethwire listen --port {} --view\n",
            link.display(),
            target.display(),
            firmware_line(&firmware),
            link.display()
        );
        failed_output = out
            .write_all(text.as_bytes())
            .and_then(|_| out.flush())
            .err();
    };
    let report = emulation
        .serve_serial_link(link, &feed, stop, &mut ready)
        .map_err(|e| Failure::refused(format!("{}: {e}", link.display())))?;
    if let Some(e) = failed_output {
        return Err(Failure::output(e));
    }
    out.write_all(closing_line(link, &report).as_bytes())
        .map_err(Failure::output)
}
