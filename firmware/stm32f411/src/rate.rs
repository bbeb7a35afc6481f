/// Samples per second. build.rs reads this file too: it designs the
/// pipeline's filters for this rate (`BAND`).
pub const SAMPLE_RATE_HZ: u32 = 250;
