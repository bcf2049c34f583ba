//! A small general complex solve with partial pivoting, for the loads' matrix seen through their packages (the
//! plane's system itself is eliminated in `circuit.rs`, several frequencies at once).

use num_complex::Complex64 as C;

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
    fn solve_general_solves_a_complex_system() {
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
        let mut a = full.clone();
        let mut b: Vec<C> = (0..n).map(|i| (0..n).map(|j| full[i * n + j] * x_true[j]).sum()).collect();
        assert!(solve_general(&mut a, &mut b, n, 1));
        for (x, t) in b.iter().zip(&x_true) {
            assert!((x - t).norm() < 1e-12);
        }
    }
}
