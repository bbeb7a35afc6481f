//! Each part's rails and the detector's reference: the board's `[rails]`
//! unless a part gives its own.

use super::{bounded, invalid, Draft};
use crate::frontend::circuit::{AmpStage, Detector, LoadAt, Rails, Supplies};
use crate::frontend::limits;
use crate::frontend::FrontendError;

/// Rails with `low_v` below `high_v`, or which key is wrong.
pub(super) fn ordered_rails(key: &str, low_v: f64, high_v: f64) -> Result<Rails, FrontendError> {
    if low_v >= high_v {
        return Err(invalid(
            key,
            format!("low ({low_v} V) must be below high ({high_v} V)"),
        ));
    }
    Ok(Rails { low_v, high_v })
}

/// A part's own rails, checked, or the board's.
fn own_rails(
    given: Option<super::parts::RailsPair>,
    key: &str,
    board: Rails,
) -> Result<Rails, FrontendError> {
    match given {
        None => Ok(board),
        Some(pair) => {
            let low = bounded(pair.0, key, limits::LEVEL_V)?;
            let high = bounded(pair.1, key, limits::LEVEL_V)?;
            ordered_rails(key, low, high)
        }
    }
}

impl Draft {
    /// Every node's rails and the detector's reference. A TIA's reference
    /// defaults to the chain's bias `bias_v`; a phototransistor's is the
    /// rail its load returns to.
    pub(super) fn resolve_supplies(
        &self,
        board: Rails,
        detector: &Detector,
        stages: &[AmpStage],
        bias_v: f64,
    ) -> Result<Supplies, FrontendError> {
        let given = self.detector.as_ref().and_then(|d| d.rails);
        let detector_rails = own_rails(given, "detector.rails", board)?;
        let given_reference = self.detector.as_ref().and_then(|d| d.reference_v);
        let reference_v = match *detector {
            Detector::Phototransistor { load_at, .. } => match load_at {
                LoadAt::Emitter => detector_rails.low_v,
                LoadAt::Collector => detector_rails.high_v,
            },
            Detector::Photodiode { .. } => match given_reference {
                None => bias_v,
                Some(v) => {
                    let v = bounded(v, "detector.reference_v", limits::LEVEL_V)?;
                    if !(detector_rails.low_v..=detector_rails.high_v).contains(&v) {
                        return Err(invalid(
                            "detector.reference_v (--tia-ref)",
                            format!(
                                "must lie within the detector's rails, {} V to {} V, not {v} V",
                                detector_rails.low_v, detector_rails.high_v
                            ),
                        ));
                    }
                    v
                }
            },
        };
        let stage_rails = stages
            .iter()
            .zip(&self.stages)
            .enumerate()
            .map(|(i, (stage, draft))| match stage {
                AmpStage::HighPass { .. } | AmpStage::LowPass { .. } => Ok(None),
                _ => own_rails(draft.rails, &format!("stage {} rails", i + 1), board).map(Some),
            })
            .collect::<Result<Vec<_>, _>>()?;
        Ok(Supplies {
            detector: detector_rails,
            reference_v,
            reference_assumed: matches!(detector, Detector::Photodiode { .. })
                && given_reference.is_none(),
            stages: stage_rails,
        })
    }
}
