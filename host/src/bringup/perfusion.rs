//! Perfusion index: the pulsatile part of the light against the steady
//! part, PI = AC / DC × 100 %, the definition of Lima, Beelen and Bakker,
//! "Use of a peripheral perfusion index derived from the pulse oximetry
//! signal as a noninvasive indicator of perfusion", Crit Care Med
//! 30(6):1210–1213, 2002 (from memory).
//!
//! AC here is the block's peak-to-peak (highest minus lowest sample), so a
//! block of a few beats should be given; a drifting block overstates it. DC
//! is the block's mean above the ADC's low rail, which is taken as the
//! zero-light level of the ambient-cancelled input.

use super::{Block, Check, Verdict};

/// Below this PI (in %) the pulse is too weak to trust: a finger that does
/// not sit on the window, or light that reaches the detector without
/// passing through tissue. Finger PI typically spans about 0.2–20 %
/// (`common practice`).
pub const TROUBLE_BELOW_PERCENT: f64 = 0.2;
/// Below this PI (in %) beats are found but with little margin
/// (`common practice`).
pub const BORDERLINE_BELOW_PERCENT: f64 = 1.0;

/// The perfusion index in % with its verdict; not measurable when the DC
/// level is at or below the low rail (no light, or the LED is off).
pub fn perfusion_index(block: &Block) -> Check {
    perfusion_of(block.peak_to_peak(), block.mean() - block.adc().low())
}

/// The perfusion index in % of a pulse `ac` peak to peak on a level `dc`
/// above the zero-light level, both in the input's unit, with its verdict.
pub fn perfusion_of(ac: f64, dc: f64) -> Check {
    if dc <= 0.0 {
        return Check::new(
            None,
            Verdict::NotMeasurable,
            "no DC level above the ADC's low rail: is the LED on?".to_string(),
        );
    }
    let pi = ac / dc * 100.0;
    let (verdict, advice) = if pi < TROUBLE_BELOW_PERCENT {
        (
            Verdict::Trouble,
            "too little pulse: check the finger sits on the window",
        )
    } else if pi < BORDERLINE_BELOW_PERCENT {
        (
            Verdict::Borderline,
            "a weak pulse: press lightly and keep the hand warm",
        )
    } else {
        (Verdict::Clear, "a strong pulse")
    };
    Check::new(
        Some(pi),
        verdict,
        format!("perfusion index {pi:.2} %: {advice}"),
    )
}
