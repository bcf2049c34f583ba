//! A regulator's measured output impedance fitted to the crossover tank of [`super::regulator`]: the one passive
//! description the scan, the droop and the netlists take, now with R, L, f_c and φm chosen from data.
//!
//! Fit. The model is Z(f) = R + jωL + Z_tank(f; R, f_c, φm). The residual at each measured frequency is
//! ln Z_model − ln Z_measured: its real part is the error in ln|Z| (a relative error of |Z|), its imaginary part the
//! error in phase (radians), so |Z| and phase weigh alike at every frequency and decade. The four unknowns are taken
//! as ln R, ln L, ln f_c and the logit of φm/90°, so every step keeps them positive and the margin in (0°, 90°);
//! each is held inside its documented plausible range. Levenberg-Marquardt (Marquardt 1963, scaled by the diagonal
//! of JᵀJ) runs from the best few of a coarse grid of starting points (crossover across the data's range, several
//! margins and inductances), since a single start can settle on the wrong side of the peak.

use super::TWO_PI;
use super::regulator::crossover_tank;
use crate::model::ranges::{LOOP_CROSSOVER, LOOP_PHASE_MARGIN, RESISTANCE, SOURCE_INDUCTANCE};
use num_complex::Complex64;

/// Fewest measured frequencies a fit accepts: four unknowns, and at least as many points again to judge them.
pub const MIN_POINTS: usize = 8;

/// Largest worst-case |Z| error a fit may leave and still stand for the data (50 %: beyond it the data describe
/// some other circuit than a regulator's loop, and the verdict would rest on the fit's guess).
pub const MAX_MAGNITUDE_ERROR: f64 = 0.5;

/// A source's R, L and loop chosen to match measured data, with how well they match.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LoopFit {
    /// Output resistance, Ω.
    pub r_ohm: f64,
    /// Output inductance, H.
    pub l_h: f64,
    /// Crossover frequency, Hz.
    pub crossover_hz: f64,
    /// Phase margin, degrees.
    pub phase_margin_deg: f64,
    /// Root-mean-square of |ln Z_fit − ln Z_measured| over the points (the fit's residual; about a relative error).
    pub rms_residual: f64,
    /// Largest | |Z_fit| / |Z_measured| − 1 | over the points.
    pub worst_magnitude_error: f64,
    /// Largest phase difference over the points, degrees.
    pub worst_phase_error_deg: f64,
    /// The measured frequencies' range, Hz.
    pub range_hz: [f64; 2],
    /// How many points the fit used.
    pub points: usize,
}

impl LoopFit {
    /// The fitted source's impedance at `f_hz`: R + jωL + the crossover tank.
    pub fn impedance(&self, f_hz: f64) -> Complex64 {
        model_z(&[self.r_ohm, self.l_h, self.crossover_hz, self.phase_margin_deg], f_hz)
    }
}

/// Z of the source R-L plus the tank of `p` = [R, L, f_c, φm°].
fn model_z(p: &[f64; 4], f_hz: f64) -> Complex64 {
    let tank = crossover_tank(p[0], p[2], p[3]);
    Complex64::new(p[0], TWO_PI * f_hz * p[1]) + tank.impedance(f_hz)
}

/// The unknowns as the solver sees them: [ln R, ln L, ln f_c, logit(φm/90)], each within its range.
fn to_physical(x: &[f64; 4]) -> [f64; 4] {
    [x[0].exp(), x[1].exp(), x[2].exp(), 90.0 / (1.0 + (-x[3]).exp())]
}

fn to_solver(p: &[f64; 4]) -> [f64; 4] {
    let m = p[3] / 90.0;
    [p[0].ln(), p[1].ln(), p[2].ln(), (m / (1.0 - m)).ln()]
}

/// Each unknown held inside its documented range (in the solver's coordinates).
fn clamp(x: &mut [f64; 4]) {
    let logit = |deg: f64| {
        let m = deg / 90.0;
        (m / (1.0 - m)).ln()
    };
    let bounds = [
        (RESISTANCE.min.ln(), RESISTANCE.max.ln()),
        (SOURCE_INDUCTANCE.min.ln(), SOURCE_INDUCTANCE.max.ln()),
        (LOOP_CROSSOVER.min.ln(), LOOP_CROSSOVER.max.ln()),
        (logit(LOOP_PHASE_MARGIN.min), logit(LOOP_PHASE_MARGIN.max)),
    ];
    for (v, (lo, hi)) in x.iter_mut().zip(bounds) {
        *v = v.clamp(lo, hi);
    }
}

/// The residuals (ln|Z| error, phase error in radians) at every point.
fn residuals(x: &[f64; 4], freq_hz: &[f64], ln_z: &[Complex64], out: &mut Vec<f64>) {
    let p = to_physical(x);
    out.clear();
    for (&f, lz) in freq_hz.iter().zip(ln_z) {
        let mut d = model_z(&p, f).ln() - lz;
        // The phase difference the short way round.
        d.im = (d.im + std::f64::consts::PI).rem_euclid(std::f64::consts::TAU) - std::f64::consts::PI;
        out.push(d.re);
        out.push(d.im);
    }
}

fn cost(x: &[f64; 4], freq_hz: &[f64], ln_z: &[Complex64], buf: &mut Vec<f64>) -> f64 {
    residuals(x, freq_hz, ln_z, buf);
    let c: f64 = buf.iter().map(|r| r * r).sum();
    if c.is_finite() { c } else { f64::INFINITY }
}

/// Fit R, L, f_c and φm to a measured output impedance (frequencies strictly increasing, above 0). An error says
/// why the data cannot be fitted.
pub fn fit_loop(freq_hz: &[f64], z: &[Complex64]) -> Result<LoopFit, String> {
    if freq_hz.len() != z.len() || freq_hz.len() < MIN_POINTS {
        return Err(format!(
            "an output impedance needs at least {MIN_POINTS} frequencies to fit R, L and the loop (this file has {})",
            freq_hz.len()
        ));
    }
    if freq_hz[0] <= 0.0 || freq_hz.windows(2).any(|w| w[1] <= w[0]) {
        return Err("the frequencies must be above 0 and increasing".into());
    }
    if let Some(k) = z.iter().position(|v| !(v.norm() > 0.0 && v.norm().is_finite())) {
        return Err(format!("the impedance at {} Hz is zero or not finite: it cannot be fitted", freq_hz[k]));
    }
    let ln_z: Vec<Complex64> = z.iter().map(|v| v.ln()).collect();
    let (f_lo, f_hi) = (freq_hz[0], freq_hz[freq_hz.len() - 1]);
    let mut buf = Vec::with_capacity(2 * z.len());

    // Starting points: R from the lowest frequency (inside the loop's bandwidth), L from the top's reactance or a
    // few decades of guesses, the crossover across the data, several margins.
    let r0 = z[0].re.abs().max(z[0].norm() * 1e-3);
    let l_top = z[z.len() - 1].im / (TWO_PI * f_hi);
    let mut l_guesses = vec![1e-12, 1e-10, 1e-8];
    if l_top > 0.0 {
        l_guesses.push(l_top);
    }
    let mut starts: Vec<(f64, [f64; 4])> = Vec::new();
    for i in 0..16 {
        let fc = f_lo * (f_hi / f_lo).powf(i as f64 / 15.0);
        for pm in [15.0, 30.0, 45.0, 60.0, 75.0] {
            for &l in &l_guesses {
                let mut x = to_solver(&[r0, l, fc, pm]);
                clamp(&mut x);
                starts.push((cost(&x, freq_hz, &ln_z, &mut buf), x));
            }
        }
    }
    starts.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut best: Option<(f64, [f64; 4])> = None;
    for (_, x0) in starts.iter().take(6) {
        let (c, x) = levenberg_marquardt(*x0, freq_hz, &ln_z, &mut buf);
        if best.is_none_or(|(bc, _)| c < bc) {
            best = Some((c, x));
        }
    }
    let Some((c, x)) = best.filter(|(c, _)| c.is_finite()) else {
        return Err("no source R-L with a control loop fits these data".into());
    };
    let p = to_physical(&x);
    let (mut worst_mag, mut worst_phase) = (0.0f64, 0.0f64);
    for (&f, zm) in freq_hz.iter().zip(z) {
        let zf = model_z(&p, f);
        worst_mag = worst_mag.max((zf.norm() / zm.norm() - 1.0).abs());
        let mut dp = (zf.arg() - zm.arg()).to_degrees().abs();
        if dp > 180.0 {
            dp = 360.0 - dp;
        }
        worst_phase = worst_phase.max(dp);
    }
    let fit = LoopFit {
        r_ohm: p[0],
        l_h: p[1],
        crossover_hz: p[2],
        phase_margin_deg: p[3],
        rms_residual: (c / z.len() as f64).sqrt(),
        worst_magnitude_error: worst_mag,
        worst_phase_error_deg: worst_phase,
        range_hz: [f_lo, f_hi],
        points: z.len(),
    };
    // NaN is refused too.
    if worst_mag.is_nan() || worst_mag > MAX_MAGNITUDE_ERROR {
        return Err(format!(
            "the best source R-L with a control loop is off by {:.0} % somewhere in the data (more than {:.0} %): \
             the data do not look like a regulator's output impedance",
            worst_mag * 100.0,
            MAX_MAGNITUDE_ERROR * 100.0
        ));
    }
    Ok(fit)
}

/// Levenberg-Marquardt from `x`, within the ranges; returns the cost and the unknowns where it stopped.
fn levenberg_marquardt(mut x: [f64; 4], freq_hz: &[f64], ln_z: &[Complex64], buf: &mut Vec<f64>) -> (f64, [f64; 4]) {
    let mut c = cost(&x, freq_hz, ln_z, buf);
    let mut lambda = 1e-3;
    let (mut r, mut rp, mut rm) = (Vec::new(), Vec::new(), Vec::new());
    for _ in 0..300 {
        residuals(&x, freq_hz, ln_z, &mut r);
        // Jacobian by central differences (four columns).
        let mut jac = [const { Vec::new() }; 4];
        for (k, col) in jac.iter_mut().enumerate() {
            let h = 1e-6;
            let (mut xp, mut xm) = (x, x);
            xp[k] += h;
            xm[k] -= h;
            residuals(&xp, freq_hz, ln_z, &mut rp);
            residuals(&xm, freq_hz, ln_z, &mut rm);
            *col = rp.iter().zip(&rm).map(|(a, b)| (a - b) / (2.0 * h)).collect();
        }
        let mut jtj = [[0.0; 4]; 4];
        let mut jtr = [0.0; 4];
        for a in 0..4 {
            for b in 0..4 {
                jtj[a][b] = jac[a].iter().zip(&jac[b]).map(|(u, v)| u * v).sum();
            }
            jtr[a] = jac[a].iter().zip(&r).map(|(u, v)| u * v).sum();
        }
        let mut improved = false;
        for _ in 0..30 {
            let mut m = jtj;
            for (a, row) in m.iter_mut().enumerate() {
                row[a] += lambda * jtj[a][a].max(1e-12);
            }
            let Some(step) = solve4(m, jtr.map(|v| -v)) else {
                lambda *= 10.0;
                continue;
            };
            let mut trial = x;
            for (t, s) in trial.iter_mut().zip(step) {
                *t += s;
            }
            clamp(&mut trial);
            let ct = cost(&trial, freq_hz, ln_z, buf);
            if ct < c {
                let gain = c - ct;
                x = trial;
                c = ct;
                lambda = (lambda / 10.0).max(1e-12);
                improved = gain > 1e-14 * c.max(1e-300);
                break;
            }
            lambda *= 10.0;
        }
        if !improved {
            break;
        }
    }
    (c, x)
}

/// Solve a 4 × 4 system by Gaussian elimination with partial pivoting; `None` when it is singular.
fn solve4(mut a: [[f64; 4]; 4], mut b: [f64; 4]) -> Option<[f64; 4]> {
    for col in 0..4 {
        let piv = (col..4).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        if a[piv][col].is_nan() || a[piv][col].abs() <= 1e-300 {
            return None;
        }
        a.swap(col, piv);
        b.swap(col, piv);
        let (pivot_row, pivot_b) = (a[col], b[col]);
        for (row, rb) in a.iter_mut().zip(b.iter_mut()).skip(col + 1) {
            let f = row[col] / pivot_row[col];
            for (v, p) in row.iter_mut().zip(pivot_row).skip(col) {
                *v -= f * p;
            }
            *rb -= f * pivot_b;
        }
    }
    let mut x = [0.0; 4];
    for row in (0..4).rev() {
        let s: f64 = (row + 1..4).map(|k| a[row][k] * x[k]).sum();
        x[row] = (b[row] - s) / a[row][row];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Data written from a known source and loop fit back to it (the model is exact, so only the solver's
    /// tolerance is left).
    #[test]
    fn an_exact_tank_fits_back() {
        let truth = [2e-3, 3e-9, 80e3, 40.0];
        let f: Vec<f64> = (0..61).map(|i| 100.0 * 10f64.powf(i as f64 / 10.0)).collect();
        let z: Vec<Complex64> = f.iter().map(|&x| model_z(&truth, x)).collect();
        let fit = fit_loop(&f, &z).unwrap();
        for (got, want) in [fit.r_ohm, fit.l_h, fit.crossover_hz, fit.phase_margin_deg].into_iter().zip(truth) {
            assert!((got / want - 1.0).abs() < 1e-6, "{got} vs {want}");
        }
        assert!(fit.worst_magnitude_error < 1e-6 && fit.rms_residual < 1e-6);
    }

    /// Data with a ±2 % ripple on |Z| still give the source within a few percent, and the fit states an error of
    /// the ripple's size.
    #[test]
    fn rippled_data_fit_near_and_say_their_error() {
        let truth = [4e-3, 1e-9, 30e3, 25.0];
        let f: Vec<f64> = (0..81).map(|i| 100.0 * 10f64.powf(i as f64 / 12.0)).collect();
        let z: Vec<Complex64> =
            f.iter().enumerate().map(|(k, &x)| model_z(&truth, x) * (1.0 + 0.02 * (k as f64 * 1.7).sin())).collect();
        let fit = fit_loop(&f, &z).unwrap();
        for (got, want) in [fit.r_ohm, fit.l_h, fit.crossover_hz, fit.phase_margin_deg].into_iter().zip(truth) {
            assert!((got / want - 1.0).abs() < 0.05, "{got} vs {want}");
        }
        assert!(fit.worst_magnitude_error > 0.005 && fit.worst_magnitude_error < 0.05, "{fit:?}");
    }

    #[test]
    fn data_no_loop_describes_are_refused() {
        // A capacitor's falling |Z| is no regulator's output.
        let f: Vec<f64> = (0..20).map(|i| 1e3 * 10f64.powf(i as f64 / 4.0)).collect();
        let z: Vec<Complex64> = f.iter().map(|&x| Complex64::new(0.0, -1.0 / (TWO_PI * x * 1e-6))).collect();
        assert!(fit_loop(&f, &z).is_err());
        assert!(fit_loop(&f[..4], &z[..4]).unwrap_err().contains("at least 8"));
    }
}
