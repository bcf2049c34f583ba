//! The numbers the plane pair's sums are written over: complex numbers (a lossy wavenumber), plain reals, and
//! second-order jets (a real value with its first and half its second derivative), so one formula gives a static
//! sum and its derivatives in real arithmetic, without a complex step or a finite difference.

use num_complex::Complex64 as C;
use std::ops::{Add, Div, Mul, Neg, Sub};

/// What the closed forms along one axis need of a number.
pub(crate) trait Field:
    Copy
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
    + Mul<f64, Output = Self>
    + Div<f64, Output = Self>
{
    /// A plain real as this kind of number.
    fn real(x: f64) -> Self;
    /// e^self.
    fn exp(self) -> Self;
    /// The magnitude of the value, for choosing between a series and a closed form.
    fn size(self) -> f64;
}

impl Field for C {
    fn real(x: f64) -> Self {
        C::new(x, 0.0)
    }
    fn exp(self) -> Self {
        C::exp(self)
    }
    fn size(self) -> f64 {
        self.norm()
    }
}

impl Field for f64 {
    fn real(x: f64) -> Self {
        x
    }
    fn exp(self) -> Self {
        f64::exp(self)
    }
    fn size(self) -> f64 {
        self.abs()
    }
}

/// A function of x near x₀ to second order: f(x₀), f′(x₀) and f″(x₀)/2 (the Taylor coefficients), carried through
/// arithmetic by the chain rule.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Jet {
    /// f(x₀).
    pub v: f64,
    /// f′(x₀).
    pub d1: f64,
    /// f″(x₀)/2.
    pub d2: f64,
}

impl Jet {
    /// √x as a jet in x at x₀ > 0.
    pub fn sqrt_of(x0: f64) -> Jet {
        let s = x0.sqrt();
        Jet { v: s, d1: 0.5 / s, d2: -0.125 / (s * x0) }
    }
}

impl Add for Jet {
    type Output = Jet;
    fn add(self, o: Jet) -> Jet {
        Jet { v: self.v + o.v, d1: self.d1 + o.d1, d2: self.d2 + o.d2 }
    }
}

impl Sub for Jet {
    type Output = Jet;
    fn sub(self, o: Jet) -> Jet {
        Jet { v: self.v - o.v, d1: self.d1 - o.d1, d2: self.d2 - o.d2 }
    }
}

impl Neg for Jet {
    type Output = Jet;
    fn neg(self) -> Jet {
        Jet { v: -self.v, d1: -self.d1, d2: -self.d2 }
    }
}

impl Mul for Jet {
    type Output = Jet;
    fn mul(self, o: Jet) -> Jet {
        Jet { v: self.v * o.v, d1: self.v * o.d1 + self.d1 * o.v, d2: self.v * o.d2 + self.d1 * o.d1 + self.d2 * o.v }
    }
}

impl Div for Jet {
    type Output = Jet;
    fn div(self, o: Jet) -> Jet {
        let v = self.v / o.v;
        let d1 = (self.d1 - v * o.d1) / o.v;
        let d2 = (self.d2 - v * o.d2 - d1 * o.d1) / o.v;
        Jet { v, d1, d2 }
    }
}

impl Mul<f64> for Jet {
    type Output = Jet;
    fn mul(self, k: f64) -> Jet {
        Jet { v: self.v * k, d1: self.d1 * k, d2: self.d2 * k }
    }
}

impl Div<f64> for Jet {
    type Output = Jet;
    fn div(self, k: f64) -> Jet {
        self * (1.0 / k)
    }
}

impl Field for Jet {
    fn real(x: f64) -> Self {
        Jet { v: x, d1: 0.0, d2: 0.0 }
    }
    fn exp(self) -> Self {
        let e = self.v.exp();
        Jet { v: e, d1: e * self.d1, d2: e * (self.d2 + 0.5 * self.d1 * self.d1) }
    }
    fn size(self) -> f64 {
        self.v.abs()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn jets_follow_the_chain_rule() {
        // f(x) = e^{−3√x}/(1 + x) at x₀ = 0.7 against central differences of the plain function.
        let f = |x: f64| (-3.0 * x.sqrt()).exp() / (1.0 + x);
        let x0 = 0.7;
        let a = Jet::sqrt_of(x0);
        let j = (-(a * 3.0)).exp() / (Jet::real(1.0) + Jet { v: x0, d1: 1.0, d2: 0.0 });
        let h = 1e-4;
        let d1 = (f(x0 + h) - f(x0 - h)) / (2.0 * h);
        let d2 = (f(x0 + h) - 2.0 * f(x0) + f(x0 - h)) / (h * h) / 2.0;
        assert!((j.v - f(x0)).abs() < 1e-15);
        // The central differences themselves are good to about h² = 1e-8 (first) and 1e-6 (second).
        assert!((j.d1 - d1).abs() < 1e-6 * d1.abs(), "{} vs {d1}", j.d1);
        assert!((j.d2 - d2).abs() < 1e-4 * d2.abs(), "{} vs {d2}", j.d2);
    }
}
