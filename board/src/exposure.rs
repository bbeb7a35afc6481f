//! Exposure control: step the LED drive so the DC level of the LED-on
//! reading stays in the middle of the ADC's range.
//!
//! Too little light and the pulse (about 1 % of the DC level at the
//! fingertip) drowns in ADC noise; too much and the peaks clip at the top
//! rail. Fingers, skin and ambient light differ by far more than the
//! front end's headroom, so the drive follows them.
//!
//! The DC level is an exponential average of the LED-on reading (time
//! constant [`DC_TAU_S`]) as a fraction of full scale. Inside the window
//! [`DC_LOW`]–[`DC_HIGH`] the drive never changes: that is the dead band.
//! Outside it a correction starts and goes on, one step per hold time
//! ([`HOLD_S`]), until the level is back in the aim band
//! [`DC_AIM_LOW`]–[`DC_AIM_HIGH`] — hysteresis, so a level sitting at a
//! window edge is moved well inside rather than nudged back and forth.

/// Below this DC level (fraction of full scale) the drive steps up.
pub const DC_LOW: f32 = 0.30;
/// Above this DC level the drive steps down.
pub const DC_HIGH: f32 = 0.70;
/// A correction upwards ends once the level reaches this.
pub const DC_AIM_LOW: f32 = 0.40;
/// A correction downwards ends once the level falls to this.
pub const DC_AIM_HIGH: f32 = 0.60;
/// Below this level the drive doubles instead of taking a fine step.
pub const DC_FAR_LOW: f32 = 0.10;
/// Above this level the drive halves instead of taking a fine step.
pub const DC_FAR_HIGH: f32 = 0.90;

/// A fine step multiplies the drive by `STEP_NUM / STEP_DEN` (up) or its
/// inverse (down). The aim band spans a ratio of 1.5, more than one step's
/// 1.25, so a level proportional to the drive cannot step over it: no
/// oscillation between the two window edges.
pub const STEP_NUM: u32 = 5;
/// See [`STEP_NUM`].
pub const STEP_DEN: u32 = 4;

/// Time constant of the DC average, s: long against ADC noise, short
/// enough to follow a finger being pressed.
pub const DC_TAU_S: f32 = 0.25;
/// Shortest time between two drive changes, s: four DC time constants, so
/// the average has settled (to 98 %) on the new drive before it is judged.
pub const HOLD_S: f32 = 1.0;

/// How the controller is tuned.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ExposureConfig {
    /// Drive at start, fraction of the PWM's full duty.
    pub initial_drive: f32,
    /// Highest drive ever set, fraction of full duty: a cap for the LED's
    /// current rating and its eye-safety class.
    pub max_drive: f32,
    /// Shortest time between changes, s ([`HOLD_S`]).
    pub hold_s: f32,
    /// Time constant of the DC average, s ([`DC_TAU_S`]).
    pub dc_tau_s: f32,
}

impl Default for ExposureConfig {
    /// Start at a quarter of full drive, no cap below full drive.
    fn default() -> Self {
        Self {
            initial_drive: 0.25,
            max_drive: 1.0,
            hold_s: HOLD_S,
            dc_tau_s: DC_TAU_S,
        }
    }
}

/// A change of the drive, to be applied to the PWM and reported.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DriveChange {
    /// Duty before, PWM counts.
    pub from: u16,
    /// Duty now, PWM counts.
    pub to: u16,
    /// The DC level that caused it, fraction of full scale.
    pub dc_level: f32,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Direction {
    Up,
    Down,
}

/// The exposure controller: readings in, drive changes out.
#[derive(Clone, Copy, Debug)]
pub struct Exposure {
    full_scale: f32,
    pwm_max: u16,
    min_duty: u16,
    max_duty: u16,
    duty: u16,
    alpha: f32,
    dc: Option<f32>,
    ambient: Option<f32>,
    hold: u32,
    since_change: u32,
    correcting: Option<Direction>,
}

impl Exposure {
    /// A controller for readings of a `full_scale` ADC taken
    /// `sample_rate_hz` times a second, driving a PWM whose full duty is
    /// `pwm_max` counts.
    pub fn new(
        config: &ExposureConfig,
        full_scale: u16,
        sample_rate_hz: f32,
        pwm_max: u16,
    ) -> Self {
        let pwm_max = pwm_max.max(1);
        let of_max = |f: f32| libm::roundf(f.clamp(0.0, 1.0) * pwm_max as f32) as u16;
        // Never fully dark: a drive of 0 would give no signal to steer by.
        let max_duty = of_max(config.max_drive).max(1);
        let duty = of_max(config.initial_drive).clamp(1, max_duty);
        let samples = |s: f32| (s * sample_rate_hz).max(1.0);
        Self {
            full_scale: f32::from(full_scale.max(1)),
            pwm_max,
            min_duty: 1,
            max_duty,
            duty,
            alpha: 1.0 - libm::expf(-1.0 / samples(config.dc_tau_s)),
            dc: None,
            ambient: None,
            hold: libm::ceilf(samples(config.hold_s)) as u32,
            since_change: 0,
            correcting: None,
        }
    }

    /// The duty to drive now, PWM counts.
    pub fn duty(&self) -> u16 {
        self.duty
    }

    /// The drive as a fraction of full duty in 1/65535 (the wire format's
    /// `led_drive`).
    pub fn drive_u16(&self) -> u16 {
        (u32::from(self.duty) * 65_535 / u32::from(self.pwm_max)) as u16
    }

    /// Highest duty this controller sets, PWM counts.
    pub fn max_duty(&self) -> u16 {
        self.max_duty
    }

    /// The DC level, fraction of full scale (0 before the first reading).
    pub fn dc_level(&self) -> f32 {
        self.dc.unwrap_or(0.0)
    }

    /// Has a DC level been measured (a first LED-on reading taken)?
    pub fn dc_measured(&self) -> bool {
        self.dc.is_some()
    }

    /// The ambient level: the LED-off reading's average with the DC
    /// level's time constant, fraction of full scale; `None` before the
    /// first reading.
    pub fn ambient_level(&self) -> Option<f32> {
        self.ambient
    }

    /// Take one LED-off (ambient) reading into the ambient average. It
    /// does not steer the drive.
    pub fn observe_ambient(&mut self, off: u16) {
        let x = f32::from(off) / self.full_scale;
        self.ambient = Some(match self.ambient {
            Some(a) => a + self.alpha * (x - a),
            None => x,
        });
    }

    /// Take one LED-on reading; returns the change of drive it calls for,
    /// if any. The caller applies it to the PWM.
    pub fn observe(&mut self, on: u16) -> Option<DriveChange> {
        let x = f32::from(on) / self.full_scale;
        let dc = match self.dc {
            Some(dc) => dc + self.alpha * (x - dc),
            None => x,
        };
        self.dc = Some(dc);
        self.since_change = self.since_change.saturating_add(1);
        if self.since_change < self.hold {
            return None;
        }
        let reached = match self.correcting {
            Some(Direction::Up) => dc >= DC_AIM_LOW,
            Some(Direction::Down) => dc <= DC_AIM_HIGH,
            None => true,
        };
        if reached {
            self.correcting = if dc < DC_LOW {
                Some(Direction::Up)
            } else if dc > DC_HIGH {
                Some(Direction::Down)
            } else {
                None
            };
        }
        let to = self.step(self.correcting?, dc);
        if to == self.duty {
            // At a limit: nothing to change, and nothing to report.
            return None;
        }
        let change = DriveChange {
            from: self.duty,
            to,
            dc_level: dc,
        };
        self.duty = to;
        self.since_change = 0;
        Some(change)
    }

    /// Undo `change` (the PWM refused it): the old duty is still in force.
    pub fn revert(&mut self, change: &DriveChange) {
        self.duty = change.from;
    }

    fn step(&self, direction: Direction, dc: f32) -> u16 {
        let d = u32::from(self.duty);
        let next = match direction {
            Direction::Up if dc < DC_FAR_LOW => d * 2,
            Direction::Up => (d * STEP_NUM / STEP_DEN).max(d + 1),
            Direction::Down if dc > DC_FAR_HIGH => d / 2,
            Direction::Down => (d * STEP_DEN / STEP_NUM).min(d.saturating_sub(1)),
        };
        next.clamp(u32::from(self.min_duty), u32::from(self.max_duty)) as u16
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::vec::Vec;

    const FS: u16 = 4095;
    const RATE: f32 = 100.0;

    fn controller(initial: f32) -> Exposure {
        fine_controller(initial, 1000)
    }

    fn fine_controller(initial: f32, pwm_max: u16) -> Exposure {
        let c = ExposureConfig {
            initial_drive: initial,
            ..ExposureConfig::default()
        };
        Exposure::new(&c, FS, RATE, pwm_max)
    }

    fn reading(level: f32) -> u16 {
        (level * FS as f32) as u16
    }

    /// Feed a constant level for `n` readings; the changes it caused.
    fn feed(e: &mut Exposure, level: f32, n: usize) -> Vec<(usize, DriveChange)> {
        (0..n)
            .filter_map(|i| e.observe(reading(level)).map(|c| (i, c)))
            .collect()
    }

    /// A finger whose DC level is proportional to the drive.
    fn closed_loop(e: &mut Exposure, light_per_duty: f32, n: usize) -> Vec<DriveChange> {
        (0..n)
            .filter_map(|_| {
                let level = (e.duty() as f32 * light_per_duty).min(1.0);
                e.observe(reading(level))
            })
            .collect()
    }

    #[test]
    fn steps_up_when_dark_and_down_when_bright() {
        let mut e = controller(0.25);
        assert_eq!(e.duty(), 250);
        let up = feed(&mut e, 0.2, 101);
        assert_eq!(up.len(), 1);
        assert_eq!((up[0].1.from, up[0].1.to), (250, 312), "× 5/4");
        let mut e = controller(0.25);
        let down = feed(&mut e, 0.8, 101);
        assert_eq!((down[0].1.from, down[0].1.to), (250, 200), "× 4/5");
    }

    #[test]
    fn far_off_levels_double_or_halve() {
        let mut e = controller(0.25);
        assert_eq!(feed(&mut e, 0.05, 101)[0].1.to, 500);
        let mut e = controller(0.25);
        assert_eq!(feed(&mut e, 1.0, 101)[0].1.to, 125);
    }

    #[test]
    fn no_change_inside_the_window() {
        for level in [0.31, 0.35, 0.5, 0.65, 0.69] {
            let mut e = controller(0.25);
            assert!(feed(&mut e, level, 10_000).is_empty(), "{level}");
            assert_eq!(e.duty(), 250);
        }
    }

    #[test]
    fn hold_time_separates_changes() {
        let mut e = controller(0.01);
        let changes = feed(&mut e, 0.2, 1000);
        assert!(changes.len() > 3);
        // 1 s at 100 Hz: the first change on the 100th reading, then every
        // 100 readings, never sooner.
        assert_eq!(changes[0].0, 99);
        for w in changes.windows(2) {
            assert_eq!(w[1].0 - w[0].0, 100);
        }
    }

    #[test]
    fn a_correction_continues_into_the_aim_band_then_stops() {
        // 0.00006 per duty count: 2500 → 0.15, below the window.
        let mut e = fine_controller(0.25, 10_000);
        let changes = closed_loop(&mut e, 0.00006, 3000);
        let level = e.duty() as f32 * 0.00006;
        assert!((DC_AIM_LOW..=DC_AIM_HIGH).contains(&level), "{level}");
        // Once inside, it stays: every change happened in the first steps.
        let last = changes.last().unwrap();
        assert_eq!(last.to, e.duty());
        assert!(changes.len() <= 5, "{changes:?}");
        assert!(e.duty() < e.max_duty(), "steered, not capped");
        // Past the window's edge the level kept going up (hysteresis).
        assert!(changes.iter().any(|c| c.dc_level > DC_LOW));
        assert!(changes.iter().all(|c| c.to > c.from));
    }

    #[test]
    fn from_the_top_rail_it_comes_down_without_overshooting() {
        let mut e = fine_controller(1.0, 10_000);
        let changes = closed_loop(&mut e, 0.0004, 5000);
        let level = (e.duty() as f32 * 0.0004).min(1.0);
        assert!((DC_AIM_LOW..=DC_AIM_HIGH).contains(&level), "{level}");
        assert!(changes.iter().all(|c| c.to < c.from), "{changes:?}");
    }

    #[test]
    fn every_change_is_reported_and_applied() {
        let mut e = controller(0.02);
        let mut duty = e.duty();
        for _ in 0..2000 {
            let level = (e.duty() as f32 * 0.0007).min(1.0);
            if let Some(c) = e.observe(reading(level)) {
                assert_eq!(c.from, duty, "each change starts where the last ended");
                duty = c.to;
            }
            assert_eq!(e.duty(), duty, "no change without a report");
        }
    }

    #[test]
    fn limits_hold_and_are_not_reported_as_changes() {
        let c = ExposureConfig {
            initial_drive: 0.4,
            max_drive: 0.5,
            ..ExposureConfig::default()
        };
        let mut e = Exposure::new(&c, FS, RATE, 1000);
        let changes = feed(&mut e, 0.05, 5000);
        assert_eq!(changes.len(), 1);
        assert_eq!(e.duty(), 500, "capped at max_drive");
        let mut e = controller(0.001);
        assert_eq!(e.duty(), 1);
        assert!(feed(&mut e, 1.0, 5000).is_empty(), "already at the floor");
        assert_eq!(e.duty(), 1);
    }

    #[test]
    fn revert_restores_the_old_duty() {
        let mut e = controller(0.25);
        let (_, c) = feed(&mut e, 0.2, 100)[0];
        e.revert(&c);
        assert_eq!(e.duty(), 250);
    }

    #[test]
    fn drive_is_reported_in_65535ths() {
        let e = controller(0.25);
        assert_eq!(e.drive_u16(), 16_383);
        assert_eq!(controller(1.0).drive_u16(), 65_535);
    }

    #[test]
    fn dc_level_is_a_slow_average() {
        let mut e = controller(0.25);
        e.observe(reading(0.5));
        assert!((e.dc_level() - 0.5).abs() < 1e-3);
        // One time constant (25 readings at 100 Hz) after a step to 0.1:
        // 1 − 1/e of the way.
        for _ in 0..25 {
            e.observe(reading(0.1));
        }
        let expected = 0.5 - 0.4 * (1.0 - (-1.0f32).exp());
        assert!((e.dc_level() - expected).abs() < 2e-3, "{}", e.dc_level());
    }

    #[test]
    fn ambient_level_is_the_same_slow_average_of_the_led_off_reading() {
        let mut e = controller(0.25);
        assert_eq!(e.ambient_level(), None);
        e.observe_ambient(reading(0.05));
        assert!((e.ambient_level().unwrap() - 0.05).abs() < 1e-3);
        // One time constant after a step to 0.25: 1 − 1/e of the way.
        for _ in 0..25 {
            e.observe_ambient(reading(0.25));
        }
        let expected = 0.05 + 0.2 * (1.0 - (-1.0f32).exp());
        let got = e.ambient_level().unwrap();
        assert!((got - expected).abs() < 2e-3, "{got}");
        // It never steers: the drive and the DC level are untouched.
        assert_eq!(
            (e.duty(), e.dc_measured()),
            (controller(0.25).duty(), false)
        );
    }
}
