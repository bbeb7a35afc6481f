//! Poles, zeros and gain: the analog Butterworth prototype, its frequency
//! transformations, and the bilinear transform.
//!
//! The steps and their order follow `scipy.signal.iirfilter` (`buttap`,
//! `lp2lp_zpk`, `lp2hp_zpk`, `lp2bp_zpk`, `bilinear_zpk`) so that the
//! designs can be checked against scipy to ~1e-12.
//! Reference: A. V. Oppenheim, R. W. Schafer, *Discrete-Time Signal
//! Processing*, 3rd ed., §7.1.2 (bilinear transformation, frequency
//! pre-warping `Ω = 2·fs·tan(ω/2)`).

use crate::math::{Complex, PI};
use heapless::Vec;

/// Largest number of poles (or zeros) a design holds: band-pass order 8.
pub const MAX_ROOTS: usize = 16;

/// A fixed-capacity list of complex roots.
#[derive(Clone, Debug)]
pub struct Roots {
    items: Vec<Complex, MAX_ROOTS>,
}

impl Roots {
    /// No roots.
    pub const fn new() -> Self {
        Self { items: Vec::new() }
    }
    /// Append a root (callers never exceed the capacity: orders are checked).
    pub fn push(&mut self, z: Complex) {
        let _ = self.items.push(z);
    }
    /// Remove and return the root at `i`, keeping the order of the others.
    pub fn remove(&mut self, i: usize) -> Complex {
        self.items.remove(i)
    }
    /// The roots.
    pub fn as_slice(&self) -> &[Complex] {
        &self.items
    }
    /// Number of roots.
    pub fn len(&self) -> usize {
        self.items.len()
    }
    /// No roots at all?
    pub fn is_empty(&self) -> bool {
        self.items.is_empty()
    }
    fn map(&self, f: impl Fn(Complex) -> Complex) -> Self {
        let mut out = Self::new();
        for &z in self.as_slice() {
            out.push(f(z));
        }
        out
    }
    fn product(&self, f: impl Fn(Complex) -> Complex) -> Complex {
        self.as_slice()
            .iter()
            .fold(Complex::real(1.0), |acc, &z| acc * f(z))
    }
}

impl Default for Roots {
    fn default() -> Self {
        Self::new()
    }
}

/// A filter as zeros, poles and gain.
#[derive(Clone, Debug)]
pub struct Zpk {
    /// Zeros.
    pub z: Roots,
    /// Poles.
    pub p: Roots,
    /// Gain.
    pub k: f64,
}

impl Zpk {
    /// Analog Butterworth low-pass prototype of `order` (corner 1 rad/s):
    /// poles `−exp(jπm/(2n))`, m = −n+1, −n+3, …, n−1, the middle one
    /// exactly −1 for odd orders.
    pub fn butterworth_prototype(order: usize) -> Self {
        let n = order as i32;
        let mut p = Roots::new();
        let mut m = -n + 1;
        while m < n {
            if m == 0 {
                p.push(Complex::real(-1.0));
            } else {
                p.push(-Complex::expj(PI * m as f64 / (2 * n) as f64));
            }
            m += 2;
        }
        Self {
            z: Roots::new(),
            p,
            k: 1.0,
        }
    }

    fn degree(&self) -> usize {
        self.p.len() - self.z.len()
    }

    /// Low-pass to low-pass with corner `wo` rad/s.
    pub fn lowpass(&self, wo: f64) -> Self {
        Self {
            z: self.z.map(|z| z.scale(wo)),
            p: self.p.map(|p| p.scale(wo)),
            k: self.k * libm::pow(wo, self.degree() as f64),
        }
    }

    /// Low-pass to high-pass with corner `wo` rad/s.
    pub fn highpass(&self, wo: f64) -> Self {
        let w = Complex::real(wo);
        let mut z = self.z.map(|z| w / z);
        let p = self.p.map(|p| w / p);
        for _ in 0..self.degree() {
            z.push(Complex::real(0.0));
        }
        let ratio = self.z.product(|z| -z) / self.p.product(|p| -p);
        Self {
            z,
            p,
            k: self.k * ratio.re,
        }
    }

    /// Low-pass to band-pass with centre `wo` and width `bw` rad/s.
    pub fn bandpass(&self, wo: f64, bw: f64) -> Self {
        let wo2 = Complex::real(wo * wo);
        let split = |r: &Roots| {
            let mut out = Roots::new();
            for &x in r.as_slice() {
                let x = x.scale(bw / 2.0);
                out.push(x + (x * x - wo2).sqrt());
            }
            for &x in r.as_slice() {
                let x = x.scale(bw / 2.0);
                out.push(x - (x * x - wo2).sqrt());
            }
            out
        };
        let mut z = split(&self.z);
        let p = split(&self.p);
        for _ in 0..self.degree() {
            z.push(Complex::real(0.0));
        }
        Self {
            z,
            p,
            k: self.k * libm::pow(bw, self.degree() as f64),
        }
    }

    /// Bilinear transform `s = 2·fs·(z − 1)/(z + 1)`; zeros at infinity go
    /// to z = −1.
    pub fn bilinear(&self, fs: f64) -> Self {
        let fs2 = Complex::real(2.0 * fs);
        let mut z = self.z.map(|z| (fs2 + z) / (fs2 - z));
        let p = self.p.map(|p| (fs2 + p) / (fs2 - p));
        for _ in 0..self.degree() {
            z.push(Complex::real(-1.0));
        }
        let ratio = self.z.product(|z| fs2 - z) / self.p.product(|p| fs2 - p);
        Self {
            z,
            p,
            k: self.k * ratio.re,
        }
    }
}
