//! A streaming decoder: bytes in, frames out, resynchronising on every
//! 0x00 and counting what it had to drop.

use super::codec::{decode_frame, Refusal};
use super::{cobs, Frame, MAX_FRAME};

/// Why bytes between two delimiters did not make a frame.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum FrameError {
    /// Longer than any frame: discarded up to the next delimiter.
    Overlong,
    /// Not valid COBS.
    Stuffing,
    /// Decoded, but refused (length, CRC, version, type, payload).
    Refused(Refusal),
}

/// What the decoder has seen so far.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DecodeStats {
    /// Frames decoded.
    pub frames: u64,
    /// Damaged frames (every [`FrameError`]).
    pub damaged: u64,
    /// Of those, CRC mismatches.
    pub crc_errors: u64,
    /// Bytes thrown away with damaged frames.
    pub dropped_bytes: u64,
    /// Frames missing between good frames, from their sequence numbers.
    pub lost_frames: u64,
    /// Every byte fed, delimiters and idle line included.
    pub bytes: u64,
    /// Of the damaged frames, those with an intact CRC but another format
    /// version: a board whose firmware speaks another version.
    pub foreign_version: u64,
    /// The format version of the last such frame.
    pub last_foreign_version: Option<u8>,
}

/// Streaming frame decoder with a fixed buffer.
#[derive(Clone, Debug)]
pub struct Decoder {
    buf: [u8; MAX_FRAME],
    len: usize,
    overlong: bool,
    last_seq: Option<u16>,
    stats: DecodeStats,
}

impl Default for Decoder {
    fn default() -> Self {
        Self::new()
    }
}

impl Decoder {
    /// Empty, in sync (the first delimiter ends the first frame).
    pub const fn new() -> Self {
        Self {
            buf: [0; MAX_FRAME],
            len: 0,
            overlong: false,
            last_seq: None,
            stats: DecodeStats {
                frames: 0,
                damaged: 0,
                crc_errors: 0,
                dropped_bytes: 0,
                lost_frames: 0,
                bytes: 0,
                foreign_version: 0,
                last_foreign_version: None,
            },
        }
    }

    /// Counters so far.
    pub fn stats(&self) -> DecodeStats {
        self.stats
    }

    /// Forget any partial frame and the sequence history (after a
    /// reconnect); counters stay.
    pub fn resync(&mut self) {
        self.len = 0;
        self.overlong = false;
        self.last_seq = None;
    }

    /// Feed one byte; a frame (or why the bytes since the last delimiter
    /// were not one) comes out at each delimiter. Repeated delimiters are
    /// idle line, not errors.
    pub fn push(&mut self, byte: u8) -> Option<Result<Frame, FrameError>> {
        self.stats.bytes += 1;
        if byte != 0 {
            if self.len < self.buf.len() {
                self.buf[self.len] = byte;
                self.len += 1;
            } else {
                self.overlong = true;
                self.stats.dropped_bytes += 1;
            }
            return None;
        }
        let len = core::mem::take(&mut self.len);
        if core::mem::take(&mut self.overlong) {
            return Some(Err(self.damage(len, FrameError::Overlong)));
        }
        if len == 0 {
            return None;
        }
        let Some(n) = cobs::decode_in_place(&mut self.buf, len) else {
            return Some(Err(self.damage(len, FrameError::Stuffing)));
        };
        match decode_frame(&self.buf[..n]) {
            Ok(frame) => {
                if let Some(last) = self.last_seq {
                    let gap = frame.seq.wrapping_sub(last).wrapping_sub(1);
                    // A jump of more than half the range is a restart of
                    // the sender, not 30 000 lost frames.
                    if gap < 0x8000 {
                        self.stats.lost_frames += gap as u64;
                    }
                }
                self.last_seq = Some(frame.seq);
                self.stats.frames += 1;
                Some(Ok(frame))
            }
            Err(r) => {
                if r == Refusal::Version {
                    // The CRC held, so the first byte is the sender's version.
                    self.stats.foreign_version += 1;
                    self.stats.last_foreign_version = Some(self.buf[0]);
                }
                Some(Err(self.damage(len, FrameError::Refused(r))))
            }
        }
    }

    fn damage(&mut self, len: usize, e: FrameError) -> FrameError {
        self.stats.damaged += 1;
        self.stats.dropped_bytes += len as u64;
        if e == FrameError::Refused(Refusal::Crc) {
            self.stats.crc_errors += 1;
        }
        e
    }
}
