//! Byte layout of the frames (see docs/wire-format.md).

use super::{
    cobs, crc::crc32, EncodeError, Frame, Hello, Message, SampleBlock, Status, FORMAT_VERSION,
    MAX_FRAME, MAX_RAW_FRAME, SAMPLES_PER_BLOCK,
};
use crate::pipeline::{BeatEvent, BeatFlags, DetectorKind, Options, SignalState, StateEvent};

/// Appends little-endian fields to a fixed buffer.
struct Writer<'a> {
    buf: &'a mut [u8],
    at: usize,
}

impl Writer<'_> {
    fn bytes(&mut self, b: &[u8]) {
        self.buf[self.at..self.at + b.len()].copy_from_slice(b);
        self.at += b.len();
    }
    fn u8(&mut self, v: u8) {
        self.bytes(&[v]);
    }
    fn u16(&mut self, v: u16) {
        self.bytes(&v.to_le_bytes());
    }
    fn u32(&mut self, v: u32) {
        self.bytes(&v.to_le_bytes());
    }
    fn u64(&mut self, v: u64) {
        self.bytes(&v.to_le_bytes());
    }
    fn f32(&mut self, v: f32) {
        self.u32(v.to_bits());
    }
}

/// Reads little-endian fields; any read past the end fails.
struct Reader<'a> {
    buf: &'a [u8],
    at: usize,
}

impl Reader<'_> {
    fn take<const N: usize>(&mut self) -> Option<[u8; N]> {
        let b = self.buf.get(self.at..self.at + N)?;
        self.at += N;
        b.try_into().ok()
    }
    fn u8(&mut self) -> Option<u8> {
        self.take::<1>().map(|b| b[0])
    }
    fn u16(&mut self) -> Option<u16> {
        self.take().map(u16::from_le_bytes)
    }
    fn u32(&mut self) -> Option<u32> {
        self.take().map(u32::from_le_bytes)
    }
    fn u64(&mut self) -> Option<u64> {
        self.take().map(u64::from_le_bytes)
    }
    fn f32(&mut self) -> Option<f32> {
        self.u32().map(f32::from_bits)
    }
    fn done(&self) -> bool {
        self.at == self.buf.len()
    }
}

fn state_code(s: SignalState) -> u8 {
    match s {
        SignalState::Acquiring => 0,
        SignalState::Good => 1,
        SignalState::NoSignal => 2,
        SignalState::Saturated => 3,
        SignalState::Noisy => 4,
    }
}

fn state_from(c: u8) -> Option<SignalState> {
    Some(match c {
        0 => SignalState::Acquiring,
        1 => SignalState::Good,
        2 => SignalState::NoSignal,
        3 => SignalState::Saturated,
        4 => SignalState::Noisy,
        _ => return None,
    })
}

fn payload(message: &Message, w: &mut Writer<'_>) -> Result<(), EncodeError> {
    match message {
        Message::Hello(h) => {
            w.bytes(&h.firmware_version);
            w.f32(h.sample_rate_hz);
            let o = &h.options;
            w.u8(o.detector.wire_code());
            w.f32(o.band_low_hz);
            w.f32(o.band_high_hz);
            w.f32(o.hr_window_s);
            let (flag, (lo, hi)) = match o.rails {
                Some(r) => (1, r),
                None => (0, (0.0, 0.0)),
            };
            w.u8(flag);
            w.f32(lo);
            w.f32(hi);
            w.u8(h.adc_bits);
        }
        Message::Beat(b) => {
            let present = u8::from(b.onset_index.is_some())
                | u8::from(b.ibi_ms.is_some()) << 1
                | u8::from(b.hr_bpm.is_some()) << 2
                | u8::from(b.hr_smoothed_bpm.is_some()) << 3;
            w.u8(present);
            w.u64(b.peak_index);
            w.u64(b.onset_index.unwrap_or(0));
            w.u64(b.emitted_at);
            w.f32(b.ibi_ms.unwrap_or(0.0));
            w.f32(b.hr_bpm.unwrap_or(0.0));
            w.f32(b.hr_smoothed_bpm.unwrap_or(0.0));
            w.f32(b.amplitude);
            w.f32(b.quality);
            w.u8(b.flags.0);
        }
        Message::State(s) => {
            w.u8(state_code(s.state));
            w.u8(state_code(s.previous));
            w.u64(s.at);
        }
        Message::Status(s) => {
            w.u16(s.led_drive);
            w.f32(s.dc_level);
            w.f32(s.ambient_level);
            w.u8(s.measured);
            w.u32(s.clipped_samples);
            w.u32(s.adc_overruns);
            w.u32(s.dropped_frames);
            w.u32(s.rejected_samples);
        }
        Message::Samples(s) => {
            let n = s.count as usize;
            if n == 0 || n > SAMPLES_PER_BLOCK {
                return Err(EncodeError::BadSampleCount);
            }
            if s.stride == 0 {
                return Err(EncodeError::BadStride);
            }
            w.u64(s.first_index);
            w.u8(s.count);
            w.u8(s.stride);
            for i in 0..n {
                w.f32(s.raw[i]);
                w.f32(s.filtered[i]);
            }
        }
    }
    Ok(())
}

/// Encode one frame with sequence number `seq` into `out`: header, payload,
/// CRC-32, COBS, delimiter. Returns the bytes written.
pub fn encode_frame(
    seq: u16,
    message: &Message,
    out: &mut [u8; MAX_FRAME],
) -> Result<usize, EncodeError> {
    let mut raw = [0u8; MAX_RAW_FRAME];
    let mut w = Writer {
        buf: &mut raw,
        at: 0,
    };
    w.u8(FORMAT_VERSION);
    w.u8(message.kind());
    w.u16(seq);
    payload(message, &mut w)?;
    let body = w.at;
    let crc = crc32(&raw[..body]);
    raw[body..body + 4].copy_from_slice(&crc.to_le_bytes());
    let n = cobs::encode(&raw[..body + 4], &mut out[..MAX_FRAME - 1]).unwrap_or(0); // sized by MAX_FRAME, cannot fail
    out[n] = 0;
    Ok(n + 1)
}

/// Why a frame was refused, after COBS decoding.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Refusal {
    /// Shorter than header and CRC.
    TooShort,
    /// The CRC does not match.
    Crc,
    /// A format version this decoder does not know (the frame's first
    /// byte; [`super::DecodeStats`] keeps the last one seen).
    Version,
    /// A message type this decoder does not know.
    Kind,
    /// The payload's length or values do not fit its type.
    Payload,
}

fn decode_payload(kind: u8, r: &mut Reader<'_>) -> Option<Message> {
    let m = match kind {
        1 => {
            let firmware_version = r.take::<3>()?;
            let sample_rate_hz = r.f32()?;
            let detector = DetectorKind::from_wire_code(r.u8()?)?;
            let band_low_hz = r.f32()?;
            let band_high_hz = r.f32()?;
            let hr_window_s = r.f32()?;
            let flag = r.u8()?;
            let (lo, hi) = (r.f32()?, r.f32()?);
            let rails = match flag {
                0 => None,
                1 => Some((lo, hi)),
                _ => return None,
            };
            let adc_bits = r.u8()?;
            Message::Hello(Hello {
                firmware_version,
                sample_rate_hz,
                adc_bits,
                options: Options {
                    detector,
                    band_low_hz,
                    band_high_hz,
                    rails,
                    hr_window_s,
                },
            })
        }
        2 => {
            let present = r.u8()?;
            if present & !0x0F != 0 {
                return None;
            }
            let has = |bit: u8| present & (1 << bit) != 0;
            let peak_index = r.u64()?;
            let onset = r.u64()?;
            let emitted_at = r.u64()?;
            let (ibi, hr, hrs) = (r.f32()?, r.f32()?, r.f32()?);
            let amplitude = r.f32()?;
            let quality = r.f32()?;
            let flags = BeatFlags(r.u8()?);
            Message::Beat(BeatEvent {
                peak_index,
                onset_index: has(0).then_some(onset),
                emitted_at,
                ibi_ms: has(1).then_some(ibi),
                hr_bpm: has(2).then_some(hr),
                hr_smoothed_bpm: has(3).then_some(hrs),
                amplitude,
                quality,
                flags,
            })
        }
        3 => Message::State(StateEvent {
            state: state_from(r.u8()?)?,
            previous: state_from(r.u8()?)?,
            at: r.u64()?,
        }),
        4 => {
            let led_drive = r.u16()?;
            let dc_level = r.f32()?;
            let ambient_level = r.f32()?;
            let measured = r.u8()?;
            if measured & !Status::MEASURED_ALL != 0 {
                return None;
            }
            Message::Status(Status {
                led_drive,
                dc_level,
                ambient_level,
                measured,
                clipped_samples: r.u32()?,
                adc_overruns: r.u32()?,
                dropped_frames: r.u32()?,
                rejected_samples: r.u32()?,
            })
        }
        5 => {
            let first_index = r.u64()?;
            let count = r.u8()?;
            let stride = r.u8()?;
            let n = count as usize;
            if n == 0 || n > SAMPLES_PER_BLOCK || stride == 0 {
                return None;
            }
            let mut raw = [0.0; SAMPLES_PER_BLOCK];
            let mut filtered = [0.0; SAMPLES_PER_BLOCK];
            for i in 0..n {
                raw[i] = r.f32()?;
                filtered[i] = r.f32()?;
            }
            Message::Samples(SampleBlock {
                first_index,
                count,
                stride,
                raw,
                filtered,
            })
        }
        _ => return None,
    };
    Some(m)
}

/// Decode one frame from its bytes after COBS decoding (header, payload,
/// CRC).
pub fn decode_frame(raw: &[u8]) -> Result<Frame, Refusal> {
    if raw.len() < 8 {
        return Err(Refusal::TooShort);
    }
    let (body, tail) = raw.split_at(raw.len() - 4);
    let crc = u32::from_le_bytes([tail[0], tail[1], tail[2], tail[3]]);
    if crc32(body) != crc {
        return Err(Refusal::Crc);
    }
    if body[0] != FORMAT_VERSION {
        return Err(Refusal::Version);
    }
    let kind = body[1];
    if !(1..=5).contains(&kind) {
        return Err(Refusal::Kind);
    }
    let seq = u16::from_le_bytes([body[2], body[3]]);
    let mut r = Reader {
        buf: &body[4..],
        at: 0,
    };
    let message = decode_payload(kind, &mut r).ok_or(Refusal::Payload)?;
    if !r.done() {
        return Err(Refusal::Payload);
    }
    Ok(Frame { seq, message })
}
