//! The recorded-samples feed: what the host sends an emulated board so that
//! it runs a whole recording through its pipeline.
//!
//! A fixed 40-byte header (magic, version, the pipeline's [`Config`], the
//! number of samples) followed by that many `f32` samples, little-endian.
//! The same bytes go into a semihosting input file or down the UART;
//! documented in `docs/wire-format.md` ("Recorded-samples feed").
//!
//! ```
//! use plethwire_dsp::feed::FeedHeader;
//! use plethwire_dsp::pipeline::Config;
//! let header = FeedHeader { config: Config::new(300.0), samples: 144_000 };
//! assert_eq!(FeedHeader::decode(&header.encode()), Ok(header));
//! ```

use crate::pipeline::{Config, DetectorKind, Options};

/// First four bytes of a feed.
pub const FEED_MAGIC: [u8; 4] = *b"PWSF";
/// Version of the feed layout, the fifth byte.
pub const FEED_VERSION: u8 = 1;
/// Bytes of the header; the samples start here.
pub const FEED_HEADER_LEN: usize = 40;
/// Bytes per sample.
pub const FEED_SAMPLE_LEN: usize = 4;

/// The header of a feed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FeedHeader {
    /// How the pipeline is to be set up (sample rate and options).
    pub config: Config,
    /// Samples that follow the header.
    pub samples: u64,
}

/// Why a header was refused.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FeedError {
    /// The first four bytes are not [`FEED_MAGIC`].
    Magic,
    /// A version other than [`FEED_VERSION`].
    Version(u8),
    /// An unknown detector code.
    Detector(u8),
    /// The rails flag is neither 0 nor 1.
    RailsFlag(u8),
    /// The reserved byte is not 0.
    Reserved(u8),
}

impl core::fmt::Display for FeedError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Magic => f.write_str("not a plethwire samples feed (bad magic)"),
            Self::Version(v) => write!(f, "feed version {v}, this build reads {FEED_VERSION}"),
            Self::Detector(d) => write!(f, "unknown detector code {d}"),
            Self::RailsFlag(r) => write!(f, "rails flag {r} is neither 0 nor 1"),
            Self::Reserved(r) => write!(f, "reserved byte is {r}, not 0"),
        }
    }
}

impl FeedHeader {
    /// The header's bytes.
    pub fn encode(&self) -> [u8; FEED_HEADER_LEN] {
        let o = &self.config.options;
        let (rails_known, (low, high)) = match o.rails {
            Some(r) => (1, r),
            None => (0, (0.0, 0.0)),
        };
        let mut b = [0u8; FEED_HEADER_LEN];
        b[0..4].copy_from_slice(&FEED_MAGIC);
        b[4] = FEED_VERSION;
        b[5] = o.detector.wire_code();
        b[6] = rails_known;
        // b[7] reserved, 0.
        let floats = [
            self.config.sample_rate_hz,
            o.band_low_hz,
            o.band_high_hz,
            o.hr_window_s,
            low,
            high,
        ];
        for (i, v) in floats.iter().enumerate() {
            b[8 + 4 * i..12 + 4 * i].copy_from_slice(&v.to_bits().to_le_bytes());
        }
        b[32..40].copy_from_slice(&self.samples.to_le_bytes());
        b
    }

    /// Read a header. Floats arrive as bit patterns; their values are
    /// checked by [`crate::pipeline::Pipeline::new`], not here.
    pub fn decode(b: &[u8; FEED_HEADER_LEN]) -> Result<Self, FeedError> {
        if b[0..4] != FEED_MAGIC {
            return Err(FeedError::Magic);
        }
        if b[4] != FEED_VERSION {
            return Err(FeedError::Version(b[4]));
        }
        let detector = DetectorKind::from_wire_code(b[5]).ok_or(FeedError::Detector(b[5]))?;
        if b[7] != 0 {
            return Err(FeedError::Reserved(b[7]));
        }
        let f = |i: usize| {
            let at = 8 + 4 * i;
            f32::from_bits(u32::from_le_bytes([b[at], b[at + 1], b[at + 2], b[at + 3]]))
        };
        let rails = match b[6] {
            0 => None,
            1 => Some((f(4), f(5))),
            r => return Err(FeedError::RailsFlag(r)),
        };
        let mut count = [0u8; 8];
        count.copy_from_slice(&b[32..40]);
        Ok(Self {
            config: Config {
                sample_rate_hz: f(0),
                options: Options {
                    detector,
                    band_low_hz: f(1),
                    band_high_hz: f(2),
                    rails,
                    hr_window_s: f(3),
                },
            },
            samples: u64::from_le_bytes(count),
        })
    }

    /// Bytes of the whole feed, header included.
    pub fn feed_len(&self) -> u64 {
        FEED_HEADER_LEN as u64 + FEED_SAMPLE_LEN as u64 * self.samples
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn header() -> FeedHeader {
        let mut config = Config::new(125.0);
        config.options.detector = DetectorKind::Zong;
        config.options.rails = Some((-1.5, 2.25));
        FeedHeader {
            config,
            samples: 60_001,
        }
    }

    #[test]
    fn round_trips_every_field() {
        let h = header();
        assert_eq!(FeedHeader::decode(&h.encode()), Ok(h));
        let plain = FeedHeader {
            config: Config::new(300.0),
            samples: 0,
        };
        assert_eq!(FeedHeader::decode(&plain.encode()), Ok(plain));
    }

    #[test]
    fn layout_is_as_documented() {
        let b = header().encode();
        assert_eq!(&b[0..4], b"PWSF");
        assert_eq!(b[4], 1);
        assert_eq!(b[5], 1, "Zong");
        assert_eq!(b[6], 1, "rails known");
        assert_eq!(b[7], 0);
        assert_eq!(&b[8..12], &125.0f32.to_le_bytes());
        assert_eq!(&b[24..28], &(-1.5f32).to_le_bytes());
        assert_eq!(&b[32..40], &60_001u64.to_le_bytes());
        assert_eq!(header().feed_len(), 40 + 4 * 60_001);
    }

    #[test]
    fn refuses_what_it_does_not_know() {
        let good = header().encode();
        let with = |i: usize, v: u8| {
            let mut b = good;
            b[i] = v;
            FeedHeader::decode(&b)
        };
        assert_eq!(with(0, b'X'), Err(FeedError::Magic));
        assert_eq!(with(4, 2), Err(FeedError::Version(2)));
        assert_eq!(with(5, 7), Err(FeedError::Detector(7)));
        assert_eq!(with(6, 2), Err(FeedError::RailsFlag(2)));
        assert_eq!(with(7, 1), Err(FeedError::Reserved(1)));
    }
}
