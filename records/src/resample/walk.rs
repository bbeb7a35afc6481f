//! [`Resampler::run`](super::Resampler::run) a frame at a time: the same
//! grid values, bit for bit, and the same report, holding three frames.

use super::{ResampleReport, Resampler, OFF_GRID_PERIODS};

/// A frame: its time (seconds) and one value per column.
#[derive(Debug, Clone, Default)]
struct Frame {
    t: f64,
    values: Vec<f64>,
}

/// Frames of a known count, onto the grid of a [`Resampler`], as they
/// come ([`GridWalk::push`]), the grid samples taken out as they are
/// ready ([`GridWalk::take`]).
#[derive(Debug, Clone)]
pub struct GridWalk {
    resampler: Resampler,
    period: f64,
    frames: u64,
    /// Grid samples in all, and the next one's index.
    grid: u64,
    k: u64,
    /// Frames pushed; the two the next grid time lies between (`a`, at
    /// index `i`, and `b`) and the one after them, once pushed.
    pushed: u64,
    i: u64,
    a: Option<Frame>,
    b: Option<Frame>,
    next: Option<Frame>,
    /// A frame's buffers kept for the next push.
    spare: Option<Frame>,
    t0: f64,
    missing: usize,
    off_grid: usize,
    longest_gap_s: f64,
    last_t: f64,
}

impl GridWalk {
    /// A walk over `frames` frames (at least two) from `first_s` to
    /// `last_s` seconds onto `resampler`'s grid: as many grid samples as
    /// [`Resampler::run`] makes for those times.
    pub fn new(resampler: Resampler, frames: u64, first_s: f64, last_s: f64) -> GridWalk {
        let period = 1.0 / resampler.fs;
        let span = last_s - first_s;
        // As `Resampler::run` counts them.
        let grid = (span / period + 1e-9).floor() as u64 + 1;
        GridWalk {
            resampler,
            period,
            frames,
            grid,
            k: 0,
            pushed: 0,
            i: 0,
            a: None,
            b: None,
            next: None,
            spare: None,
            t0: first_s,
            missing: 0,
            off_grid: 0,
            longest_gap_s: 0.0,
            last_t: first_s,
        }
    }

    /// Grid samples the walk makes in all.
    pub fn grid_samples(&self) -> u64 {
        self.grid
    }

    /// Whether the walk takes another frame before it can give more grid
    /// samples ([`GridWalk::take`] gives none until it is pushed).
    pub fn wants_frame(&self) -> bool {
        self.pushed < self.frames && (self.b.is_none() || self.next.is_none())
    }

    /// The next frame, at `t` seconds (after the last), with one value
    /// per column (as many each time); call only while
    /// [`GridWalk::wants_frame`].
    pub fn push(&mut self, t: f64, values: &[f64]) {
        let mut frame = self.spare.take().unwrap_or_default();
        frame.t = t;
        frame.values.clear();
        frame.values.extend_from_slice(values);
        let slot = if self.a.is_none() {
            &mut self.a
        } else if self.b.is_none() {
            &mut self.b
        } else {
            &mut self.next
        };
        *slot = Some(frame);
        if self.pushed > 0 {
            self.longest_gap_s = f64::max(self.longest_gap_s, t - self.last_t);
        }
        let at = (t - self.t0) / self.period;
        if (at - at.round()).abs() > OFF_GRID_PERIODS {
            self.off_grid += 1;
        }
        self.last_t = t;
        self.pushed += 1;
    }

    /// Up to `limit` more grid samples, each column's onto the end of its
    /// buffer in `out`: as many as the frames pushed allow.
    pub fn take(&mut self, limit: usize, out: &mut [Vec<f64>]) -> usize {
        let mut made = 0;
        while made < limit && self.k < self.grid {
            let t = self.t0 + self.k as f64 * self.period;
            let (Some(a), Some(b)) = (&self.a, &self.b) else {
                return made;
            };
            // As `run`: move on while the frame after `a` is not later
            // than the grid time and is not the last.
            if self.i + 2 < self.frames && b.t <= t {
                if self.next.is_none() {
                    return made;
                }
                // a <- b <- next; the old `a`'s buffers are kept.
                self.spare = std::mem::replace(&mut self.a, self.b.take());
                self.b = self.next.take();
                self.i += 1;
                continue;
            }
            let (ta, tb) = (a.t, b.t);
            let bridged = tb - ta <= self.resampler.max_gap_s;
            let w = ((t - ta) / (tb - ta)).clamp(0.0, 1.0);
            let on_frame = w == 0.0 || w == 1.0;
            if !bridged && !on_frame {
                self.missing += 1;
            }
            for ((col, va), vb) in out.iter_mut().zip(&a.values).zip(&b.values) {
                col.push(if bridged || on_frame {
                    va + w * (vb - va)
                } else {
                    f64::NAN
                });
            }
            self.k += 1;
            made += 1;
        }
        made
    }

    /// Whether every grid sample has been taken.
    pub fn is_done(&self) -> bool {
        self.k == self.grid
    }

    /// What the walk did, as [`Resampler::run`] reports it, once every
    /// frame is pushed.
    pub fn report(&self) -> ResampleReport {
        ResampleReport {
            grid_hz: self.resampler.fs,
            grid_rate_from: "given",
            frames: self.pushed as usize,
            resampled_share: self.off_grid as f64 / self.pushed as f64,
            longest_gap_s: self.longest_gap_s,
            max_gap_s: self.resampler.max_gap_s,
            missing_samples: self.missing,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Frames pushed one at a time, grid samples taken `limit` at a time.
    fn walked(r: Resampler, times: &[f64], values: &[&[f64]], limit: usize) -> GridWalk {
        let n = times.len();
        let mut walk = GridWalk::new(r, n as u64, times[0], times[n - 1]);
        let mut out = vec![Vec::new(); values.len()];
        let mut next = 0;
        loop {
            if walk.take(limit, &mut out) > 0 {
                continue;
            }
            if !walk.wants_frame() {
                break;
            }
            let row: Vec<f64> = values.iter().map(|v| v[next]).collect();
            walk.push(times[next], &row);
            next += 1;
        }
        assert!(walk.is_done());
        let (whole, report) = r.run(times, values);
        let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
        for (got, want) in out.iter().zip(&whole) {
            assert_eq!(bits(got), bits(want), "limit {limit}");
        }
        assert_eq!(walk.report(), report, "limit {limit}");
        walk
    }

    #[test]
    fn a_walk_is_the_whole_run_bit_for_bit() {
        // Uneven frames with jitter, a long gap and a NaN, at two grids.
        let mut times = Vec::new();
        let mut t = 0.0;
        for k in 0..400 {
            t += 1.0 / 30.0 + ((k * 37) % 11) as f64 * 1e-3;
            if k == 200 {
                t += 0.6;
            }
            times.push(t);
        }
        let v: Vec<f64> = (0..400)
            .map(|k| {
                if k == 50 {
                    f64::NAN
                } else {
                    (k as f64 * 0.3).sin()
                }
            })
            .collect();
        let w: Vec<f64> = (0..400).map(|k| k as f64).collect();
        for fs in [30.0, 100.0, 7.5] {
            let r = Resampler {
                fs,
                max_gap_s: 0.25,
            };
            for limit in [1, 7, 10_000] {
                walked(r, &times, &[&v, &w], limit);
            }
        }
    }

    #[test]
    fn two_frames_and_grid_times_on_the_frames() {
        let r = Resampler {
            fs: 20.0,
            max_gap_s: 0.25,
        };
        walked(r, &[0.0, 0.3], &[&[1.0, 4.0]], 3);
        walked(r, &[0.0, 0.1, 0.25, 0.3], &[&[0.0, 1.0, 2.5, 4.0]], 1);
        // No columns at all: only the report.
        let walk = walked(r, &[0.0, 0.1, 0.5, 0.6], &[], 2);
        assert_eq!(walk.report().missing_samples, 7);
    }
}
