//! A sampled impedance as poles and residues, by vector fitting (B. Gustavsen and A. Semlyen, "Rational
//! approximation of frequency domain responses by vector fitting", IEEE Trans. Power Delivery 14(3), 1999).
//!
//! The time domain of a placed rail needs its loads' impedances as poles and residues, but the plane pair's
//! cavity model is a sum of infinitely many modes behind the branches, with no closed rational form. Sampled on a
//! log grid, each response is fitted by e·s + d + Σ rₖ/(s − pₖ): the poles are relocated by the least-squares fit
//! of σ(s)·f(s) with a weight σ(s) = 1 + Σ r̃ₖ/(s − pₖ) sharing them (the new poles are σ's zeros, found by the
//! eigenvalues of diag(a) − 1·r̃ᵀ, [`super::eigen`]), then the residues are fitted with the poles fixed. Poles
//! that land in the right half plane are reflected into the left (the paper's own rule), so the model is stable.
//! Every sample is weighted by 1/|f| so the fit is relative: milliohms at low frequency count as much as the
//! peaks. The fit error is stated, never hidden: the largest relative deviation over the samples.

use super::rational::Modal;
use num_complex::Complex64 as C;

/// A fitted response and how far it strays from the samples.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Fitted {
    /// The model.
    pub modal: Modal,
    /// The largest |model − sample| / |sample| over the samples.
    pub error: f64,
}

/// The fit aimed for: below it, more poles are not tried.
pub const FIT_GOAL: f64 = 1e-3;

/// Relocation passes per pole count (the paper reports convergence in a few).
const PASSES: usize = 12;

/// Fit samples `z` at angular frequencies `w` (rad/s, ascending, all > 0), trying more poles until the relative
/// error is below [`FIT_GOAL`], and keeping the best fit found. `None` when no fit could be made (fewer samples than
/// unknowns, or a singular system).
pub(super) fn fit(w: &[f64], z: &[C]) -> Option<Fitted> {
    let mut best: Option<Fitted> = None;
    for pairs in [4usize, 8, 12, 16, 24, 32, 48] {
        if 4 * pairs + 2 >= 2 * w.len() {
            break;
        }
        let Some(f) = fit_with(w, z, pairs) else { continue };
        let better = best.as_ref().is_none_or(|b| f.error < b.error);
        if better {
            best = Some(f);
        }
        if best.as_ref().is_some_and(|b| b.error <= FIT_GOAL) {
            break;
        }
    }
    best
}

/// One pole set: complex poles kept once (Im > 0, the conjugate implied) and real poles.
fn starting_poles(w: &[f64], pairs: usize) -> Vec<C> {
    let (lo, hi) = (w[0].ln(), w[w.len() - 1].ln());
    (0..pairs)
        .map(|k| {
            let b = (lo + (hi - lo) * (k as f64 + 0.5) / pairs as f64).exp();
            C::new(-b / 100.0, b)
        })
        .collect()
}

/// The real basis functions of the poles at s: a real pole a gives 1/(s − a); a complex pole a gives
/// 1/(s − a) + 1/(s − ā) and j/(s − a) − j/(s − ā), whose coefficients c₁, c₂ make the residue c₁ + j·c₂ at a.
fn basis(poles: &[C], s: C, out: &mut Vec<C>) {
    out.clear();
    for &a in poles {
        if a.im == 0.0 {
            out.push(1.0 / (s - a));
        } else {
            let (p, q) = (1.0 / (s - a), 1.0 / (s - a.conj()));
            out.push(p + q);
            out.push(C::i() * (p - q));
        }
    }
}

/// The residues of the poles from the basis coefficients, both members of each pair.
fn residues(poles: &[C], c: &[f64]) -> Vec<(C, C)> {
    let mut out = Vec::new();
    let mut i = 0;
    for &a in poles {
        if a.im == 0.0 {
            out.push((a, C::new(c[i], 0.0)));
            i += 1;
        } else {
            let r = C::new(c[i], c[i + 1]);
            out.push((a, r));
            out.push((a.conj(), r.conj()));
            i += 2;
        }
    }
    out
}

fn fit_with(w: &[f64], z: &[C], pairs: usize) -> Option<Fitted> {
    let mut poles = starting_poles(w, pairs);
    for _ in 0..PASSES {
        // σ(s)·f(s) ≈ Σ cφ + d + e·s with σ = 1 + Σ c̃φ: linear in (c, d, e, c̃).
        let n = basis_len(&poles);
        let (a, b, cols) = weighted_system(w, z, &poles, true);
        let x = least_squares(&a, &b, cols)?;
        let tilde = residues(&poles, &x[n + 2..]);
        // σ's zeros: the eigenvalues of diag(a) − 1·r̃ᵀ (the paper's eq. (A.8), in complex form).
        let m = tilde.len();
        let mut h = vec![C::new(0.0, 0.0); m * m];
        for (i, row) in h.chunks_mut(m).enumerate() {
            row.iter_mut().zip(&tilde).for_each(|(x, (_, r))| *x = -r);
            row[i] += tilde[i].0;
        }
        let Some(zeros) = super::eigen::eigenvalues(h, m) else { break };
        poles = pole_set(&zeros);
    }
    // The residues with the poles fixed.
    let n = basis_len(&poles);
    let (a, b, cols) = weighted_system(w, z, &poles, false);
    let x = least_squares(&a, &b, cols)?;
    let modal = Modal { e: x[n + 1], d: x[n], modes: residues(&poles, &x[..n]) };
    let error = w
        .iter()
        .zip(z)
        .map(|(&wk, &fk)| (modal.eval(C::new(0.0, wk)) - fk).norm() / fk.norm().max(1e-300))
        .fold(0.0, f64::max);
    error.is_finite().then_some(Fitted { modal, error })
}

fn basis_len(poles: &[C]) -> usize {
    poles.iter().map(|a| if a.im == 0.0 { 1 } else { 2 }).sum()
}

/// σ's zeros as the next pole set: reflected into the left half plane, conjugate pairs kept once, zeros within a
/// rounding of the real axis taken as real.
fn pole_set(zeros: &[C]) -> Vec<C> {
    let mut out = Vec::new();
    for &z in zeros {
        let mut p = z;
        if p.re > 0.0 {
            p.re = -p.re;
        }
        if p.re == 0.0 {
            // A pole on the axis is an undamped mode no passive rail has: give it a hair of damping.
            p.re = -1e-9 * p.norm().max(1e-300);
        }
        if p.im.abs() <= 1e-7 * p.norm() {
            out.push(C::new(p.re, 0.0));
        } else if p.im > 0.0 {
            out.push(p);
        }
    }
    out
}

/// The least-squares solution of A·x ≈ b (A row-major, `cols` columns) by Householder QR on column-scaled A.
/// Columns that depend on earlier ones to rounding get a zero coefficient. `None` on a zero or non-finite column.
fn least_squares(a: &[f64], b: &[f64], cols: usize) -> Option<Vec<f64>> {
    let rows = b.len();
    if rows < cols || a.len() != rows * cols {
        return None;
    }
    // Column-major copy, each column scaled to unit norm (the basis spans many decades).
    let mut m: Vec<Vec<f64>> = (0..cols).map(|j| (0..rows).map(|i| a[i * cols + j]).collect()).collect();
    let scale: Vec<f64> = m.iter().map(|c| c.iter().map(|x| x * x).sum::<f64>().sqrt()).collect();
    for (c, &s) in m.iter_mut().zip(&scale) {
        if s == 0.0 || !s.is_finite() {
            return None;
        }
        c.iter_mut().for_each(|x| *x /= s);
    }
    let mut y = b.to_vec();
    let mut diag = vec![0.0; cols];
    for j in 0..cols {
        let norm = m[j][j..].iter().map(|x| x * x).sum::<f64>().sqrt();
        if norm <= 1e-11 {
            // A column the earlier ones already span (an exactly rational response fitted with spare poles makes
            // the relocation system rank-deficient): its coefficient is left at zero.
            diag[j] = 0.0;
            continue;
        }
        let alpha = if m[j][j] > 0.0 { -norm } else { norm };
        let mut v: Vec<f64> = m[j][j..].to_vec();
        v[0] -= alpha;
        let vn = v.iter().map(|x| x * x).sum::<f64>();
        if vn > 0.0 {
            for col in m.iter_mut().skip(j + 1) {
                let dot: f64 = v.iter().zip(&col[j..]).map(|(p, q)| p * q).sum::<f64>() * 2.0 / vn;
                col[j..].iter_mut().zip(&v).for_each(|(x, p)| *x -= dot * p);
            }
            let dot: f64 = v.iter().zip(&y[j..]).map(|(p, q)| p * q).sum::<f64>() * 2.0 / vn;
            y[j..].iter_mut().zip(&v).for_each(|(x, p)| *x -= dot * p);
        }
        diag[j] = alpha;
    }
    let mut x = vec![0.0; cols];
    for j in (0..cols).rev() {
        let mut acc = y[j];
        for k in j + 1..cols {
            acc -= m[k][j] * x[k];
        }
        x[j] = if diag[j] == 0.0 { 0.0 } else { acc / diag[j] };
    }
    let out: Vec<f64> = x.iter().zip(&scale).map(|(v, s)| v / s).collect();
    out.iter().all(|v| v.is_finite()).then_some(out)
}

/// The least-squares system of the fit on `poles`, each sample weighted by 1/|f| (relative error): columns
/// (c, d, e), and with `sigma` also c̃ of σ's residues (the pole relocation); the matrix row-major, the right side
/// and the number of columns.
fn weighted_system(w: &[f64], z: &[C], poles: &[C], sigma: bool) -> (Vec<f64>, Vec<f64>, usize) {
    let n = basis_len(poles);
    let cols = if sigma { 2 * n + 2 } else { n + 2 };
    let mut a = Vec::with_capacity(2 * w.len() * cols);
    let mut b = Vec::with_capacity(2 * w.len());
    let mut phi = Vec::new();
    let mut row = Vec::with_capacity(cols);
    for (&wk, &fk) in w.iter().zip(z) {
        let s = C::new(0.0, wk);
        basis(poles, s, &mut phi);
        let g = 1.0 / fk.norm().max(1e-300);
        row.clear();
        row.extend(phi.iter().map(|&p| p * g).chain([C::new(g, 0.0), s * g]));
        if sigma {
            row.extend(phi.iter().map(|&p| -fk * p * g));
        }
        push_rows(&mut a, &mut b, &row, fk * g);
    }
    (a, b, cols)
}

/// One complex equation row·x = rhs as the two real rows the real least squares takes (its real and imaginary
/// parts), appended to the row-major matrix `a` and the right side `b`.
fn push_rows(a: &mut Vec<f64>, b: &mut Vec<f64>, row: &[C], rhs: C) {
    a.extend(row.iter().map(|x| x.re));
    b.push(rhs.re);
    a.extend(row.iter().map(|x| x.im));
    b.push(rhs.im);
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A known rational function (a series R-L to a parallel tank and a real pole) is recovered to rounding.
    #[test]
    fn recovers_a_rational_function() {
        let truth = Modal {
            e: 2e-9,
            d: 0.01,
            modes: vec![
                (C::new(-1e6, 2e8), C::new(3e6, 1e5)),
                (C::new(-1e6, -2e8), C::new(3e6, -1e5)),
                (C::new(-5e4, 0.0), C::new(200.0, 0.0)),
            ],
        };
        let w: Vec<f64> =
            (0..200).map(|k| 2.0 * std::f64::consts::PI * 10f64.powf(2.0 + 7.0 * k as f64 / 199.0)).collect();
        let z: Vec<C> = w.iter().map(|&x| truth.eval(C::new(0.0, x))).collect();
        let f = fit(&w, &z).expect("a fit");
        assert!(f.error < 1e-6, "error {}", f.error);
        assert!((f.modal.dc() - truth.dc()).abs() < 1e-6 * truth.dc());
        assert!(f.modal.modes.iter().all(|(p, _)| p.re < 0.0));
    }
}
#[cfg(test)]
mod ls_tests {
    /// An exactly consistent overdetermined system is solved to rounding.
    #[test]
    fn ls_exact() {
        let a = [1.0, 2.0, 3.0, 1.0, 0.5, 4.0, 2.0, 1.0, 0.0, 1.0, 1.0, 1.0];
        let x = [1.0, -2.0, 0.5];
        let b: Vec<f64> = (0..4).map(|i| (0..3).map(|j| a[i * 3 + j] * x[j]).sum()).collect();
        let y = super::least_squares(&a, &b, 3).expect("full rank");
        assert!((y[0] - 1.0).abs() < 1e-12 && (y[1] + 2.0).abs() < 1e-12);
    }
}
