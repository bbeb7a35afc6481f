//! Clipped share: the fraction of samples at either ADC rail or within one
//! code of it.

use super::{Block, Check, Verdict};

/// Any clipped sample at all is worth a look: a clipped beat loses its
/// peak (`common practice`).
pub const CLEAR_AT_MOST: f64 = 0.0;
/// Above this share (1 %) beats are being cut (`common practice`).
pub const TROUBLE_ABOVE: f64 = 0.01;

/// The clipped share (0 to 1) with its verdict.
pub fn clipped_share(block: &Block) -> Check {
    let adc = block.adc();
    let (low, high) = (adc.low() + adc.step(), adc.high() - adc.step());
    let x = block.samples();
    let clipped = x.iter().filter(|&&v| v <= low || v >= high).count();
    share_check(clipped as f64 / x.len() as f64)
}

/// The verdict on a clipped share counted elsewhere (a board's own count
/// of readings at its ADC's rails, which the ambient-cancelled difference
/// does not show).
pub fn share_check(share: f64) -> Check {
    let (verdict, advice) = if share <= CLEAR_AT_MOST {
        (Verdict::Clear, "nothing at the rails")
    } else if share <= TROUBLE_ABOVE {
        (
            Verdict::Borderline,
            "a few samples at the rails: a little less gain",
        )
    } else {
        (
            Verdict::Trouble,
            "the signal hits the rails: lower the gain or the LED current",
        )
    };
    Check::new(
        Some(share),
        verdict,
        format!("{:.1} % of samples clipped: {advice}", share * 100.0),
    )
}
