//! Dense complex linear algebra for the placed-rail engine: an LDLᵀ factorization of a complex symmetric matrix
//! (no pivoting: the matrices here are the plane's impedance matrix plus branch impedances, whose diagonal
//! dominates the elimination) and a small general solve with partial pivoting for the loads' matrix.

use num_complex::Complex64 as C;

/// The smallest pivot magnitude accepted; a smaller one is replaced so the solve stays finite (it means a port
/// shorted to another with no impedance between them, which the validated inputs never give at f > 0).
const TINY_PIVOT: f64 = 1e-300;

/// An LDLᵀ factorization of an n × n complex symmetric matrix, in place (row-major, lower triangle used).
#[derive(Debug, Clone, Default)]
pub struct Ldl {
    n: usize,
    /// L below the diagonal (unit diagonal implied), D on the diagonal, row-major.
    a: Vec<C>,
    col: Vec<C>,
}

impl Ldl {
    /// The matrix to fill before factoring: n × n row-major, only the lower triangle (j ≤ i) is read.
    pub fn matrix_mut(&mut self, n: usize) -> &mut [C] {
        self.n = n;
        self.a.clear();
        self.a.resize(n * n, C::new(0.0, 0.0));
        &mut self.a
    }

    /// Factor the matrix filled through [`Ldl::matrix_mut`].
    pub fn factor(&mut self) {
        let n = self.n;
        self.col.resize(n, C::new(0.0, 0.0));
        for k in 0..n {
            let mut d = self.a[k * n + k];
            // A NaN pivot is replaced too (norm() >= TINY_PIVOT is false for it).
            if d.norm().is_nan() || d.norm() < TINY_PIVOT {
                d = C::new(TINY_PIVOT, 0.0);
                self.a[k * n + k] = d;
            }
            let inv_d = 1.0 / d;
            for j in k + 1..n {
                self.col[j] = self.a[j * n + k];
            }
            for i in k + 1..n {
                let s = self.a[i * n + k] * inv_d;
                let row = &mut self.a[i * n + k + 1..i * n + i + 1];
                for (x, c) in row.iter_mut().zip(&self.col[k + 1..=i]) {
                    *x -= s * *c;
                }
                self.a[i * n + k] = s;
            }
        }
    }

    /// Solve A·x = b in place (b becomes x).
    pub fn solve(&self, b: &mut [C]) {
        let n = self.n;
        for i in 0..n {
            let row = &self.a[i * n..i * n + i];
            let s: C = row.iter().zip(&b[..i]).map(|(l, x)| l * x).sum();
            b[i] -= s;
        }
        for (i, x) in b.iter_mut().enumerate().take(n) {
            *x /= self.a[i * n + i];
        }
        for i in (0..n).rev() {
            let xi = b[i];
            let row = &self.a[i * n..i * n + i];
            for (x, l) in b[..i].iter_mut().zip(row) {
                *x -= l * xi;
            }
        }
    }
}

/// Solve the small general system A·X = B (A n × n, B n × m, both row-major) by Gaussian elimination with partial
/// pivoting; B becomes X. A singular A leaves B as it is and returns false.
pub fn solve_general(a: &mut [C], b: &mut [C], n: usize, m: usize) -> bool {
    for k in 0..n {
        let p = (k..n).max_by(|&x, &y| a[x * n + k].norm().total_cmp(&a[y * n + k].norm())).unwrap_or(k);
        if a[p * n + k].norm() == 0.0 {
            return false;
        }
        if p != k {
            for j in 0..n {
                a.swap(k * n + j, p * n + j);
            }
            for j in 0..m {
                b.swap(k * m + j, p * m + j);
            }
        }
        let inv = 1.0 / a[k * n + k];
        for i in k + 1..n {
            let s = a[i * n + k] * inv;
            if s == C::new(0.0, 0.0) {
                continue;
            }
            for j in k..n {
                let v = a[k * n + j];
                a[i * n + j] -= s * v;
            }
            for j in 0..m {
                let v = b[k * m + j];
                b[i * m + j] -= s * v;
            }
        }
    }
    for k in (0..n).rev() {
        let inv = 1.0 / a[k * n + k];
        for j in 0..m {
            let mut s = b[k * m + j];
            for i in k + 1..n {
                s -= a[k * n + i] * b[i * m + j];
            }
            b[k * m + j] = s * inv;
        }
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ldl_solves_a_complex_symmetric_system() {
        let n = 5;
        let full: Vec<C> = (0..n * n)
            .map(|k| {
                let (i, j) = (k / n, k % n);
                let (lo, hi) = (i.min(j) as f64, i.max(j) as f64);
                let diag = if i == j { 10.0 } else { 0.0 };
                C::new(diag + 1.0 / (1.0 + lo + hi), 0.3 * (lo - hi).cos())
            })
            .collect();
        let x_true: Vec<C> = (0..n).map(|i| C::new(i as f64, 1.0 - i as f64)).collect();
        let mut b: Vec<C> = (0..n).map(|i| (0..n).map(|j| full[i * n + j] * x_true[j]).sum()).collect();
        let mut ldl = Ldl::default();
        ldl.matrix_mut(n).copy_from_slice(&full);
        ldl.factor();
        ldl.solve(&mut b);
        for (x, t) in b.iter().zip(&x_true) {
            assert!((x - t).norm() < 1e-12);
        }
        let mut a = full.clone();
        let mut b2: Vec<C> = (0..n).map(|i| (0..n).map(|j| full[i * n + j] * x_true[j]).sum()).collect();
        assert!(solve_general(&mut a, &mut b2, n, 1));
        for (x, t) in b2.iter().zip(&x_true) {
            assert!((x - t).norm() < 1e-12);
        }
    }
}
