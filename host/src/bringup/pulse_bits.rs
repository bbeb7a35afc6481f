//! Pulse amplitude against the ADC step: how many bits of the ADC the pulse
//! spans, log2(pulse peak-to-peak / one code). Peak-to-peak is the block's
//! highest minus lowest sample, as in [`super::perfusion`].

use super::{Block, Check, Verdict};

/// Fewer bits than this and the beat shape is lost in the steps: a pulse of
/// under 16 codes (`common practice`).
pub const TROUBLE_BELOW_BITS: f64 = 4.0;
/// Fewer bits than this and the detector works with little margin: under
/// 64 codes (`common practice`).
pub const BORDERLINE_BELOW_BITS: f64 = 6.0;

/// The bits of pulse with its verdict; trouble with no number on a flat
/// block.
pub fn pulse_bits(block: &Block) -> Check {
    bits_of(block.peak_to_peak(), block.adc().step())
}

/// The bits of a pulse `pp` peak to peak against one code `step`, both in
/// the input's unit, with its verdict.
pub fn bits_of(pp: f64, step: f64) -> Check {
    if pp <= 0.0 {
        return Check::new(
            None,
            Verdict::Trouble,
            "no pulse: the signal is flat".to_string(),
        );
    }
    let codes = pp / step;
    let bits = codes.log2();
    let (verdict, advice) = if bits < TROUBLE_BELOW_BITS {
        (Verdict::Trouble, "raise the gain or the LED current")
    } else if bits < BORDERLINE_BELOW_BITS {
        (Verdict::Borderline, "more gain would help")
    } else {
        (Verdict::Clear, "enough resolution")
    };
    Check::new(
        Some(bits),
        verdict,
        format!("pulse spans {codes:.0} codes ({bits:.1} bits): {advice}"),
    )
}
