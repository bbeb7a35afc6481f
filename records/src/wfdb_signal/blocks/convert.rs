//! Stored integers to physical values, written straight into a block's
//! buffer: one tight loop per format over the bytes read, no stream of
//! integers in between for the fixed-width formats, and no allocation once
//! the buffer has grown to a block.

use crate::wfdb_format::SignalFormat;

mod sealed {
    pub trait Sealed {}
    impl Sealed for f64 {}
    impl Sealed for f32 {}
}

/// A type a block of physical values is read as: `f64` (the values
/// [`Record::read_physical`](crate::Record::read_physical) gives) or
/// `f32` (those values rounded to `f32`, as a pipeline fed `x as f32`
/// takes them: the same bits as reading `f64` and converting).
pub trait BlockSample:
    Copy + Send + 'static + core::ops::Neg<Output = Self> + sealed::Sealed
{
    /// A missing sample (NaN).
    const MISSING: Self;
    /// The physical value `v`, computed in `f64`, as this type.
    fn from_f64(v: f64) -> Self;
}

impl BlockSample for f64 {
    const MISSING: f64 = f64::NAN;
    #[inline(always)]
    fn from_f64(v: f64) -> f64 {
        v
    }
}

impl BlockSample for f32 {
    // `f64::NAN as f32` has these bits too.
    const MISSING: f32 = f32::NAN;
    #[inline(always)]
    fn from_f64(v: f64) -> f32 {
        v as f32
    }
}

/// How one signal's stored integers become physical values:
/// `(d − baseline) / gain`, NaN for the format's invalid value. The
/// division is kept (not a multiplication by `1 / gain`) so values equal
/// the whole read's bit for bit.
#[derive(Debug, Clone, Copy)]
pub(super) struct Scale {
    /// The invalid value widened, or a value no `i32` has.
    invalid: i64,
    baseline: f64,
    gain: f64,
}

impl Scale {
    pub(super) fn new(invalid: Option<i32>, baseline: f64, gain: f64) -> Scale {
        Scale {
            invalid: invalid.map_or(i64::MAX, i64::from),
            baseline,
            gain,
        }
    }

    #[inline(always)]
    fn physical<T: BlockSample>(&self, d: i32) -> T {
        if i64::from(d) == self.invalid {
            T::MISSING
        } else {
            T::from_f64((f64::from(d) - self.baseline) / self.gain)
        }
    }
}

/// Where one signal lies in a file's frames: samples per frame of the
/// file, the signal's first slot in it, the signal's samples per frame.
#[derive(Debug, Clone, Copy)]
pub(super) struct Layout {
    pub(super) per_frame: usize,
    pub(super) at: usize,
    pub(super) spf: usize,
}

/// Every 16-bit word's physical value, indexed by the word as stored
/// (formats 16, 61 and 160): one load a sample in place of a division.
/// Each entry is [`Scale`]'s own value for the word, so the values are
/// the same bits; worth building for a signal of many more samples than
/// its 65 536 entries.
pub(super) struct Table16(Box<[f64; 1 << 16]>);

/// Samples a signal of a 16-bit format, alone in its file, should have
/// before a [`Table16`] is built for it: its cost, twice over.
pub(super) const TABLE16_FROM_SAMPLES: u64 = 1 << 17;

impl Table16 {
    /// The table for `format`, `None` for the formats that are not 16-bit.
    pub(super) fn new(format: SignalFormat, scale: &Scale) -> Option<Table16> {
        let raw: fn(u16) -> i32 = match format {
            SignalFormat::Fmt16 | SignalFormat::Fmt61 => |w| i32::from(w as i16),
            SignalFormat::Fmt160 => |w| i32::from(w) - 32768,
            _ => return None,
        };
        let values: Box<[f64]> = (0..=u16::MAX)
            .map(|w| scale.physical::<f64>(raw(w)))
            .collect();
        values.try_into().ok().map(Table16)
    }

    #[inline(always)]
    fn get<T: BlockSample>(&self, word: u16) -> T {
        // 65 536 entries: no word is out of range, no bounds check.
        T::from_f64(self.0[usize::from(word)])
    }
}

impl std::fmt::Debug for Table16 {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("Table16")
    }
}

/// The signal's physical values in `bytes` (whole frames of a fixed-width
/// format, from the first frame's first byte), appended to `out`, through
/// `table` when there is one (16-bit formats); `false` (and nothing
/// appended) for format 8 and the packed formats, which go through
/// [`from_stream`].
pub(super) fn fixed_width<T: BlockSample>(
    format: SignalFormat,
    bytes: &[u8],
    layout: Layout,
    (scale, table): (&Scale, Option<&Table16>),
    out: &mut Vec<T>,
) -> bool {
    let d = |raw: i32| scale.physical::<T>(raw);
    match (format, table) {
        (SignalFormat::Fmt16 | SignalFormat::Fmt160, Some(t)) => {
            each(bytes, layout, out, |b| t.get(u16::from_le_bytes(b)))
        }
        (SignalFormat::Fmt61, Some(t)) => {
            each(bytes, layout, out, |b| t.get(u16::from_be_bytes(b)))
        }
        (SignalFormat::Fmt16, None) => {
            each(bytes, layout, out, |b| d(i16::from_le_bytes(b).into()))
        }
        (SignalFormat::Fmt61, None) => {
            each(bytes, layout, out, |b| d(i16::from_be_bytes(b).into()))
        }
        (SignalFormat::Fmt160, None) => each(bytes, layout, out, |b| {
            d(i32::from(u16::from_le_bytes(b)) - 32768)
        }),
        (SignalFormat::Fmt80, _) => each(bytes, layout, out, |[b]| d(i32::from(b) - 128)),
        // The three bytes at the top of an i32, so the shift back sign-extends.
        (SignalFormat::Fmt24, _) => each(bytes, layout, out, |b: [u8; 3]| {
            d(i32::from_le_bytes([0, b[0], b[1], b[2]]) >> 8)
        }),
        (SignalFormat::Fmt32, _) => each(bytes, layout, out, |b| d(i32::from_le_bytes(b))),
        (
            SignalFormat::Diff8
            | SignalFormat::Fmt212
            | SignalFormat::Fmt310
            | SignalFormat::Fmt311,
            _,
        ) => return false,
    }
    true
}

/// [`fixed_width`] for samples of `W` bytes, each turned into a value by `one`.
#[inline(always)]
fn each<T: BlockSample, const W: usize>(
    bytes: &[u8],
    layout: Layout,
    out: &mut Vec<T>,
    one: impl Fn([u8; W]) -> T,
) {
    let one = |c: &[u8]| {
        let mut b = [0u8; W];
        b.copy_from_slice(c);
        one(b)
    };
    if layout.per_frame == layout.spf {
        // The file holds this signal alone: every sample is its own.
        out.extend(bytes.chunks_exact(W).map(one));
    } else {
        let slots = W * layout.at..W * (layout.at + layout.spf);
        for frame in bytes.chunks_exact(W * layout.per_frame) {
            out.extend(frame[slots.clone()].chunks_exact(W).map(one));
        }
    }
}

/// The signal's physical values in `stream` (whole frames of stored
/// integers), appended to `out`.
pub(super) fn from_stream<T: BlockSample>(
    stream: &[i32],
    layout: Layout,
    scale: &Scale,
    out: &mut Vec<T>,
) {
    if layout.per_frame == layout.spf {
        out.extend(stream.iter().map(|&d| scale.physical::<T>(d)));
    } else {
        let slots = layout.at..layout.at + layout.spf;
        for frame in stream.chunks_exact(layout.per_frame) {
            out.extend(frame[slots.clone()].iter().map(|&d| scale.physical::<T>(d)));
        }
    }
}
