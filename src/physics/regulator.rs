//! The regulator's control loop as a passive equivalent circuit: the **crossover tank**.
//!
//! A rail's source is a series R-L to the supply. When the source also gives its control loop (crossover frequency
//! f_c and phase margin φm), a parallel L_c ∥ C_c ∥ R_q (the crossover tank) sits in series with that R-L:
//!
//! ```text
//!   rail ── R ── L ──┬── L_c ──┬── supply
//!                    ├── C_c ──┤
//!                    └── R_q ──┘
//! ```
//!
//! Derivation. Take the loop gain as an integrator with one more pole, the approximation Erickson and Maksimović
//! use to relate phase margin to closed-loop damping (Fundamentals of Power Electronics, 2nd ed., §9.4.2):
//! T(s) = ω₀ / (s (1 + s/ω₂)). |T(jω_c)| = 1 and a phase margin φm give ω₂ = ω_c·tan φm and ω₀ = ω_c / sin φm;
//! the closed loop T/(1 + T) = ω_n² / (s² + s·ω_n/Q + ω_n²) has ω_n = √(ω₀ω₂) = ω_c / √(cos φm) and
//! Q = √(ω₀/ω₂) = √(cos φm) / sin φm (Erickson's relation between phase margin and closed-loop Q).
//!
//! Inside its bandwidth the loop holds the output at its resistance R; as the loop gain falls past crossover the
//! output impedance rises like an inductance that reaches R at f_c, L_c = R / ω_c (common practice: a regulator
//! modelled as its output resistance in series with R/(2π f_bandwidth)). The loop shapes that rise with its closed-
//! loop response: Z_loop(s) = s·L_c · T(s)/(1 + T(s)) = s·L_c·ω_n² / (s² + s·ω_n/Q + ω_n²). That is exactly the
//! impedance of L_c ∥ C_c ∥ R_q with C_c = 1/(ω_n² L_c) = cos φm / (ω_c R) and R_q = Q·ω_n·L_c = R / sin φm. So
//! the source's impedance R + sL + Z_loop(s) is flat at R well inside the bandwidth, rises past crossover to a
//! peak near ω_n of about R + R/sin φm (the lower the phase margin, the higher and sharper), and beyond it the tank's
//! capacitance (the output capacitance the loop crosses over against) hands over to the series R-L: the output
//! filter's behaviour. At DC the tank is a short (L_c), so the DC resistance, and with it the settled droop, stays R.
//!
//! The frequency scan, the time domain (poles and residues) and the SPICE netlist all take the source as this one
//! circuit of passive elements.

use super::TWO_PI;
use num_complex::Complex64;

/// A parallel R ∥ L ∥ C: the crossover tank.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ParallelRlc {
    /// Parallel resistance, Ω (sets the peak's damping).
    pub r_ohm: f64,
    /// Parallel inductance, H.
    pub l_h: f64,
    /// Parallel capacitance, F.
    pub c_f: f64,
}

impl ParallelRlc {
    /// Z(f) = 1 / (1/R + 1/(jωL) + jωC).
    pub fn impedance(&self, f_hz: f64) -> Complex64 {
        let w = TWO_PI * f_hz;
        let y = Complex64::new(1.0 / self.r_ohm, w * self.c_f - 1.0 / (w * self.l_h));
        if w == 0.0 { Complex64::new(0.0, 0.0) } else { 1.0 / y }
    }

    /// Where L and C resonate, Hz: the tank's peak.
    pub fn resonance_hz(&self) -> f64 {
        1.0 / (TWO_PI * (self.l_h * self.c_f).sqrt())
    }
}

/// The closed-loop Q of a loop with phase margin `phase_margin_deg` (Erickson and Maksimović, §9.4.2):
/// Q = √(cos φm) / sin φm.
pub fn closed_loop_q(phase_margin_deg: f64) -> f64 {
    let phi = phase_margin_deg.to_radians();
    phi.cos().sqrt() / phi.sin()
}

/// The crossover tank of a regulator whose output resistance is `r_ohm` (above 0) and whose loop crosses over at
/// `crossover_hz` with `phase_margin_deg` (between 0 and 90): L_c = R/ω_c, C_c = cos φm/(ω_c R), R_q = R/sin φm.
pub fn crossover_tank(r_ohm: f64, crossover_hz: f64, phase_margin_deg: f64) -> ParallelRlc {
    let wc = TWO_PI * crossover_hz;
    let phi = phase_margin_deg.to_radians();
    ParallelRlc { r_ohm: r_ohm / phi.sin(), l_h: r_ohm / wc, c_f: phi.cos() / (wc * r_ohm) }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Erickson's loop T(s) = ω₀/(s(1 + s/ω₂)) with ω₀ = ω_c/sin φm, ω₂ = ω_c tan φm crosses over at ω_c with
    /// phase margin φm, and s·L_c·T/(1 + T) is the tank's impedance at every frequency.
    #[test]
    fn the_tank_is_the_loop_shaped_inductance() {
        for pm in [20.0f64, 45.0, 60.0, 76.0] {
            let (r, fc) = (2e-3, 150e3);
            let wc = TWO_PI * fc;
            let phi = pm.to_radians();
            let (w0, w2) = (wc / phi.sin(), wc * phi.tan());
            let t = |f: f64| {
                let s = Complex64::new(0.0, TWO_PI * f);
                w0 / (s * (1.0 + s / w2))
            };
            assert!((t(fc).norm() - 1.0).abs() < 1e-12, "crossover");
            let margin = 180.0 + t(fc).arg().to_degrees();
            assert!((margin - pm).abs() < 1e-9, "phase margin {margin} vs {pm}");
            let tank = crossover_tank(r, fc, pm);
            for f in [1e3, 3e4, fc, 2e5, 1e6, 5e7] {
                let s = Complex64::new(0.0, TWO_PI * f);
                let loop_z = s * tank.l_h * t(f) / (1.0 + t(f));
                assert!((tank.impedance(f) - loop_z).norm() <= 1e-9 * loop_z.norm(), "{pm} deg at {f} Hz");
            }
            // The tank's resonance is the closed loop's natural frequency, its Q Erickson's.
            let q = tank.r_ohm * (tank.c_f / tank.l_h).sqrt();
            assert!((q - closed_loop_q(pm)).abs() < 1e-12 * q);
            assert!((tank.resonance_hz() - fc / phi.cos().sqrt()).abs() < 1e-9 * fc);
        }
    }

    /// Erickson's inverse relation, φm = atan √((1 + √(1 + 4Q⁴)) / (2Q⁴)), returns the phase margin.
    #[test]
    fn q_against_ericksons_inverse() {
        for pm in [5.0f64, 30.0, 52.0, 89.0] {
            let q = closed_loop_q(pm);
            let back = (((1.0 + (1.0 + 4.0 * q.powi(4)).sqrt()) / (2.0 * q.powi(4))).sqrt()).atan().to_degrees();
            assert!((back - pm).abs() < 1e-9, "{pm} vs {back}");
        }
    }
}
