//! `plethwire listen`: show and record what a board sends over a serial
//! port. The work is in [`plethwire::listen`]; this is options and wiring.

use crate::values;
use clap::Args;
use std::io::{self, IsTerminal, Write};
use std::path::PathBuf;
use std::time::{Duration, SystemTime};

use super::Failure;
use plethwire::bringup::live::LiveChecks;
use plethwire::frontend::Draft;
use plethwire::listen::view::{View, ViewError, ViewSink};
use plethwire::listen::{
    record_name, run, session_files, Capture, Ending, Event, ListenError, NeverCause, Progress,
    Recorder, Screen, SerialConnector, Session, Settings, Setup, Sink,
};
use plethwire::replay::DEFAULT_ANNOTATOR;

const EXAMPLES: &str = "\
Cautions: plethwire is not a medical device and not for diagnosis. While
someone is wired to the sensor, power it from a battery or connect it
through a USB isolator (IEC 60601-1 practice). Keep the infrared LED within
the eye-safety limits of IEC 62471. Local rules and qualified practice
decide.

Examples:
  plethwire listen --port /dev/ttyACM0
  plethwire listen --port /dev/ttyACM0 --view        # and open http://127.0.0.1:8750/
  plethwire listen --port /dev/ttyACM0 --view --view-port 0   # any free port, printed
  plethwire listen --port /dev/serial/by-id/usb-board --out recordings --name finger_rest
  plethwire listen --port /dev/ttyUSB0 --baud 230400 --seconds 300 --json > session.jsonl
  plethwire listen --port /dev/ttyACM0 --circuit examples/frontend-fingerclip.toml --max-drive 0.5

Once a second the bring-up checks run over the last 10 s of samples
(perfusion, pulse bits, SNR, hum, clipping, ambient, settling); text shows
them when a verdict changes and every 10 s, --json as `checks` lines. With
--circuit they go through the front-end model and name the part to change,
never above the LED's rating or the board's --max-drive.

Writes, in --out: NAME.pwire (WFDB annotations, symbol N at each beat's
peak), NAME.hea/NAME.dat (format-16 WFDB record of the raw and filtered
samples, when the board sends them) and NAME.session.json (summary). All
are brought up to date twice a second, so a recording cut off (the program
killed, the laptop shut) keeps all but its last second; they are finished
on Ctrl-C, when --seconds are up, or when the port is gone for longer than
--wait. Unplugging is survived: the same path is tried every 0.5 s and the
recording goes on.
--view serves a live page on this computer only (127.0.0.1): the waveform,
beats, heart rate, signal state, bring-up gauges and link counters, with
the cautions; its address is printed on standard error. The recording is
the same with or without it; reload it or open it twice as you like.
Exit status: 0 recorded, 1 the port never opened, the files could not be
written or the --view-port is taken, 2 the command line could not be
understood.";

/// Options of `plethwire listen`.
#[derive(Args, Debug, Clone, PartialEq)]
#[command(after_help = EXAMPLES)]
pub struct ListenArgs {
    /// Serial port, e.g. /dev/ttyACM0 (a symlink such as /dev/serial/by-id/... is fine).
    #[arg(long, value_name = "PATH")]
    pub port: String,

    /// Baud rate; 8 data bits, no parity, 1 stop bit.
    #[arg(long, value_name = "N", default_value_t = 115_200,
          value_parser = values::whole_from(1u32))]
    pub baud: u32,

    /// Folder for the recording (made if missing).
    #[arg(long, value_name = "DIR", default_value = ".")]
    pub out: PathBuf,

    /// Record name: letters, digits, '_' [default: session_YYYYMMDD_HHMMSS, UTC].
    #[arg(long, value_name = "NAME", value_parser = parse_name)]
    pub name: Option<String>,

    /// End the session after this many seconds.
    #[arg(long, value_name = "S", value_parser = values::positive_exact, allow_negative_numbers = true)]
    pub seconds: Option<f64>,

    /// How long to keep trying the port, at the start and after it goes away.
    #[arg(long, value_name = "S", default_value = "30", value_parser = parse_wait,
          allow_negative_numbers = true)]
    pub wait: f64,

    /// Sample rate (Hz) to record at when the board's hello was missed.
    #[arg(long, value_name = "HZ", value_parser = values::positive_exact, allow_negative_numbers = true)]
    pub rate: Option<f64>,

    /// Print JSON Lines (one object per event) instead of text.
    #[arg(long)]
    pub json: bool,

    /// Also show the session live in a browser, on 127.0.0.1 only.
    #[arg(long)]
    pub view: bool,

    /// Port of the live page (with --view); 0: any free port.
    #[arg(long, value_name = "N", default_value_t = 8750, requires = "view")]
    pub view_port: u16,

    /// Circuit file (as `plethwire frontend` reads) for advice that names the part to change.
    #[arg(long, value_name = "FILE")]
    pub circuit: Option<PathBuf>,

    /// The board's cap on its LED drive, share of full drive (its ExposureConfig::max_drive).
    #[arg(long, value_name = "SHARE", requires = "circuit", value_parser = parse_share)]
    pub max_drive: Option<f64>,
}

fn parse_share(s: &str) -> Result<f64, String> {
    match s.parse::<f64>() {
        Ok(v) if v > 0.0 && v <= 1.0 => Ok(v),
        _ => Err("expected a share of full drive, above 0 and at most 1, such as 0.5".into()),
    }
}

fn parse_name(s: &str) -> Result<String, String> {
    let ok = !s.is_empty() && s.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
    ok.then(|| s.to_string())
        .ok_or_else(|| "a record name holds only letters, digits and '_'".into())
}

fn parse_wait(s: &str) -> Result<f64, String> {
    match s.parse::<f64>() {
        Ok(v) if v.is_finite() && v >= 0.0 => Ok(v),
        _ => Err("expected a number of seconds, 0 or more".into()),
    }
}

/// Colour only for a terminal that has not asked for none.
fn want_colour(json: bool) -> bool {
    !json
        && io::stdout().is_terminal()
        && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
        && std::env::var("TERM").map_or(true, |t| t != "dumb")
}

/// Events to the recorder first, then the live page (which never fails),
/// then the screen and the live checks (their reports to the screen and
/// the page); remembers which failed.
struct Tee<'a, 'b> {
    capture: &'a mut Capture,
    view: Option<ViewSink>,
    screen: &'a mut Screen<'b>,
    checks: LiveChecks,
    screen_failed: bool,
}

impl Sink for Tee<'_, '_> {
    fn event(&mut self, event: &Event) -> io::Result<()> {
        self.capture.event(event)?;
        if let Some(v) = &mut self.view {
            v.event(event)?;
        }
        let report = self.checks.event(event);
        if let (Some(v), Some(r)) = (&self.view, &report) {
            v.set_checks(r);
        }
        self.screen
            .event(event)
            .and_then(|()| report.map_or(Ok(()), |r| self.screen.checks(&r)))
            .inspect_err(|_| self.screen_failed = true)
    }

    fn tick(&mut self, now: std::time::Instant, progress: &Progress) -> io::Result<()> {
        if let Some(v) = &mut self.view {
            v.tick(now, progress)?;
        }
        self.capture.tick(now, progress)
    }
}

impl ListenArgs {
    /// The live checks, through the circuit file when one is given.
    fn live_checks(&self) -> Result<LiveChecks, Failure> {
        let Some(path) = &self.circuit else {
            return Ok(LiveChecks::new());
        };
        let circuit = Draft::load(path)
            .and_then(|d| d.resolve())
            .map_err(Failure::refused)?;
        Ok(LiveChecks::with_circuit(circuit, self.max_drive))
    }

    fn settings(&self) -> Settings {
        Settings {
            retry_every: Duration::from_millis(500),
            give_up_after: Duration::from_secs_f64(self.wait),
            duration: self.seconds.map(Duration::from_secs_f64),
        }
    }

    /// Run the command.
    pub fn run(&self, out: &mut dyn Write) -> Result<(), Failure> {
        let started = SystemTime::now();
        let name = self.name.clone().unwrap_or_else(|| record_name(started));
        let dir = &self.out;
        std::fs::create_dir_all(dir).map_err(|e| {
            Failure::refused(format!("{}: cannot create the folder: {e}", dir.display()))
        })?;
        if let Some(f) = session_files(dir, &name, DEFAULT_ANNOTATOR)
            .into_iter()
            .find(|f| f.exists())
        {
            return Err(Failure::refused(format!(
                "{} exists; choose another --name",
                f.display()
            )));
        }
        let view = self.start_view()?;
        let checks = self.live_checks()?;
        let stop = crate::stop::install("files could not be finished")?;
        let settings = self.settings();
        let setup = Setup {
            record: name.clone(),
            port: self.port.clone(),
            baud: self.baud,
            started,
        };
        let mut screen = Screen::new(out, self.json, want_colour(self.json), &settings);
        screen.start(&setup, dir).map_err(Failure::output)?;
        let mut capture = Capture::new(Recorder::new(dir, &name, DEFAULT_ANNOTATOR), setup, dir);
        capture
            .comment(&format!(
                "plethwire listen on {} at {} baud; PLETH is raw, PLETH filtered the board's band-pass",
                self.port, self.baud
            ))
            .map_err(|e| Failure::refused(format!("cannot record: {e}")))?;
        let mut session = Session::new(self.rate);
        let mut connector = SerialConnector {
            path: self.port.clone(),
            baud: self.baud,
        };
        let mut tee = Tee {
            capture: &mut capture,
            view: view.as_ref().map(View::sink),
            screen: &mut screen,
            checks,
            screen_failed: false,
        };
        let result = run(&mut connector, &mut session, &mut tee, &settings, stop);
        let screen_failed = tee.screen_failed;
        let (ended_by, failure) = match result {
            Ok(Ending::Stopped) => ("stopped", None),
            Ok(Ending::TimeUp) => ("time_up", None),
            Ok(Ending::PortGone) => ("port_gone", None),
            Err(ListenError::Sink(e)) if screen_failed => ("failed", Some(Failure::output(e))),
            Err(ListenError::Sink(e)) => (
                "failed",
                Some(Failure::refused(format!("cannot record: {e}"))),
            ),
            Err(e) => return Err(self.never_opened(e)),
        };
        let (_, summary) = capture
            .finish(&session.progress(), ended_by)
            .map_err(|e| Failure::refused(format!("cannot finish the recording: {e}")))?;
        if let Some(f) = failure {
            return Err(f);
        }
        screen.end(&summary).map_err(Failure::output)
    }

    /// The live page, serving before the port is opened.
    fn start_view(&self) -> Result<Option<View>, Failure> {
        if !self.view {
            return Ok(None);
        }
        let view = View::start(self.view_port).map_err(|e| match e {
            ViewError::InUse { .. } => Failure::refused(format!(
                "live view: {e}; choose another --view-port (0: any free port)"
            )),
            e => Failure::refused(format!("live view: {e}")),
        })?;
        eprintln!("live view: {}", view.url());
        Ok(Some(view))
    }

    fn never_opened(&self, e: ListenError) -> Failure {
        let port = &self.port;
        Failure::refused(match e {
            ListenError::Refused(e) => format!("cannot open {port}: {e}"),
            ListenError::NeverOpened {
                waited,
                cause: NeverCause::GaveUp(e),
            } => format!(
                "{port} did not appear within {:.1} s ({e}); nothing recorded",
                waited.as_secs_f64()
            ),
            ListenError::NeverOpened {
                cause: NeverCause::Ended(Ending::TimeUp),
                ..
            } => format!("{port} did not appear before --seconds ran out; nothing recorded"),
            ListenError::NeverOpened { .. } => {
                format!("stopped before {port} could be opened; nothing recorded")
            }
            ListenError::Sink(e) => format!("cannot record: {e}"),
        })
    }
}
