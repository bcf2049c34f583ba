//! Eigenvalues of a small complex matrix: Householder reduction to Hessenberg form, then the shifted QR
//! iteration with Wilkinson shifts and deflation (Golub and Van Loan, Matrix Computations, 4th ed., §7.4-7.5).
//! Vector fitting's new poles are the eigenvalues of diag(a) − 1·r̃ᵀ.

use num_complex::Complex64 as C;

/// The eigenvalues of the n × n row-major matrix `h` (consumed); `None` when the iteration does not converge.
pub(super) fn eigenvalues(mut h: Vec<C>, n: usize) -> Option<Vec<C>> {
    if h.len() != n * n {
        return None;
    }
    let at = |i: usize, j: usize| i * n + j;
    // Hessenberg form: reflect rows and columns k+1.. so column k is zero below its subdiagonal.
    for k in 0..n.saturating_sub(2) {
        let x: Vec<C> = (k + 1..n).map(|i| h[at(i, k)]).collect();
        let norm = x.iter().map(|v| v.norm_sqr()).sum::<f64>().sqrt();
        if norm == 0.0 {
            continue;
        }
        let phase = if x[0].norm() > 0.0 { x[0] / x[0].norm() } else { C::new(1.0, 0.0) };
        let mut v = x;
        v[0] += phase * norm;
        let vn = v.iter().map(|c| c.norm_sqr()).sum::<f64>().sqrt();
        v.iter_mut().for_each(|c| *c /= vn);
        for j in 0..n {
            let dot: C = v.iter().enumerate().map(|(i, vi)| vi.conj() * h[at(k + 1 + i, j)]).sum();
            for (i, vi) in v.iter().enumerate() {
                h[at(k + 1 + i, j)] -= 2.0 * vi * dot;
            }
        }
        for i in 0..n {
            let dot: C = v.iter().enumerate().map(|(j, vj)| h[at(i, k + 1 + j)] * vj).sum();
            for (j, vj) in v.iter().enumerate() {
                h[at(i, k + 1 + j)] -= 2.0 * dot * vj.conj();
            }
        }
    }
    let mut eig = vec![C::new(0.0, 0.0); n];
    if n == 0 {
        return Some(eig);
    }
    let mut hi = n - 1;
    let mut iter = 0usize;
    let mut rot: Vec<(C, C)> = Vec::with_capacity(n);
    while hi > 0 {
        // The active block l..=hi: its subdiagonal has no negligible entry.
        let mut l = hi;
        while l > 0 {
            let sub = h[at(l, l - 1)].norm();
            let scale = h[at(l - 1, l - 1)].norm() + h[at(l, l)].norm();
            if sub <= f64::EPSILON * scale || sub == 0.0 {
                h[at(l, l - 1)] = C::new(0.0, 0.0);
                break;
            }
            l -= 1;
        }
        if l == hi {
            eig[hi] = h[at(hi, hi)];
            hi -= 1;
            iter = 0;
            continue;
        }
        iter += 1;
        if iter > 60 * n.max(10) {
            return None;
        }
        let (a, b, c, d) = (h[at(hi - 1, hi - 1)], h[at(hi - 1, hi)], h[at(hi, hi - 1)], h[at(hi, hi)]);
        let mu = if iter % 11 == 10 {
            // An exceptional shift breaks a cycle.
            d + h[at(hi, hi - 1)].norm()
        } else {
            let half = (a - d) / 2.0;
            let disc = (half * half + b * c).sqrt();
            let (m1, m2) = ((a + d) / 2.0 + disc, (a + d) / 2.0 - disc);
            if (m1 - d).norm() < (m2 - d).norm() { m1 } else { m2 }
        };
        for k in l..=hi {
            h[at(k, k)] -= mu;
        }
        rot.clear();
        for k in l..hi {
            let (x, y) = (h[at(k, k)], h[at(k + 1, k)]);
            let r = (x.norm_sqr() + y.norm_sqr()).sqrt();
            let (cs, sn) = if r == 0.0 { (C::new(1.0, 0.0), C::new(0.0, 0.0)) } else { (x / r, y / r) };
            for j in k..=hi {
                let (p, q) = (h[at(k, j)], h[at(k + 1, j)]);
                h[at(k, j)] = cs.conj() * p + sn.conj() * q;
                h[at(k + 1, j)] = -sn * p + cs * q;
            }
            rot.push((cs, sn));
        }
        for (idx, &(cs, sn)) in rot.iter().enumerate() {
            let k = l + idx;
            for i in l..=(k + 2).min(hi) {
                let (p, q) = (h[at(i, k)], h[at(i, k + 1)]);
                h[at(i, k)] = p * cs + q * sn;
                h[at(i, k + 1)] = -p * sn.conj() + q * cs.conj();
            }
        }
        for k in l..=hi {
            h[at(k, k)] += mu;
        }
    }
    eig[0] = h[at(0, 0)];
    eig.iter().all(|e| e.is_finite()).then_some(eig)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A companion matrix of (x − 1)(x − 2)(x − 3)(x² + 1) gives its roots (the polynomial's own, by hand).
    #[test]
    fn roots_of_a_known_polynomial() {
        // x⁵ − 6x⁴ + 12x³ − 12x² + 11x − 6.
        let coef = [-6.0, 11.0, -12.0, 12.0, -6.0];
        let n = 5;
        let mut m = vec![C::new(0.0, 0.0); n * n];
        for i in 1..n {
            m[i * n + i - 1] = C::new(1.0, 0.0);
        }
        for (i, c) in coef.iter().enumerate() {
            m[i * n + n - 1] = C::new(-c, 0.0);
        }
        let mut e = eigenvalues(m, n).expect("converges");
        e.sort_by(|a, b| a.re.total_cmp(&b.re).then(a.im.total_cmp(&b.im)));
        let want = [C::new(0.0, -1.0), C::new(0.0, 1.0), C::new(1.0, 0.0), C::new(2.0, 0.0), C::new(3.0, 0.0)];
        for (g, w) in e.iter().zip(want) {
            assert!((g - w).norm() < 1e-9, "{g} vs {w}");
        }
    }
}
