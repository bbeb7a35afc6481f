//! The values a circuit may hold: each voltage, current and count between
//! bounds a sensor front end can have, so that no number the report works
//! out overflows or vanishes. The circuit file's checks and the command
//! line's parsers use the same bounds; component values have theirs in
//! [`super::Kind::range`].

use super::quantity::plain;

/// A closed or half-open range of one quantity, with its unit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Bounds {
    /// The least value.
    pub least: f64,
    /// `least` itself is refused (the value must be above it).
    pub above_least: bool,
    /// The most value, allowed.
    pub most: f64,
    /// The unit, for the message.
    pub unit: &'static str,
}

/// A value outside its [`Bounds`]: `must be above 0 V and at most 100 V,
/// not 1e308`.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
#[error("must be {} and at most {} {}, not {}", .bounds.floor_text(), .bounds.most, .bounds.unit, plain(*.value))]
pub struct OutOfBounds {
    /// The value refused.
    pub value: f64,
    /// The bounds it is outside.
    pub bounds: Bounds,
}

impl Bounds {
    fn floor_text(&self) -> String {
        let word = if self.above_least {
            "above"
        } else {
            "at least"
        };
        format!("{word} {} {}", self.least, self.unit)
    }

    /// `value` if it is finite and within the bounds.
    pub fn check(&self, value: f64) -> Result<f64, OutOfBounds> {
        let floor_ok = if self.above_least {
            value > self.least
        } else {
            value >= self.least
        };
        if value.is_finite() && floor_ok && value <= self.most {
            Ok(value)
        } else {
            Err(OutOfBounds {
                value,
                bounds: *self,
            })
        }
    }
}

/// The largest voltage anywhere, volts: a battery or USB powered front end
/// has a few volts, and none has a hundred.
pub const MAX_VOLTS: f64 = 100.0;

/// A supply or forward voltage: above 0 V, at most [`MAX_VOLTS`].
pub const SUPPLY_V: Bounds = Bounds {
    least: 0.0,
    above_least: true,
    most: MAX_VOLTS,
    unit: "V",
};

/// A rail, bias or reference level: ±[`MAX_VOLTS`].
pub const LEVEL_V: Bounds = Bounds {
    least: -MAX_VOLTS,
    above_least: false,
    most: MAX_VOLTS,
    unit: "V",
};

/// An ADC reference: 1 mV (below it one step is lost in the noise of any
/// ADC) to [`MAX_VOLTS`].
pub const ADC_REFERENCE_V: Bounds = Bounds {
    least: 1e-3,
    above_least: false,
    most: MAX_VOLTS,
    unit: "V",
};

/// A pulse's photocurrent change, µA: above 0, at most 100 mA (more than
/// any photodiode under an LED gives).
pub const PULSE_UA: Bounds = Bounds {
    least: 0.0,
    above_least: true,
    most: 1e5,
    unit: "µA",
};

/// A steady photocurrent, µA: 0 to 100 mA.
pub const DC_UA: Bounds = Bounds {
    least: 0.0,
    above_least: false,
    most: 1e5,
    unit: "µA",
};

/// An LED's rated current, mA: above 0, at most 10 A.
pub const RATED_MA: Bounds = Bounds {
    least: 0.0,
    above_least: true,
    most: 1e4,
    unit: "mA",
};

/// Most resistors in parallel in the LED drive.
pub const MAX_PARALLEL: u32 = 100;

/// Most stages after the detector: their gains multiply, and sixteen of
/// the largest still give a finite number.
pub const MAX_STAGES: usize = 16;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bounds_refuse_nonsense_with_one_message() {
        assert_eq!(SUPPLY_V.check(5.0), Ok(5.0));
        let e = SUPPLY_V.check(1e308).unwrap_err();
        assert_eq!(
            e.to_string(),
            "must be above 0 V and at most 100 V, not 1e308"
        );
        assert!(SUPPLY_V.check(0.0).is_err());
        assert!(SUPPLY_V.check(f64::NAN).is_err());
        assert_eq!(LEVEL_V.check(-100.0), Ok(-100.0));
        let e = LEVEL_V.check(-101.0).unwrap_err();
        assert_eq!(
            e.to_string(),
            "must be at least -100 V and at most 100 V, not -101"
        );
        assert!(ADC_REFERENCE_V.check(1e-320).is_err());
        assert_eq!(DC_UA.check(0.0), Ok(0.0));
        assert!(PULSE_UA.check(0.0).is_err());
    }
}
