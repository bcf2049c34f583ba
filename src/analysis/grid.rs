//! Frequency grids.

/// `n` log-spaced frequencies from `from` to `to`, both ends included exactly:
/// f_i = from·(to/from)^(i/(n-1)). With `n` = 1 the grid is just `from`; with `n` = 0 it is empty.
pub fn log_grid(from: f64, to: f64, n: usize) -> Vec<f64> {
    match n {
        0 => Vec::new(),
        1 => vec![from],
        _ => {
            // In logarithms, so that a ratio to/from beyond f64's range (a subnormal lower edge) cannot overflow.
            let (ln_from, ln_to) = (from.ln(), to.ln());
            let last = (n - 1) as f64;
            let mut grid: Vec<f64> = (0..n).map(|i| (ln_from + (ln_to - ln_from) * (i as f64 / last)).exp()).collect();
            // exp may land one ulp off; the ends are promised exactly.
            grid[0] = from;
            grid[n - 1] = to;
            grid
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_ends_and_even_ratios() {
        let g = log_grid(1e3, 1e9, 7);
        assert_eq!(g.len(), 7);
        assert_eq!(g[0], 1e3);
        assert_eq!(g[6], 1e9);
        for (i, f) in g.iter().enumerate() {
            let want = 10f64.powi(3 + i as i32);
            assert!((f - want).abs() <= 1e-12 * want, "{f} vs {want}");
        }
        assert_eq!(log_grid(1.0, 2.0, 1), vec![1.0]);
        assert!(log_grid(1.0, 2.0, 0).is_empty());
    }
}
