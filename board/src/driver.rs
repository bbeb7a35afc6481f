//! The board driver: per timer tick one ambient-cancelled sample into the
//! beat pipeline, exposure kept in range, and the results queued as frames.
//!
//! Frames, in `plethwire_dsp::wire`'s format: `Hello` at [`Board::start`];
//! `State` and `Beat` whenever the pipeline reports one, then `Samples`
//! when a sample's push fills a block of 16 (every input at up to 500 Hz,
//! every `wire::sample_stride`-th above: raw the value pushed, filtered
//! the band-passed value); `Status` every [`BoardConfig::status_period_s`]
//! and after every change of LED drive.
//!
//! A sample that could not be taken (a missed tick, a failed conversion)
//! still takes its place in the pipeline, as a non-finite value: the
//! pipeline then holds its last good value and flags the beats around it,
//! and its sample indices keep counting the timer's deadlines, so every
//! index and interval on the wire stays true time.

use embedded_hal::delay::DelayNs;
use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;
use plethwire_dsp::pipeline::PipelineError;
use plethwire_dsp::pipeline::{BandSections, BeatEvent, Config, Options, Pipeline, StateEvent};
use plethwire_dsp::wire::{sample_stride, Encoder, Hello, Message, SampleTap, Status, MAX_FRAME};

use crate::ambient::{AmbientCanceller, AmbientSample, SampleError, DEFAULT_SETTLE_NS};
use crate::exposure::{DriveChange, Exposure, ExposureConfig};
use crate::queue::FrameQueue;
use crate::schedule::{Due, Schedule};
use crate::PhotoSampler;

/// Default seconds between periodic status frames.
pub const STATUS_PERIOD_S: u32 = 2;
/// Default transmit queue, bytes: two of the largest frames (a sample
/// block, 147 bytes) and a beat (56), or 33 ms of a 115200 baud line. The
/// line drains a block, 13 ms of it, long before the next is due (64 ms at
/// 250 Hz, 32 ms at 500 Hz and above); over a minute of a simulated finger
/// at 250 Hz the queue holds at most 185 bytes (tests/simulated_run.rs).
/// 384 rather than 512 keeps the real boards within 12 KiB of static RAM;
/// the cost is 11 ms less of a stalled line before frames are dropped.
pub const DEFAULT_QUEUE_BYTES: usize = 384;

/// How a board samples and reports.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BoardConfig {
    /// Samples per second (25 to 1000, whole hertz so the timer paces
    /// them exactly).
    pub sample_rate_hz: u32,
    /// Counts per second of the timer whose counts [`Board::tick`] gets.
    pub tick_hz: u64,
    /// ADC full scale, counts (4095 for 12 bits).
    pub adc_full_scale: u16,
    /// Settle time after each switch of the LED, ns.
    pub settle_ns: u32,
    /// Negate `on − off` before the pipeline. Blood absorbs the LED's
    /// light, so the reading dips as each pulse arrives, and the pipeline
    /// looks for peaks; leave `false` only for a front end that inverts.
    pub invert: bool,
    /// Seconds between periodic status frames (at least 1).
    pub status_period_s: u32,
    /// Reported in `Hello`.
    pub firmware_version: [u8; 3],
    /// The pipeline's options. [`BoardConfig::new`] sets its rails to
    /// ±full scale, which `on − off` cannot pass: the board counts
    /// readings at the ADC's rails itself, and the pipeline's search for
    /// flat tops (meant for recordings of unknown range) would take the
    /// quantisation steps of a small pulse's crest for clipping.
    pub options: Options,
    /// The exposure controller's tuning.
    pub exposure: ExposureConfig,
}

impl BoardConfig {
    /// Defaults for `sample_rate_hz` samples a second from a 12-bit ADC,
    /// paced by a timer counting `tick_hz`.
    pub fn new(sample_rate_hz: u32, tick_hz: u64) -> Self {
        let full_scale = 4095;
        let rail = f32::from(full_scale);
        Self {
            sample_rate_hz,
            tick_hz,
            adc_full_scale: full_scale,
            settle_ns: DEFAULT_SETTLE_NS,
            invert: true,
            status_period_s: STATUS_PERIOD_S,
            firmware_version: [0, 0, 0],
            options: Options {
                rails: Some((-rail, rail)),
                ..Options::default()
            },
            exposure: ExposureConfig::default(),
        }
    }
}

/// Bits of an ADC whose full scale is `full_scale` counts (4095: 12).
fn adc_bits(full_scale: u16) -> u8 {
    (16 - full_scale.leading_zeros()) as u8
}

/// The pipeline's configuration for a board's.
fn pipeline_config(config: &BoardConfig) -> Config {
    Config {
        sample_rate_hz: config.sample_rate_hz as f32,
        options: config.options,
    }
}

/// A pipeline's refusal as a board's: a rate it refuses is the board's
/// [`BoardError::Rate`].
fn pipeline_error<E>(e: PipelineError) -> BoardError<E> {
    match e {
        PipelineError::SampleRate => BoardError::Rate,
        e => BoardError::Pipeline(e),
    }
}

/// The peripherals a board drives, behind embedded-hal traits.
#[derive(Debug)]
pub struct Hardware<L, P, A, D> {
    /// Switches the LED on (high) and off (low) for ambient cancelling.
    pub led: L,
    /// Sets the LED's drive (its brightness while on).
    pub drive: P,
    /// Reads the photodetector's front end.
    pub adc: A,
    /// Waits for the front end to settle after a switch.
    pub delay: D,
}

/// Why a board could not be set up.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum BoardError<E> {
    /// The sample rate is outside what the pipeline takes or the timer
    /// can pace.
    Rate,
    /// The pipeline refused its configuration.
    Pipeline(PipelineError),
    /// The initial LED drive could not be set.
    Drive(E),
}

/// What the board has counted since it started.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Counters {
    /// Samples taken (placeholders for lost ones not included).
    pub samples: u64,
    /// Samples with a reading at an ADC rail.
    pub clipped: u64,
    /// Conversions that failed.
    pub adc_errors: u64,
    /// Times the LED could not be switched.
    pub led_errors: u64,
    /// Drive changes the PWM refused.
    pub drive_errors: u64,
    /// Deadlines that passed without a sample.
    pub missed_ticks: u64,
    /// Messages the encoder refused (none are expected).
    pub encode_errors: u64,
}

/// What one [`Board::tick`] did.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct TickReport {
    /// The deadline served, `None` when none was due yet.
    pub due: Option<Due>,
    /// The readings, when the sample was taken.
    pub sample: Option<AmbientSample>,
    /// The drive change made, if any.
    pub drive: Option<DriveChange>,
    /// The last beat the pipeline reported during this tick.
    pub beat: Option<BeatEvent>,
    /// The last state change the pipeline reported during this tick.
    pub state: Option<StateEvent>,
}

/// The board: hardware, pipeline, exposure, schedule and transmit queue.
pub struct Board<L, P, A, D, const Q: usize = DEFAULT_QUEUE_BYTES> {
    hw: Hardware<L, P, A, D>,
    pipeline: Pipeline,
    tap: SampleTap,
    canceller: AmbientCanceller,
    exposure: Exposure,
    schedule: Schedule,
    queue: FrameQueue<Q>,
    encoder: Encoder,
    hello: Hello,
    full_scale: u16,
    invert: bool,
    status_every: u64,
    since_status: u64,
    ambient: u16,
    counters: Counters,
}

impl<L, P, A, D, const Q: usize> Board<L, P, A, D, Q>
where
    L: OutputPin,
    P: SetDutyCycle,
    A: PhotoSampler,
    D: DelayNs,
{
    /// Set up: design the pipeline's filters for `config`, then as
    /// [`Self::with_band`].
    pub fn new(
        config: BoardConfig,
        hw: Hardware<L, P, A, D>,
    ) -> Result<Self, BoardError<P::Error>> {
        let band = BandSections::design(&pipeline_config(&config)).map_err(pipeline_error)?;
        Self::with_band(config, &band, hw)
    }

    /// Set up with the pipeline's filters designed already (by the
    /// board's build script, for its fixed rate: no filter design is
    /// linked into a board that calls only this), and set the initial LED
    /// drive. `band` must be designed for `config`'s rate and band edges
    /// ([`PipelineError::BandMismatch`] otherwise).
    pub fn with_band(
        config: BoardConfig,
        band: &BandSections,
        mut hw: Hardware<L, P, A, D>,
    ) -> Result<Self, BoardError<P::Error>> {
        let rate = config.sample_rate_hz as f32;
        let schedule =
            Schedule::new(config.tick_hz, config.sample_rate_hz).ok_or(BoardError::Rate)?;
        let pipeline =
            Pipeline::with_band(pipeline_config(&config), band).map_err(pipeline_error)?;
        let exposure = Exposure::new(
            &config.exposure,
            config.adc_full_scale,
            rate,
            hw.drive.max_duty_cycle(),
        );
        hw.drive
            .set_duty_cycle(exposure.duty())
            .map_err(BoardError::Drive)?;
        Ok(Self {
            hw,
            pipeline,
            tap: SampleTap::new(sample_stride(rate)),
            canceller: AmbientCanceller::new(config.settle_ns),
            exposure,
            schedule,
            queue: FrameQueue::new(),
            encoder: Encoder::new(),
            hello: Hello {
                firmware_version: config.firmware_version,
                sample_rate_hz: rate,
                options: config.options,
                adc_bits: adc_bits(config.adc_full_scale),
            },
            full_scale: config.adc_full_scale,
            invert: config.invert,
            status_every: u64::from(config.status_period_s.max(1))
                * u64::from(config.sample_rate_hz),
            since_status: 0,
            ambient: 0,
            counters: Counters::default(),
        })
    }

    /// Begin at timer count `now`: queue `Hello` and a first `Status`; the
    /// first sample is due at once.
    pub fn start(&mut self, now: u64) {
        self.schedule.start(now);
        self.send(&Message::Hello(self.hello));
        self.send(&Message::Status(self.status()));
    }

    /// Timer count at which the next sample is due.
    pub fn deadline(&self) -> u64 {
        self.schedule.deadline()
    }

    /// The timer woke at count `now`: take the sample that is due (if one
    /// is), run it through the pipeline and queue what it produced.
    pub fn tick(&mut self, now: u64) -> TickReport {
        let mut report = TickReport::default();
        let Some(due) = self.schedule.on_tick(now) else {
            return report;
        };
        report.due = Some(due);
        self.counters.missed_ticks += due.missed;
        for _ in 0..due.missed {
            self.feed(f32::NAN, &mut report);
        }
        let hw = &mut self.hw;
        match self
            .canceller
            .sample(&mut hw.led, &mut hw.adc, &mut hw.delay)
        {
            Ok(s) => {
                self.counters.samples += 1;
                self.ambient = s.ambient();
                self.exposure.observe_ambient(s.off);
                if s.clipped(self.full_scale) {
                    self.counters.clipped += 1;
                }
                report.sample = Some(s);
                report.drive = self.steer(s.on);
                let v = s.value() as f32;
                self.feed(if self.invert { -v } else { v }, &mut report);
            }
            Err(e) => {
                match e {
                    SampleError::Adc(_) => self.counters.adc_errors += 1,
                    SampleError::Led(_) => self.counters.led_errors += 1,
                }
                self.feed(f32::NAN, &mut report);
            }
        }
        self.since_status += 1 + due.missed;
        if self.since_status >= self.status_every {
            self.since_status = 0;
            self.send(&Message::Status(self.status()));
        }
        report
    }

    /// Give the exposure controller the LED-on reading; apply and report
    /// the change it asks for.
    fn steer(&mut self, on: u16) -> Option<DriveChange> {
        let change = self.exposure.observe(on)?;
        if self.hw.drive.set_duty_cycle(change.to).is_err() {
            self.exposure.revert(&change);
            self.counters.drive_errors += 1;
            return None;
        }
        self.send(&Message::Status(self.status()));
        Some(change)
    }

    fn feed(&mut self, x: f32, report: &mut TickReport) {
        let out = self.pipeline.push(x);
        if let Some(s) = out.state {
            self.send(&Message::State(s));
            report.state = Some(s);
        }
        if let Some(b) = out.beat {
            self.send(&Message::Beat(b));
            report.beat = Some(b);
        }
        if let Some(block) = self.tap.push(x, &self.pipeline) {
            self.send(&Message::Samples(block));
        }
    }

    /// Encode and queue; a full queue drops the frame, but its sequence
    /// number is spent, so the host counts it as lost.
    fn send(&mut self, message: &Message) {
        let mut frame = [0u8; MAX_FRAME];
        match self.encoder.encode(message, &mut frame) {
            Ok(bytes) => {
                self.queue.push_frame(bytes);
            }
            Err(_) => self.counters.encode_errors += 1,
        }
    }

    /// The health counters as the wire format sends them. `adc_overruns`
    /// counts every lost sample: missed ticks and failed conversions. The
    /// DC and ambient levels are marked measured from the first reading
    /// on.
    pub fn status(&self) -> Status {
        let c = &self.counters;
        let u32_of = |v: u64| u32::try_from(v).unwrap_or(u32::MAX);
        let e = &self.exposure;
        let ambient = e.ambient_level();
        let measured = Status::MEASURED_LED_DRIVE
            | if e.dc_measured() {
                Status::MEASURED_DC_LEVEL
            } else {
                0
            }
            | if ambient.is_some() {
                Status::MEASURED_AMBIENT_LEVEL
            } else {
                0
            };
        Status {
            led_drive: e.drive_u16(),
            dc_level: e.dc_level(),
            ambient_level: ambient.unwrap_or(0.0),
            measured,
            clipped_samples: u32_of(c.clipped),
            adc_overruns: u32_of(c.missed_ticks + c.adc_errors + c.led_errors),
            dropped_frames: self.queue.dropped(),
            rejected_samples: u32_of(self.pipeline.rejected_samples()),
        }
    }

    /// The transmit queue: the UART side takes its bytes from here.
    pub fn queue_mut(&mut self) -> &mut FrameQueue<Q> {
        &mut self.queue
    }

    /// The transmit queue, to look at.
    pub fn queue(&self) -> &FrameQueue<Q> {
        &self.queue
    }

    /// What has been counted.
    pub fn counters(&self) -> Counters {
        self.counters
    }

    /// The last LED-off reading: the ambient light level, ADC counts (its
    /// slow average is [`Exposure::ambient_level`]).
    pub fn ambient(&self) -> u16 {
        self.ambient
    }

    /// The exposure controller.
    pub fn exposure(&self) -> &Exposure {
        &self.exposure
    }

    /// The pipeline.
    pub fn pipeline(&self) -> &Pipeline {
        &self.pipeline
    }

    /// The schedule.
    pub fn schedule(&self) -> &Schedule {
        &self.schedule
    }

    /// Give the hardware back.
    pub fn into_hardware(self) -> Hardware<L, P, A, D> {
        self.hw
    }
}
