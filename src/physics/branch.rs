//! One series R-L-C branch, the building block of every rail network.

use num_complex::Complex64;

/// 2π, so angular frequency reads as `TWO_PI * f`.
pub const TWO_PI: f64 = std::f64::consts::TAU;

/// A series resistance, inductance and (optionally) capacitance. Without a capacitance the branch is an R-L, which
/// passes DC (the regulator's output).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeriesRlc {
    /// Series resistance, Ω.
    pub r_ohm: f64,
    /// Series inductance, H.
    pub l_h: f64,
    /// Series capacitance, F; `None` for an R-L branch.
    pub c_f: Option<f64>,
}

impl SeriesRlc {
    /// Z(f) = R + jωL + 1/(jωC), with ω = 2πf.
    pub fn impedance(&self, f_hz: f64) -> Complex64 {
        let w = TWO_PI * f_hz;
        let reactance = match self.c_f {
            Some(c) => w * self.l_h - 1.0 / (w * c),
            None => w * self.l_h,
        };
        Complex64::new(self.r_ohm, reactance)
    }

    /// The frequency where the inductive and capacitive reactances cancel, 1/(2π√(LC)); `None` for an R-L branch
    /// or a branch with no inductance (it never turns inductive).
    pub fn self_resonance_hz(&self) -> Option<f64> {
        match self.c_f {
            Some(c) if self.l_h > 0.0 => Some(1.0 / (TWO_PI * (self.l_h * c).sqrt())),
            _ => None,
        }
    }

    /// `count` identical branches in parallel: one branch of R/n, L/n and n·C. `count` must be at least 1.
    pub fn parallel(&self, count: u32) -> SeriesRlc {
        let n = count.max(1) as f64;
        SeriesRlc { r_ohm: self.r_ohm / n, l_h: self.l_h / n, c_f: self.c_f.map(|c| c * n) }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rlc_at_resonance_is_its_resistance() {
        // Textbook series RLC: X_L = X_C at f0 = 1/(2π√(LC)), so Z(f0) = R.
        let b = SeriesRlc { r_ohm: 0.02, l_h: 1e-9, c_f: Some(1e-7) };
        let f0 = b.self_resonance_hz().unwrap();
        assert!((f0 - 1.0 / (TWO_PI * (1e-16f64).sqrt())).abs() < 1e-6 * f0);
        let z = b.impedance(f0);
        assert!((z.re - 0.02).abs() < 1e-15 && z.im.abs() < 1e-9);
    }

    #[test]
    fn rl_has_no_resonance() {
        let b = SeriesRlc { r_ohm: 1e-3, l_h: 1e-8, c_f: None };
        assert_eq!(b.self_resonance_hz(), None);
        assert!(b.impedance(1e6).im > 0.0);
    }
}
