//! What the property test draws: prefixes of anything, rates.

use super::{Segment, DC, PULSE};
use proptest::prelude::*;

/// One to five segments of anything (cut at 60 s when rendered).
pub fn prefix() -> impl Strategy<Value = Vec<Segment>> {
    prop::collection::vec(segment(), 1..6)
}

/// `DC + PULSE·±10^e` for e in −2..6, or exactly 0.
fn level() -> impl Strategy<Value = f64> {
    prop_oneof![
        1 => Just(0.0),
        4 => (any::<bool>(), -2.0..6.0f64)
            .prop_map(|(up, e)| DC + if up { 1.0 } else { -1.0 } * PULSE * 10f64.powf(e)),
    ]
}

/// `PULSE·10^e` for e in `lo..hi`.
fn size(lo: f64, hi: f64) -> impl Strategy<Value = f64> {
    (lo..hi).prop_map(|e| PULSE * 10f64.powf(e))
}

/// One segment of any kind, any size.
pub fn segment() -> impl Strategy<Value = Segment> {
    let secs = || prop_oneof![0.05..1.0f64, 1.0..30.0f64];
    let bpm = || 30.0..220.0f64;
    prop_oneof![
        (secs(), level(), size(-3.0, 6.0), any::<u64>()).prop_map(
            |(seconds, level, spread, seed)| Segment::Noise {
                seconds,
                level,
                spread,
                seed
            }
        ),
        (0.3..5.0f64, level(), any::<bool>(), size(-3.0, 5.0)).prop_map(
            |(seconds, level, up, h)| {
                Segment::Bump {
                    seconds,
                    level,
                    height: if up { h } else { -h },
                }
            }
        ),
        (secs(), 0.1..2.0f64, size(-1.0, 6.0), any::<u64>()).prop_map(
            |(seconds, hold_s, spread, seed)| Segment::Steps {
                seconds,
                hold_s,
                spread,
                seed
            }
        ),
        (secs(), level()).prop_map(|(seconds, level)| Segment::Flat { seconds, level }),
        (secs(), bpm(), size(-1.0, 2.0), 0.1..0.9f64).prop_map(|(seconds, bpm, s, keep)| {
            Segment::Clipped {
                seconds,
                bpm,
                scale: s / PULSE,
                keep,
            }
        }),
        (secs(), level(), level(), 0.2..10.0f64).prop_map(|(seconds, low, high, hz)| {
            Segment::Square {
                seconds,
                low,
                high,
                hz,
            }
        }),
        (secs(), 0..3u8).prop_map(|(seconds, kind)| Segment::NotANumber { seconds, kind }),
        (secs(), bpm(), size(-1.3, 1.3)).prop_map(|(seconds, bpm, s)| Segment::Flipped {
            seconds,
            bpm,
            scale: s / PULSE
        }),
        (
            secs(),
            bpm(),
            prop_oneof![Just(0.05), Just(20.0), -1.3..1.3f64],
            any::<bool>()
        )
            .prop_map(|(seconds, bpm, f, dc_too)| {
                let factor = if f == 0.05 || f == 20.0 {
                    f
                } else {
                    10f64.powf(f)
                };
                Segment::Scaled {
                    seconds,
                    bpm,
                    factor,
                    dc_too,
                }
            }),
    ]
}

/// Rates 25 to 1000 Hz, log-uniform, so odd rates come up as well.
pub fn rate() -> impl Strategy<Value = f64> {
    (25f64.ln()..1000f64.ln()).prop_map(f64::exp)
}
