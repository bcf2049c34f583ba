//! Complex numbers for several frequencies at once, real and imaginary parts in separate lanes: the placed rail's
//! matrices at N frequencies are factored together with the same operations on every lane, which the compiler
//! turns into vector instructions (the elimination has no pivoting, so every lane takes the same path).

use num_complex::Complex64 as C;
use std::ops::{Add, Mul, Sub};

/// N complex numbers, one per frequency of a batch.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Lanes<const N: usize> {
    /// Real parts.
    pub re: [f64; N],
    /// Imaginary parts.
    pub im: [f64; N],
}

impl<const N: usize> Default for Lanes<N> {
    fn default() -> Self {
        Lanes { re: [0.0; N], im: [0.0; N] }
    }
}

impl<const N: usize> Lanes<N> {
    /// The same number in every lane.
    #[inline(always)]
    pub fn splat(z: C) -> Self {
        Lanes { re: [z.re; N], im: [z.im; N] }
    }

    /// Lane l from `f(l)`. Inlined: the fill builds every entry of the system with it, and as a call it took 9 % of
    /// a prepared solve.
    #[inline(always)]
    pub fn from_fn(f: impl Fn(usize) -> C) -> Self {
        let mut out = Lanes::default();
        for l in 0..N {
            let z = f(l);
            out.re[l] = z.re;
            out.im[l] = z.im;
        }
        out
    }

    /// Lane l.
    #[inline(always)]
    pub fn lane(&self, l: usize) -> C {
        C::new(self.re[l], self.im[l])
    }

    /// self · r for a real r.
    #[inline(always)]
    pub fn scale(self, r: f64) -> Self {
        let mut out = self;
        for l in 0..N {
            out.re[l] *= r;
            out.im[l] *= r;
        }
        out
    }

    /// self + a · r for a real r.
    #[inline(always)]
    pub fn add_scaled(self, a: Self, r: f64) -> Self {
        let mut out = self;
        for l in 0..N {
            out.re[l] += a.re[l] * r;
            out.im[l] += a.im[l] * r;
        }
        out
    }

    /// self − a · b.
    #[inline(always)]
    pub fn sub_mul(self, a: Self, b: Self) -> Self {
        let mut out = self;
        for l in 0..N {
            out.re[l] -= a.re[l] * b.re[l] - a.im[l] * b.im[l];
            out.im[l] -= a.re[l] * b.im[l] + a.im[l] * b.re[l];
        }
        out
    }

    /// 1/self, lane by lane; a lane whose magnitude is below `tiny` (or not a number) is taken as `tiny`.
    #[inline(always)]
    pub fn recip_guarded(&mut self, tiny: f64) -> Self {
        let mut out = Lanes::default();
        for l in 0..N {
            let n2 = self.re[l] * self.re[l] + self.im[l] * self.im[l];
            // A NaN pivot is replaced too.
            if n2.is_nan() || n2.sqrt() < tiny {
                self.re[l] = tiny;
                self.im[l] = 0.0;
                out.re[l] = 1.0 / tiny;
                out.im[l] = 0.0;
            } else {
                out.re[l] = self.re[l] / n2;
                out.im[l] = -self.im[l] / n2;
            }
        }
        out
    }
}

impl<const N: usize> Add for Lanes<N> {
    type Output = Self;
    #[inline(always)]
    fn add(self, o: Self) -> Self {
        let mut out = self;
        for l in 0..N {
            out.re[l] += o.re[l];
            out.im[l] += o.im[l];
        }
        out
    }
}

impl<const N: usize> Sub for Lanes<N> {
    type Output = Self;
    #[inline(always)]
    fn sub(self, o: Self) -> Self {
        let mut out = self;
        for l in 0..N {
            out.re[l] -= o.re[l];
            out.im[l] -= o.im[l];
        }
        out
    }
}

impl<const N: usize> Mul for Lanes<N> {
    type Output = Self;
    #[inline(always)]
    fn mul(self, o: Self) -> Self {
        let mut out = Lanes::default();
        for l in 0..N {
            out.re[l] = self.re[l] * o.re[l] - self.im[l] * o.im[l];
            out.im[l] = self.re[l] * o.im[l] + self.im[l] * o.re[l];
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lanes_do_complex_arithmetic_lane_by_lane() {
        let a = Lanes::<4>::from_fn(|l| C::new(l as f64 + 1.0, 0.5 - l as f64));
        let b = Lanes::<4>::from_fn(|l| C::new(2.0 - l as f64, 0.25 * l as f64 + 0.1));
        let x = Lanes::<4>::splat(C::new(0.3, -0.7));
        let mut d = b;
        let inv = d.recip_guarded(1e-300);
        for l in 0..4 {
            assert!(((a * b).lane(l) - a.lane(l) * b.lane(l)).norm() < 1e-15);
            assert!((x.sub_mul(a, b).lane(l) - (x.lane(l) - a.lane(l) * b.lane(l))).norm() < 1e-15);
            assert!((inv.lane(l) - 1.0 / b.lane(l)).norm() < 1e-15);
            assert!((x.add_scaled(a, 3.0).lane(l) - (x.lane(l) + a.lane(l) * 3.0)).norm() < 1e-15);
        }
    }
}
