//! The wire format between a board and the host: framed messages with a
//! format version, a sequence number and a CRC-32, COBS-framed with 0x00 as
//! the delimiter. Our own compact little-endian encoding, documented byte by
//! byte in `docs/wire-format.md`.
//!
//! ```
//! use plethwire_dsp::wire::{Decoder, Encoder, Message, Status, MAX_FRAME};
//! let mut enc = Encoder::new();
//! let mut buf = [0u8; MAX_FRAME];
//! let status = Status { led_drive: 30_000, dc_level: 0.52, ambient_level: 0.01,
//!     measured: Status::MEASURED_ALL, clipped_samples: 0, adc_overruns: 0,
//!     dropped_frames: 0, rejected_samples: 0 };
//! let bytes = enc.encode(&Message::Status(status), &mut buf).unwrap().to_vec();
//! let mut dec = Decoder::new();
//! let frame = bytes.iter().find_map(|&b| dec.push(b)).unwrap().unwrap();
//! assert_eq!(frame.message, Message::Status(status));
//! ```

mod cobs;
mod codec;
mod crc;
mod decoder;
mod tap;

pub use cobs::{decode_in_place as cobs_decode, encode as cobs_encode, max_encoded_len};
pub use codec::{decode_frame, encode_frame, Refusal};
pub use crc::crc32;
pub use decoder::{DecodeStats, Decoder, FrameError};
pub use tap::{sample_stride, SampleTap, FULL_RATE_LIMIT_HZ};

use crate::pipeline::{BeatEvent, Options, StateEvent};

/// Version of this format, the first byte of every frame.
pub const FORMAT_VERSION: u8 = 2;
/// Samples carried by one [`SampleBlock`].
pub const SAMPLES_PER_BLOCK: usize = 16;
/// Bytes of the largest frame before COBS: header 4, payload (a full
/// sample block), CRC 4.
pub const MAX_RAW_FRAME: usize = 4 + 10 + 8 * SAMPLES_PER_BLOCK + 4;
/// Bytes of the largest frame on the wire, COBS overhead and delimiter
/// included; size transmit buffers with it.
pub const MAX_FRAME: usize = max_encoded_len(MAX_RAW_FRAME) + 1;

/// Sent once at start (and on request): who is talking, and how the
/// pipeline is set up.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Hello {
    /// Firmware version, major.minor.patch.
    pub firmware_version: [u8; 3],
    /// Input sample rate, Hz.
    pub sample_rate_hz: f32,
    /// The pipeline's options.
    pub options: Options,
    /// Bits of the board's ADC; 0 when the samples come from no real ADC
    /// (the emulated board fed a recording).
    pub adc_bits: u8,
}

/// The board's health, sent periodically and whenever the LED drive
/// changes.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Status {
    /// LED drive, PWM duty in 1/65535 of full.
    pub led_drive: u16,
    /// DC level of the LED-on reading, as a fraction of ADC full scale.
    pub dc_level: f32,
    /// The LED-off (ambient) reading's slow average, as a fraction of ADC
    /// full scale.
    pub ambient_level: f32,
    /// Which of `led_drive`, `dc_level` and `ambient_level` were measured
    /// ([`Status::MEASURED_LED_DRIVE`] and its siblings); a field whose bit
    /// is clear is sent as 0 and means "not measured".
    pub measured: u8,
    /// Samples at the ADC rails so far.
    pub clipped_samples: u32,
    /// Sample ticks missed or ADC reads failed so far.
    pub adc_overruns: u32,
    /// Frames not sent because the transmit queue was full, so far.
    pub dropped_frames: u32,
    /// Non-finite samples the pipeline replaced so far.
    pub rejected_samples: u32,
}

impl Status {
    /// `measured` bit 0: `led_drive` is the board's.
    pub const MEASURED_LED_DRIVE: u8 = 1 << 0;
    /// `measured` bit 1: `dc_level` was measured.
    pub const MEASURED_DC_LEVEL: u8 = 1 << 1;
    /// `measured` bit 2: `ambient_level` was measured.
    pub const MEASURED_AMBIENT_LEVEL: u8 = 1 << 2;
    /// Every `measured` bit this version defines; others must be 0.
    pub const MEASURED_ALL: u8 = 0b111;

    /// The LED drive, if measured.
    pub fn led_drive_measured(&self) -> Option<u16> {
        (self.measured & Self::MEASURED_LED_DRIVE != 0).then_some(self.led_drive)
    }

    /// The DC level, if measured.
    pub fn dc_level_measured(&self) -> Option<f32> {
        (self.measured & Self::MEASURED_DC_LEVEL != 0).then_some(self.dc_level)
    }

    /// The ambient level, if measured.
    pub fn ambient_level_measured(&self) -> Option<f32> {
        (self.measured & Self::MEASURED_AMBIENT_LEVEL != 0).then_some(self.ambient_level)
    }
}

/// A run of input samples taken every `stride`-th sample, raw and
/// band-passed, for plotting and bring-up checks.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SampleBlock {
    /// Input sample index of the first sample.
    pub first_index: u64,
    /// Samples used (1 to [`SAMPLES_PER_BLOCK`]).
    pub count: u8,
    /// Input samples from one block sample to the next (at least 1):
    /// sample `i` is input sample `first_index + i * stride`.
    pub stride: u8,
    /// The pipeline's input at each sample, exactly as pushed (on a real
    /// board the ambient-cancelled, inverted reading in ADC counts).
    pub raw: [f32; SAMPLES_PER_BLOCK],
    /// The band-passed value the detector saw most recently at each
    /// sample (it runs at the detector's rate, so it is held between
    /// detector samples).
    pub filtered: [f32; SAMPLES_PER_BLOCK],
}

/// Everything that travels.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Message {
    /// Start of a session.
    Hello(Hello),
    /// A beat, every field of the pipeline's event.
    Beat(BeatEvent),
    /// A change of signal state.
    State(StateEvent),
    /// Health counters.
    Status(Status),
    /// Samples for plotting.
    Samples(SampleBlock),
}

impl Message {
    /// The message's type byte (second byte of a frame).
    pub fn kind(&self) -> u8 {
        match self {
            Self::Hello(_) => 1,
            Self::Beat(_) => 2,
            Self::State(_) => 3,
            Self::Status(_) => 4,
            Self::Samples(_) => 5,
        }
    }
}

/// A decoded frame.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Frame {
    /// Sequence number (wraps at 65536).
    pub seq: u16,
    /// The message.
    pub message: Message,
}

/// Why a message could not be encoded.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum EncodeError {
    /// A sample block's count is 0 or above [`SAMPLES_PER_BLOCK`].
    BadSampleCount,
    /// A sample block's stride is 0.
    BadStride,
}

impl core::fmt::Display for EncodeError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::BadSampleCount => "a sample block must hold 1 to 16 samples",
            Self::BadStride => "a sample block's stride must be at least 1",
        })
    }
}

/// Numbers frames and encodes them.
#[derive(Clone, Copy, Debug, Default)]
pub struct Encoder {
    seq: u16,
}

impl Encoder {
    /// Sequence numbers start at 0.
    pub const fn new() -> Self {
        Self { seq: 0 }
    }

    /// The sequence number the next frame will carry.
    pub fn next_seq(&self) -> u16 {
        self.seq
    }

    /// Encode `message` as the next frame into `buf`; returns the bytes to
    /// send, the trailing 0x00 delimiter included.
    pub fn encode<'a>(
        &mut self,
        message: &Message,
        buf: &'a mut [u8; MAX_FRAME],
    ) -> Result<&'a [u8], EncodeError> {
        let n = encode_frame(self.seq, message, buf)?;
        self.seq = self.seq.wrapping_add(1);
        Ok(&buf[..n])
    }
}
