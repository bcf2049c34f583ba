//! A part known by measurement: its impedance at the measured frequencies, interpolated between them, and an
//! R-L-C fitted to it for use outside the measured range (and in the time domain).
//!
//! Interpolation: ln|Z| and the phase (unwrapped) are linear in ln f between neighbouring points, so a capacitor's
//! straight lines on a log-log plot stay straight. Fit: the reactance of a series R-L-C is X = ωL − 1/(ωC), linear
//! in (L, 1/C); a least-squares fit weighted by 1/|Z| (relative error) gives both; the ESR is Re Z where |Z| is
//! lowest (at self-resonance the reactance vanishes and |Z| = ESR).

use super::{SeriesRlc, TWO_PI};
use num_complex::Complex64;

/// A measured impedance, ready to evaluate at any frequency.
#[derive(Debug, Clone, PartialEq)]
pub struct ImpedanceTable {
    /// Measured frequencies, Hz, strictly increasing.
    pub freq_hz: Vec<f64>,
    /// Impedance of one part at each.
    pub z: Vec<Complex64>,
    /// The R-L-C fitted to the data.
    pub fit: SeriesRlc,
}

impl ImpedanceTable {
    /// Build a table and its fit from measured points (at least two, frequencies strictly increasing and > 0).
    /// `None` when the data cannot describe a capacitor (too few points, or a fit with no positive C).
    pub fn new(freq_hz: Vec<f64>, z: Vec<Complex64>) -> Option<ImpedanceTable> {
        if freq_hz.len() < 2
            || freq_hz.len() != z.len()
            || freq_hz.windows(2).any(|w| w[1] <= w[0])
            || freq_hz[0] <= 0.0
        {
            return None;
        }
        let fit = fit_rlc(&freq_hz, &z)?;
        Some(ImpedanceTable { freq_hz, z, fit })
    }

    /// The measured range, Hz.
    pub fn range_hz(&self) -> [f64; 2] {
        [self.freq_hz[0], self.freq_hz[self.freq_hz.len() - 1]]
    }

    /// Z of one part at `f_hz`: interpolated inside the measured range, the fitted R-L-C outside it.
    pub fn impedance(&self, f_hz: f64) -> Complex64 {
        let [lo, hi] = self.range_hz();
        if !(lo..=hi).contains(&f_hz) {
            return self.fit.impedance(f_hz);
        }
        // The interval holding f (binary search: tables are long).
        let k = self.freq_hz.partition_point(|&x| x <= f_hz).clamp(1, self.freq_hz.len() - 1);
        let (f0, f1) = (self.freq_hz[k - 1], self.freq_hz[k]);
        let (z0, z1) = (self.z[k - 1], self.z[k]);
        let t = (f_hz / f0).ln() / (f1 / f0).ln();
        let (m0, m1) = (z0.norm().max(f64::MIN_POSITIVE).ln(), z1.norm().max(f64::MIN_POSITIVE).ln());
        let (p0, mut p1) = (z0.arg(), z1.arg());
        // Unwrap so the phase takes the short way round.
        if p1 - p0 > std::f64::consts::PI {
            p1 -= std::f64::consts::TAU;
        } else if p0 - p1 > std::f64::consts::PI {
            p1 += std::f64::consts::TAU;
        }
        Complex64::from_polar((m0 + t * (m1 - m0)).exp(), p0 + t * (p1 - p0))
    }
}

/// Weighted least squares of X = ωL − (1/C)/ω over the points, weights 1/|Z|; ESR = Re Z at the lowest |Z|.
fn fit_rlc(freq_hz: &[f64], z: &[Complex64]) -> Option<SeriesRlc> {
    // Normal equations for unknowns a = L, b = 1/C with rows [ω, −1/ω] and right side X.
    let (mut s11, mut s12, mut s22, mut r1, mut r2) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for (&f, z) in freq_hz.iter().zip(z) {
        let w = TWO_PI * f;
        let weight = 1.0 / z.norm().max(1e-300);
        let (u, v) = (w * weight, -weight / w);
        let x = z.im * weight;
        s11 += u * u;
        s12 += u * v;
        s22 += v * v;
        r1 += u * x;
        r2 += v * x;
    }
    let det = s11 * s22 - s12 * s12;
    if det.abs() <= f64::MIN_POSITIVE {
        return None;
    }
    let l = (r1 * s22 - r2 * s12) / det;
    let c_inv = (s11 * r2 - s12 * r1) / det;
    if !(c_inv.is_finite() && c_inv > 0.0) {
        return None;
    }
    let lowest = z.iter().min_by(|a, b| a.norm().total_cmp(&b.norm()))?;
    Some(SeriesRlc { r_ohm: lowest.re.max(0.0), l_h: l.max(0.0), c_f: Some(1.0 / c_inv) })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fit_recovers_an_exact_rlc_and_interpolation_is_exact_at_points() {
        let rlc = SeriesRlc { r_ohm: 0.012, l_h: 4.5e-10, c_f: Some(1e-6) };
        let f: Vec<f64> = (0..40).map(|i| 1e4 * 10f64.powf(i as f64 / 8.0)).collect();
        let z: Vec<Complex64> = f.iter().map(|&x| rlc.impedance(x)).collect();
        let t = ImpedanceTable::new(f.clone(), z.clone()).unwrap();
        assert!((t.fit.c_f.unwrap() - 1e-6).abs() < 1e-12);
        assert!((t.fit.l_h - 4.5e-10).abs() < 1e-16);
        assert!((t.fit.r_ohm - 0.012).abs() < 2e-3, "ESR at the grid's lowest |Z|");
        for (x, want) in f.iter().zip(&z) {
            assert!((t.impedance(*x) - want).norm() < 1e-9 * want.norm());
        }
        // Outside the data: the fit.
        assert_eq!(t.impedance(1.0), t.fit.impedance(1.0));
    }
}
