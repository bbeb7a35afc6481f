//! WFDB signal file formats: how samples are packed into bytes.
//!
//! Source: PhysioNet WFDB signal file format specification, signal(5) of
//! the WFDB Applications Guide. A signal file holds a flat stream of
//! samples (frame after frame, each frame holding every signal of the file
//! in header order); the formats differ only in how that stream is packed.

/// The signal file formats these readers decode.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum SignalFormat {
    /// Format 8: 8-bit first differences, summed onto the initial value.
    Diff8,
    /// Format 16: 16-bit two's complement, least significant byte first.
    Fmt16,
    /// Format 24: 24-bit two's complement, least significant byte first.
    Fmt24,
    /// Format 32: 32-bit two's complement, least significant byte first.
    Fmt32,
    /// Format 61: 16-bit two's complement, most significant byte first.
    Fmt61,
    /// Format 80: 8-bit offset binary (stored byte minus 128).
    Fmt80,
    /// Format 160: 16-bit offset binary (stored word minus 32768), LSB first.
    Fmt160,
    /// Format 212: pairs of 12-bit two's complement samples in 3 bytes.
    Fmt212,
    /// Format 310: three 10-bit samples in two 16-bit words (bit 0 unused).
    Fmt310,
    /// Format 311: three 10-bit samples in one 32-bit word, LSB first.
    Fmt311,
}

/// Why a format code cannot be used.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum FormatProblem {
    /// No WFDB format has this code.
    Unknown,
    /// A real WFDB format that these readers do not decode; the text is
    /// the whole message, e.g. "signal formats 508, 516 and 524
    /// (FLAC-compressed) are not supported".
    Unsupported(&'static str),
}

impl SignalFormat {
    /// The format for a header's format code.
    pub fn from_code(code: u32) -> Result<SignalFormat, FormatProblem> {
        Ok(match code {
            8 => SignalFormat::Diff8,
            16 => SignalFormat::Fmt16,
            24 => SignalFormat::Fmt24,
            32 => SignalFormat::Fmt32,
            61 => SignalFormat::Fmt61,
            80 => SignalFormat::Fmt80,
            160 => SignalFormat::Fmt160,
            212 => SignalFormat::Fmt212,
            310 => SignalFormat::Fmt310,
            311 => SignalFormat::Fmt311,
            0 => {
                return Err(FormatProblem::Unsupported(
                    "signal format 0 (null signal, no samples stored) is not supported",
                ))
            }
            508 | 516 | 524 => {
                return Err(FormatProblem::Unsupported(
                    "signal formats 508, 516 and 524 (FLAC-compressed) are not supported",
                ))
            }
            _ => return Err(FormatProblem::Unknown),
        })
    }

    /// The code written in headers.
    pub fn code(self) -> u32 {
        match self {
            SignalFormat::Diff8 => 8,
            SignalFormat::Fmt16 => 16,
            SignalFormat::Fmt24 => 24,
            SignalFormat::Fmt32 => 32,
            SignalFormat::Fmt61 => 61,
            SignalFormat::Fmt80 => 80,
            SignalFormat::Fmt160 => 160,
            SignalFormat::Fmt212 => 212,
            SignalFormat::Fmt310 => 310,
            SignalFormat::Fmt311 => 311,
        }
    }

    /// The stored value that marks a missing ("invalid") sample: the most
    /// negative value of the format. Format 8 has none.
    pub fn invalid_value(self) -> Option<i32> {
        match self {
            SignalFormat::Diff8 => None,
            SignalFormat::Fmt80 => Some(-(1 << 7)),
            SignalFormat::Fmt310 | SignalFormat::Fmt311 => Some(-(1 << 9)),
            SignalFormat::Fmt212 => Some(-(1 << 11)),
            SignalFormat::Fmt16 | SignalFormat::Fmt61 | SignalFormat::Fmt160 => Some(-(1 << 15)),
            SignalFormat::Fmt24 => Some(-(1 << 23)),
            SignalFormat::Fmt32 => Some(i32::MIN),
        }
    }

    /// ADC resolution in bits assumed when a header leaves the field out,
    /// as the WFDB library does: 8 for format 80, 16 for 160, 12 for 212,
    /// 10 for 310 and 311, otherwise the library default of 12.
    pub fn default_resolution(self) -> u32 {
        match self {
            SignalFormat::Fmt80 => 8,
            SignalFormat::Fmt160 => 16,
            SignalFormat::Fmt310 | SignalFormat::Fmt311 => 10,
            _ => 12,
        }
    }

    /// Bytes holding the first `samples` samples of the stream. Packed
    /// formats end on the last byte that still holds a bit of the last
    /// sample (format 310 needs the whole 4-byte group once it holds two).
    /// A count whose bytes pass `u64::MAX` gives `u64::MAX`.
    pub fn bytes_for(self, samples: u64) -> u64 {
        // In u128, so no count overflows; more than u64 holds saturates.
        let n = u128::from(samples);
        let bytes = match self {
            SignalFormat::Diff8 | SignalFormat::Fmt80 => n,
            SignalFormat::Fmt16 | SignalFormat::Fmt61 | SignalFormat::Fmt160 => n * 2,
            SignalFormat::Fmt24 => n * 3,
            SignalFormat::Fmt32 => n * 4,
            SignalFormat::Fmt212 => (n * 3).div_ceil(2),
            SignalFormat::Fmt310 => match n % 3 {
                2 => n.div_ceil(3) * 4,
                _ => (n * 4).div_ceil(3),
            },
            SignalFormat::Fmt311 => (n * 4).div_ceil(3),
        };
        u64::try_from(bytes).unwrap_or(u64::MAX)
    }

    /// The largest number of whole samples that `bytes` bytes hold.
    pub fn samples_in(self, bytes: u64) -> u64 {
        // bytes_for is monotonic: start from the estimate and step down.
        let mut n = match self {
            SignalFormat::Diff8 | SignalFormat::Fmt80 => bytes,
            SignalFormat::Fmt16 | SignalFormat::Fmt61 | SignalFormat::Fmt160 => bytes / 2,
            SignalFormat::Fmt24 => bytes / 3,
            SignalFormat::Fmt32 => bytes / 4,
            SignalFormat::Fmt212 => bytes / 3 * 2 + 2,
            SignalFormat::Fmt310 | SignalFormat::Fmt311 => bytes / 4 * 3 + 3,
        };
        while n > 0 && self.bytes_for(n) > bytes {
            n -= 1;
        }
        n
    }

    /// Unpack the first `count` samples of `bytes` (which must hold at
    /// least [`bytes_for`](Self::bytes_for)`(count)` bytes).
    ///
    /// Format 8 yields the stored differences; the caller sums them per
    /// signal, as [`Record`](super::Record) does.
    pub fn decode(self, bytes: &[u8], count: usize) -> Vec<i32> {
        let mut out = Vec::with_capacity(count);
        self.decode_into(bytes, count, &mut out);
        out
    }

    /// [`decode`](Self::decode), the samples appended to `out` (a buffer
    /// kept from one block to the next, so a long file is decoded without
    /// an allocation per block).
    pub fn decode_into(self, bytes: &[u8], count: usize, out: &mut Vec<i32>) {
        debug_assert!(bytes.len() as u64 >= self.bytes_for(count as u64));
        out.reserve(count);
        match self {
            SignalFormat::Diff8 => out.extend(bytes[..count].iter().map(|&b| b as i8 as i32)),
            SignalFormat::Fmt80 => out.extend(bytes[..count].iter().map(|&b| b as i32 - 128)),
            SignalFormat::Fmt16 => out.extend(
                bytes
                    .chunks_exact(2)
                    .take(count)
                    .map(|c| i16::from_le_bytes([c[0], c[1]]) as i32),
            ),
            SignalFormat::Fmt61 => out.extend(
                bytes
                    .chunks_exact(2)
                    .take(count)
                    .map(|c| i16::from_be_bytes([c[0], c[1]]) as i32),
            ),
            SignalFormat::Fmt160 => out.extend(
                bytes
                    .chunks_exact(2)
                    .take(count)
                    .map(|c| u16::from_le_bytes([c[0], c[1]]) as i32 - 32768),
            ),
            SignalFormat::Fmt24 => out.extend(bytes.chunks_exact(3).take(count).map(|c| {
                // Put the three bytes at the top of an i32 so the shift
                // back down sign-extends.
                i32::from_le_bytes([0, c[0], c[1], c[2]]) >> 8
            })),
            SignalFormat::Fmt32 => out.extend(
                bytes
                    .chunks_exact(4)
                    .take(count)
                    .map(|c| i32::from_le_bytes([c[0], c[1], c[2], c[3]])),
            ),
            SignalFormat::Fmt212 => {
                for k in 0..count {
                    let base = k / 2 * 3;
                    let raw = if k % 2 == 0 {
                        bytes[base] as i32 | ((bytes[base + 1] as i32 & 0x0F) << 8)
                    } else {
                        bytes[base + 2] as i32 | ((bytes[base + 1] as i32 & 0xF0) << 4)
                    };
                    out.push(sign_extend(raw, 12));
                }
            }
            SignalFormat::Fmt310 => {
                for k in 0..count {
                    let base = k / 3 * 4;
                    let word = |i: usize| -> i32 {
                        bytes[base + 2 * i] as i32 | ((bytes[base + 2 * i + 1] as i32) << 8)
                    };
                    let raw = match k % 3 {
                        0 => (word(0) >> 1) & 0x3FF,
                        1 => (word(1) >> 1) & 0x3FF,
                        _ => ((word(0) >> 11) & 0x1F) | (((word(1) >> 11) & 0x1F) << 5),
                    };
                    out.push(sign_extend(raw, 10));
                }
            }
            SignalFormat::Fmt311 => {
                for k in 0..count {
                    let base = k / 3 * 4;
                    let byte = |i: usize| bytes.get(base + i).copied().unwrap_or(0) as u32;
                    let word = byte(0) | byte(1) << 8 | byte(2) << 16 | byte(3) << 24;
                    let raw = (word >> (10 * (k % 3))) & 0x3FF;
                    out.push(sign_extend(raw as i32, 10));
                }
            }
        }
    }

    /// The smallest and largest value a sample of this format can hold
    /// (format 8 is limited only by the i32 running sum).
    pub fn range(self) -> (i32, i32) {
        match self {
            SignalFormat::Diff8 | SignalFormat::Fmt32 => (i32::MIN, i32::MAX),
            SignalFormat::Fmt80 => (-128, 127),
            SignalFormat::Fmt310 | SignalFormat::Fmt311 => (-512, 511),
            SignalFormat::Fmt212 => (-2048, 2047),
            SignalFormat::Fmt16 | SignalFormat::Fmt61 | SignalFormat::Fmt160 => (-32768, 32767),
            SignalFormat::Fmt24 => (-(1 << 23), (1 << 23) - 1),
        }
    }
}

/// Sign-extend the low `bits` bits of `raw`.
fn sign_extend(raw: i32, bits: u32) -> i32 {
    let shift = 32 - bits;
    (raw << shift) >> shift
}

/// Turn the differences of a format 8 stream into sample values.
///
/// `stream` holds frames of `slots.iter().sum()` differences; signal `s`
/// owns `slots[s]` consecutive entries of each frame and starts from
/// `initial[s]`. Differences are taken between successive samples of the
/// same signal (signal(5)), so each signal keeps its own running sum.
pub(crate) fn undo_differences(stream: &mut [i32], slots: &[usize], initial: &[i32]) {
    undo_differences_from(stream, slots, &mut initial.to_vec());
}

/// [`undo_differences`] of a stretch of whole frames that goes on from
/// `running` (each signal's last value), which is left at the stretch's
/// last values: a long file summed a block at a time.
pub(crate) fn undo_differences_from(stream: &mut [i32], slots: &[usize], running: &mut [i32]) {
    let frame: usize = slots.iter().sum();
    if frame == 0 {
        return;
    }
    for chunk in stream.chunks_mut(frame) {
        let mut at = 0;
        for (s, &n) in slots.iter().enumerate() {
            for v in chunk.iter_mut().skip(at).take(n) {
                running[s] = running[s].wrapping_add(*v);
                *v = running[s];
            }
            at += n;
        }
    }
}

/// Append `value` to `out` as a format 16 sample (the only format the
/// writer produces).
pub(crate) fn encode_fmt16(value: i16, out: &mut Vec<u8>) {
    out.extend_from_slice(&value.to_le_bytes());
}

#[cfg(test)]
mod tests;
