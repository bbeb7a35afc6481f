//! The last guard: every number the report works out is finite. The
//! bounds on the inputs ([`crate::frontend::limits`], [`crate::frontend::Kind::range`]) keep
//! them so; this names the first that is not, should a combination slip
//! through, rather than print `inf`.

use super::FrontendReport;
use crate::frontend::FrontendError;

/// The report's computed numbers with their names.
fn numbers(r: &FrontendReport) -> Vec<(String, f64)> {
    let mut all: Vec<(String, f64)> = vec![
        ("LED current".into(), r.led.current_ma),
        ("LED power".into(), r.led.led_mw),
        ("resistors' power".into(), r.led.resistors_mw),
        ("mid-band transimpedance".into(), r.midband_v_per_ua),
        ("transfer function's k".into(), r.chain.transfer.k),
        ("ADC step in photocurrent".into(), r.adc.lsb_ua),
        ("ADC range in photocurrent".into(), r.adc.full_scale_ua),
        (
            "detector's photocurrent range".into(),
            r.input_range.most_ua,
        ),
        ("recommended sample rate".into(), r.sampling.recommended_hz),
    ];
    let roots = r.chain.transfer.poles_rad_s.iter();
    all.extend(
        roots
            .chain(&r.chain.transfer.zeros_rad_s)
            .map(|&x| ("chain's poles and zeros".to_owned(), x)),
    );
    for n in &r.nodes {
        all.push((format!("{} level", n.node), n.low_v));
        all.push((format!("{} level", n.node), n.high_v));
    }
    if let Some(s) = &r.swing {
        all.push(("pulse's swing at the ADC".into(), s.swing_vpp));
        all.push(("pulse's ADC codes".into(), s.codes));
    }
    for row in &r.response {
        all.push((
            format!("response at {} Hz", row.frequency_hz),
            row.analog_v_per_ua,
        ));
    }
    all
}

/// The first non-finite number of `r`, as an error naming it.
pub fn check(r: &FrontendReport) -> Result<(), FrontendError> {
    match numbers(r).into_iter().find(|(_, v)| !v.is_finite()) {
        None => Ok(()),
        Some((what, value)) => Err(FrontendError::NotFinite { what, value }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::frontend::test_circuit::circuit;

    #[test]
    fn a_non_finite_number_is_named() {
        let c = circuit(47.0, 1.0);
        let mut r = FrontendReport::build(&c).unwrap();
        assert!(check(&r).is_ok());
        r.nodes[1].high_v = f64::INFINITY;
        let e = check(&r).unwrap_err();
        assert_eq!(
            e.to_string(),
            "the stage 1 output level works out to inf: check the circuit's values"
        );
    }
}
