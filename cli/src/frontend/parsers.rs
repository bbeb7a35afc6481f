//! The value parsers of `plethwire frontend`'s options: each value held to
//! the bounds of [`plethwire::frontend::limits`] and the pipeline's rate
//! range, each message the one clap prints after the option's name.

use crate::values;
use plethwire::frontend::{limits, parse_value, Kind, StageDraft};
use plethwire_dsp::pipeline::check_sample_rate;

/// A number within `bounds`; the message is clap's after the option.
pub(super) fn bounded(text: &str, bounds: limits::Bounds) -> Result<f64, String> {
    bounds
        .check(values::number(text)?)
        .map_err(|e| e.to_string())
}

pub(super) fn supply_v(text: &str) -> Result<f64, String> {
    bounded(text, limits::SUPPLY_V)
}

pub(super) fn level_v(text: &str) -> Result<f64, String> {
    bounded(text, limits::LEVEL_V)
}

pub(super) fn adc_ref_v(text: &str) -> Result<f64, String> {
    bounded(text, limits::ADC_REFERENCE_V)
}

pub(super) fn rated_ma(text: &str) -> Result<f64, String> {
    bounded(text, limits::RATED_MA)
}

pub(super) fn pulse_ua(text: &str) -> Result<f64, String> {
    bounded(text, limits::PULSE_UA)
}

pub(super) fn dc_ua(text: &str) -> Result<f64, String> {
    bounded(text, limits::DC_UA)
}

/// `LOW:HIGH`, each a level within bounds, low below high.
pub(super) fn rails(text: &str) -> Result<(f64, f64), String> {
    let (low, high) = values::rails_v(text)?;
    Ok((
        limits::LEVEL_V.check(low).map_err(|e| e.to_string())?,
        limits::LEVEL_V.check(high).map_err(|e| e.to_string())?,
    ))
}

/// A rate within the pipeline's range, with its one message.
pub(super) fn rate_hz(text: &str) -> Result<f64, String> {
    check_sample_rate(values::number(text)?).map_err(|e| e.to_string())
}

pub(super) fn ohms(text: &str) -> Result<f64, String> {
    parse_value(text, Kind::Resistance).map_err(|e| e.to_string())
}

pub(super) fn farads(text: &str) -> Result<f64, String> {
    parse_value(text, Kind::Capacitance).map_err(|e| e.to_string())
}

/// `KIND[,KEY=VALUE...]`, read through the circuit file's own rules by
/// writing it as the TOML of one stage.
pub(super) fn stage(text: &str) -> Result<StageDraft, String> {
    let mut parts = text.split(',');
    let kind = parts.next().unwrap_or("").trim();
    let plain = |s: &str| {
        !s.is_empty()
            && s.chars()
                .all(|c| c.is_alphanumeric() || "._+-µ:".contains(c))
    };
    if !plain(kind) {
        return Err(format!(
            "'{text}': expected KIND[,KEY=VALUE...], such as lowpass,r=47k,c=1u"
        ));
    }
    let mut toml = format!("kind = \"{kind}\"\n");
    for part in parts {
        let (key, value) = part
            .split_once('=')
            .map(|(k, v)| (k.trim(), v.trim()))
            .filter(|(k, v)| plain(k) && plain(v))
            .ok_or_else(|| format!("'{part}': expected KEY=VALUE, such as r=47k"))?;
        toml.push_str(&format!("{key} = \"{value}\"\n"));
    }
    let draft = StageDraft::from_toml(&toml).map_err(|e| e.to_string())?;
    draft
        .resolve()
        .map(|_| draft)
        .map_err(|e| format!("{kind} {e}"))
}

#[cfg(test)]
mod tests {
    use super::*;
    use plethwire::frontend::Ohms;

    #[test]
    fn stage_options_read_like_the_file() {
        let s = stage("inverting,rin=1k,rf=470k,cf=100n").unwrap();
        assert_eq!(s.rin, Some(Ohms(1e3)));
        assert_eq!(s.rf, Some(Ohms(470e3)));
        assert!(s.cf.is_some_and(|c| (c.0 - 100e-9).abs() < 1e-20));
        assert!(stage("buffer").is_ok());
        let e = stage("lowpass,r=47k").unwrap_err();
        assert_eq!(e, "lowpass missing c");
        let e = stage("lowpass,r=47k,c=1u,rf=1k").unwrap_err();
        assert_eq!(e, "lowpass does not take rf (it takes r, c)");
        let e = stage("lowpass,r=-47k,c=1u").unwrap_err();
        assert!(e.contains("above 0"), "{e}");
        let e = stage("bandpass,r=1k").unwrap_err();
        assert!(e.contains("\"bandpass\" is not one of highpass"), "{e}");
        assert!(stage("lowpass,r=\"1k\"").is_err());
        assert!(stage("lowpass,r").is_err());
    }
}
