//! Zeros and poles into second-order sections, pairing each pole pair with
//! its nearest zeros.
//!
//! This follows `scipy.signal.zpk2sos(..., pairing='nearest')` step for step
//! (including where the gain goes and the order of the sections) so that
//! designs can be compared with scipy coefficient by coefficient: poles
//! closest to the unit circle go into the *last* section, each matched with
//! the zeros nearest to it, and the whole gain goes into the first section.
//! See L. B. Jackson, *Digital Filters and Signal Processing*, 3rd ed.,
//! §11.3 (pole-zero pairing and ordering of cascade sections).

use super::zpk::{Roots, Zpk};
use crate::filter::Biquad;
use crate::math::Complex;

/// Most sections one call can produce.
pub const MAX_SOS: usize = super::zpk::MAX_ROOTS / 2;

#[derive(Clone, Copy, PartialEq)]
enum Want {
    Any,
    Real,
    Complex,
}

fn is_real(z: Complex) -> bool {
    z.im == 0.0
}

fn sort_by_key(v: &mut [Complex], key: impl Fn(&Complex) -> (f64, f64)) {
    // Insertion sort: stable, allocation-free, and the lists are tiny.
    for i in 1..v.len() {
        let mut j = i;
        while j > 0 && key(&v[j - 1]) > key(&v[j]) {
            v.swap(j - 1, j);
            j -= 1;
        }
    }
}

/// One representative per conjugate pair (positive imaginary part, the
/// average of the pair), sorted by real part, followed by the real roots in
/// ascending order (scipy's `_cplxreal`).
fn conjugate_pairs_then_reals(r: &Roots) -> Roots {
    let tol = 100.0 * f64::EPSILON;
    let (mut pos, mut neg, mut real) = (Roots::new(), Roots::new(), Roots::new());
    for &z in r.as_slice() {
        if z.im.abs() <= tol * z.abs() {
            real.push(Complex::real(z.re));
        } else if z.im > 0.0 {
            pos.push(z);
        } else {
            neg.push(z);
        }
    }
    let mut pos_v = [Complex::default(); super::zpk::MAX_ROOTS];
    let mut neg_v = [Complex::default(); super::zpk::MAX_ROOTS];
    let mut real_v = [Complex::default(); super::zpk::MAX_ROOTS];
    let (np, nn, nr) = (pos.len(), neg.len(), real.len());
    pos_v[..np].copy_from_slice(pos.as_slice());
    neg_v[..nn].copy_from_slice(neg.as_slice());
    real_v[..nr].copy_from_slice(real.as_slice());
    let key = |z: &Complex| (z.re, z.im.abs());
    sort_by_key(&mut pos_v[..np], key);
    sort_by_key(&mut neg_v[..nn], key);
    sort_by_key(&mut real_v[..nr], |z| (z.re, 0.0));
    let mut out = Roots::new();
    for i in 0..np.min(nn) {
        out.push((pos_v[i] + neg_v[i].conj()).scale(0.5));
    }
    for &z in &real_v[..nr] {
        out.push(z);
    }
    out
}

/// Index of the root in `from` nearest to `to` among those of the wanted
/// kind (first one on ties, as a stable sort gives).
fn nearest(from: &Roots, to: Complex, want: Want) -> Option<usize> {
    let mut best: Option<(usize, f64)> = None;
    for (i, &z) in from.as_slice().iter().enumerate() {
        let ok = match want {
            Want::Any => true,
            Want::Real => is_real(z),
            Want::Complex => !is_real(z),
        };
        let d = (z - to).abs();
        if ok && best.is_none_or(|(_, bd)| d < bd) {
            best = Some((i, d));
        }
    }
    best.map(|(i, _)| i)
}

/// Coefficients of `∏(1 − r·z⁻¹)` for up to two roots, right-aligned in
/// three slots as scipy's `_single_zpksos` does.
fn poly(roots: &[Complex]) -> [f64; 3] {
    match roots {
        [] => [0.0, 0.0, 1.0],
        [r] => [0.0, 1.0, -r.re + 0.0],
        // `+ 0.0` turns a −0.0 into 0.0 for tidy printing.
        [r1, r2] => [1.0, -(*r1 + *r2).re + 0.0, (*r1 * *r2).re + 0.0],
        _ => [0.0, 0.0, 1.0],
    }
}

fn section(z: &[Complex], p: &[Complex]) -> Biquad<f64> {
    let b = poly(z);
    let a = poly(p);
    Biquad {
        b0: b[0],
        b1: b[1],
        b2: b[2],
        a1: a[1],
        a2: a[2],
    }
}

/// Convert a digital filter to sections; returns the sections and how many.
pub fn zpk_to_sections(zpk: &Zpk) -> ([Biquad<f64>; MAX_SOS], usize) {
    let mut z = zpk.z.clone();
    let mut p = zpk.p.clone();
    while z.len() < p.len() {
        z.push(Complex::real(0.0));
    }
    while p.len() < z.len() {
        p.push(Complex::real(0.0));
    }
    let n = p.len().div_ceil(2);
    if p.len() % 2 == 1 {
        p.push(Complex::real(0.0));
        z.push(Complex::real(0.0));
    }
    let mut z = conjugate_pairs_then_reals(&z);
    let mut p = conjugate_pairs_then_reals(&p);
    let zero = Complex::real(0.0);
    let mut out = [Biquad::<f64>::default(); MAX_SOS];
    for si in (0..n).rev() {
        // The pole closest to the unit circle goes last.
        let mut i1 = 0;
        for (i, q) in p.as_slice().iter().enumerate() {
            if (1.0 - q.abs()).abs() < (1.0 - p.as_slice()[i1].abs()).abs() {
                i1 = i;
            }
        }
        let p1 = p.remove(i1);
        let reals_left = p.as_slice().iter().filter(|q| is_real(**q)).count();
        let real_zeros = z.as_slice().iter().filter(|q| is_real(**q)).count();
        let take = |z: &mut Roots, want: Want| {
            let i = nearest(z, p1, want).or_else(|| nearest(z, p1, Want::Any));
            i.map(|i| z.remove(i)).unwrap_or(zero)
        };
        out[si] = if is_real(p1) && reals_left == 0 {
            // The last real pole, alone in a first-order section.
            let z1 = take(&mut z, Want::Real);
            section(&[z1, zero], &[p1, zero])
        } else if p.len() + 1 == z.len() && !is_real(p1) && reals_left == 1 && real_zeros == 1 {
            // One real pole and one real zero must stay together later.
            let z1 = take(&mut z, Want::Complex);
            section(&[z1, z1.conj()], &[p1, p1.conj()])
        } else {
            let p2 = if is_real(p1) {
                let mut best: Option<usize> = None;
                for (i, q) in p.as_slice().iter().enumerate() {
                    let better = best.is_none_or(|b: usize| {
                        (q.abs() - 1.0).abs() < (p.as_slice()[b].abs() - 1.0).abs()
                    });
                    if is_real(*q) && better {
                        best = Some(i);
                    }
                }
                best.map(|i| p.remove(i)).unwrap_or(zero)
            } else {
                p1.conj()
            };
            if z.is_empty() {
                section(&[], &[p1, p2])
            } else {
                let z1 = take(&mut z, Want::Any);
                if !is_real(z1) {
                    section(&[z1, z1.conj()], &[p1, p2])
                } else if !z.is_empty() {
                    let z2 = take(&mut z, Want::Real);
                    section(&[z1, z2], &[p1, p2])
                } else {
                    section(&[z1], &[p1, p2])
                }
            }
        };
    }
    if n > 0 {
        out[0].b0 *= zpk.k;
        out[0].b1 *= zpk.k;
        out[0].b2 *= zpk.k;
    }
    (out, n)
}
