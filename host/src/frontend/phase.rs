//! The phase of the chain, alone and with the digital band-pass, as the
//! response table prints it and the Bode plot draws it: one track, so the
//! two always agree.

use super::sampling::DigitalFilter;
use super::transfer::Chain;
use crate::plot::{log_frequencies, phase_track_deg};

/// The plot's frequency axis, Hz; the phase is followed from its lower end.
pub const PLOT_RANGE_HZ: (f64, f64) = (0.05, 50.0);
/// Points of the plot's sweep, and of the track the phase is followed on.
pub(crate) const POINTS: usize = 600;

/// Phase of the analog chain, and of it with the digital band-pass below
/// Nyquist, at each of `freqs`, degrees, as
/// [`crate::plot::phase_track_deg`] follows them from the lower end of
/// [`PLOT_RANGE_HZ`] (where each lies within (−180, 180]).
pub(crate) fn phase_track(
    chain: &Chain,
    digital: &DigitalFilter,
    freqs: &[f64],
) -> Vec<(f64, Option<f64>)> {
    let (lo, hi) = PLOT_RANGE_HZ;
    let grid = log_frequencies(lo, hi, POINTS, &chain.transfer.poles_hz());
    phase_track_deg(
        &grid,
        freqs,
        |f| chain.transfer.phase_deg(f),
        (digital.design.sections(), digital.rate_hz),
    )
}
