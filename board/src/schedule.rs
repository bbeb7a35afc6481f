//! Sample deadlines from a free-running timer, and missed ticks counted.
//!
//! Sample `k` is due at `origin + k · tick_hz / rate_hz` timer ticks,
//! rounded up, computed afresh for every `k` rather than by adding a
//! rounded period: a period that is not a whole number of ticks (300 Hz on
//! a 1 MHz timer) then costs at most one tick of jitter and never drifts.
//! The firmware sleeps until [`Schedule::deadline`] and reports the time it
//! woke; whatever deadlines passed meanwhile without a sample are missed.

/// A sample that is due now.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Due {
    /// Index of the sample to take (the latest deadline passed).
    pub index: u64,
    /// Deadlines passed since the last sample, before this one.
    pub missed: u64,
    /// Timer ticks since this sample's deadline.
    pub late_ticks: u64,
}

/// Deadlines for one sample rate on one timer.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Schedule {
    tick_hz: u64,
    rate_hz: u64,
    origin: u64,
    next: u64,
    missed: u64,
    max_late: u64,
}

impl Schedule {
    /// Deadlines for `rate_hz` samples a second on a timer counting
    /// `tick_hz`; `None` unless `0 < rate_hz ≤ tick_hz`.
    pub fn new(tick_hz: u64, rate_hz: u32) -> Option<Self> {
        let rate_hz = u64::from(rate_hz);
        (rate_hz > 0 && rate_hz <= tick_hz).then_some(Self {
            tick_hz,
            rate_hz,
            origin: 0,
            next: 0,
            missed: 0,
            max_late: 0,
        })
    }

    /// Begin: sample 0 is due at timer count `now`.
    pub fn start(&mut self, now: u64) {
        self.origin = now;
        self.next = 0;
    }

    /// Timer count at which sample `k` is due.
    pub fn due_at(&self, k: u64) -> u64 {
        let (t, r) = (self.tick_hz, self.rate_hz);
        // Split into whole seconds and the rest so no product overflows.
        self.origin + (k / r) * t + ((k % r) * t).div_ceil(r)
    }

    /// Timer count at which the next sample is due: sleep until then.
    pub fn deadline(&self) -> u64 {
        self.due_at(self.next)
    }

    /// The timer woke at count `now`: the sample to take, or `None` when
    /// no deadline has passed yet (an early or spurious wake-up).
    pub fn on_tick(&mut self, now: u64) -> Option<Due> {
        if now < self.deadline() {
            return None;
        }
        let elapsed = now - self.origin;
        let (t, r) = (self.tick_hz, self.rate_hz);
        let index = (elapsed / t) * r + (elapsed % t) * r / t;
        let missed = index - self.next;
        let late_ticks = now - self.due_at(index);
        self.missed += missed;
        self.max_late = self.max_late.max(late_ticks);
        self.next = index + 1;
        Some(Due {
            index,
            missed,
            late_ticks,
        })
    }

    /// Deadlines missed since the start.
    pub fn missed(&self) -> u64 {
        self.missed
    }

    /// The latest any sample was taken after its deadline, timer ticks.
    pub fn max_late_ticks(&self) -> u64 {
        self.max_late
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn whole_periods_come_every_period() {
        let mut s = Schedule::new(1_000_000, 250).unwrap();
        s.start(17);
        for k in 0..1000 {
            assert_eq!(s.deadline(), 17 + 4000 * k);
            let due = s.on_tick(s.deadline()).unwrap();
            assert_eq!(
                due,
                Due {
                    index: k,
                    missed: 0,
                    late_ticks: 0
                }
            );
        }
        assert_eq!(s.missed(), 0);
    }

    #[test]
    fn fractional_periods_do_not_drift() {
        // 300 Hz on a 32768 Hz timer: 109.23 ticks a period.
        let mut s = Schedule::new(32_768, 300).unwrap();
        s.start(5);
        let mut last = 5;
        for k in 1..=30_000u64 {
            s.on_tick(s.deadline()).unwrap();
            let d = s.deadline();
            assert!((109..=110).contains(&(d - last)), "period {}", d - last);
            last = d;
            if k % 300 == 0 {
                assert_eq!(d, 5 + 32_768 * (k / 300), "exactly on the second");
            }
        }
    }

    #[test]
    fn a_late_wake_counts_the_deadlines_it_passed() {
        let mut s = Schedule::new(1_000_000, 250).unwrap();
        s.start(0);
        assert_eq!(s.on_tick(0).unwrap().index, 0);
        // Woke 2.5 periods after sample 1's deadline: samples 1 and 2 missed.
        let due = s.on_tick(4000 + 10_000).unwrap();
        assert_eq!(
            due,
            Due {
                index: 3,
                missed: 2,
                late_ticks: 2000
            }
        );
        assert_eq!(s.deadline(), 16_000, "back on the grid");
        assert_eq!(s.missed(), 2);
        assert_eq!(s.max_late_ticks(), 2000);
        let due = s.on_tick(16_001).unwrap();
        assert_eq!((due.index, due.missed, due.late_ticks), (4, 0, 1));
        assert_eq!(s.missed(), 2);
    }

    #[test]
    fn an_early_wake_takes_no_sample() {
        let mut s = Schedule::new(1_000_000, 250).unwrap();
        s.start(100);
        assert_eq!(s.on_tick(99), None);
        assert!(s.on_tick(100).is_some());
        assert_eq!(s.on_tick(4099), None);
        assert_eq!(s.on_tick(4100).unwrap().index, 1);
        assert_eq!(s.missed(), 0);
    }

    #[test]
    fn rates_the_timer_cannot_pace_are_refused() {
        assert!(Schedule::new(1_000_000, 0).is_none());
        assert!(Schedule::new(100, 250).is_none());
        assert!(Schedule::new(250, 250).is_some());
    }

    #[test]
    fn long_runs_do_not_overflow() {
        // A 100 MHz tick for a year at 1 kHz.
        let mut s = Schedule::new(100_000_000, 1000).unwrap();
        s.start(0);
        let year = 365 * 24 * 3600 * 100_000_000u64;
        let due = s.on_tick(year).unwrap();
        assert_eq!(due.index, 365 * 24 * 3600 * 1000);
        assert_eq!(s.deadline(), year + 100_000);
    }
}
