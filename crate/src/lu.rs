//! Dense complex LU factorisation with equilibration and partial pivoting, tuned for the small,
//! sparse systems that MNA produces.
//!
//! The method is Gaussian elimination with scaled partial pivoting (Golub & Van Loan, *Matrix
//! Computations*, 4th ed., §3.4), so that the pivot choice and the singularity test do not depend
//! on the units of each row (siemens in KCL rows, ohms in branch rows). Only the band of the matrix is touched, so for a matrix ordered to a small bandwidth
//! (see `mna`) the cost grows with n·bandwidth² rather than n³.
//!
//! Why hand-written rather than a linear-algebra crate: the benchmark in `crate/benches/sweep.rs`
//! times this against nalgebra's dense LU on the same matrices; the figures are in the README.
//! nalgebra stays in the test suite as the independent oracle.

use num_complex::Complex64;

/// Pivot magnitude, relative to its row's largest original entry, below which the matrix counts as singular.
pub const SINGULAR_PIVOT: f64 = 1e-13;

/// An LU factorisation held in reusable buffers.
///
/// The matrix is stored densely (row-major) but only its band is touched: with `lower`
/// subdiagonals and `upper` superdiagonals, partial pivoting within the band gives U at most
/// `lower + upper` superdiagonals and L at most `lower` subdiagonals per column (the layout of
/// LAPACK's `gbtrf`: row interchanges are applied to the trailing columns only and replayed on the
/// right-hand side during the forward solve).
///
/// Pivots are chosen by scaled partial pivoting (Golub & Van Loan §3.4.4): each candidate is
/// weighed by the reciprocal of its original row's largest entry, which is what makes the choice
/// and the singularity test independent of each row's units.
#[derive(Debug, Clone, Default)]
pub struct Lu {
    n: usize,
    lower: usize,
    upper: usize,
    /// Row-major n×n; L multipliers below the diagonal, U on and above it.
    lu: Vec<Complex64>,
    inverse_diagonal: Vec<Complex64>,
    /// At step k, row k was exchanged with row pivot[k] (≥ k).
    pivot: Vec<usize>,
    /// 1 / (largest |entry| of each original row), moved along with row interchanges.
    row_weight: Vec<f64>,
}

/// The matrix is singular to working precision.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Singular {
    /// The elimination step (column) at which no usable pivot was found.
    pub column: usize,
}

impl Lu {
    /// An empty factorisation; call [`Lu::factor`] to fill it.
    pub fn new() -> Self {
        Self::default()
    }

    /// Sizes the held matrix to `n`×`n` with the given structural band (number of nonzero
    /// subdiagonals and superdiagonals), zeroes it and returns it for assembly; then call
    /// [`Lu::factor_assembled`].
    ///
    /// # Panics
    /// If a bandwidth is ≥ n (for n > 0).
    pub fn assemble(&mut self, n: usize, lower: usize, upper: usize) -> &mut [Complex64] {
        assert!(n == 0 || (lower < n && upper < n), "bandwidth must be below n");
        if self.n != n || self.lu.len() != n * n {
            self.n = n;
            self.lu = vec![Complex64::new(0.0, 0.0); n * n];
            self.inverse_diagonal = vec![Complex64::new(0.0, 0.0); n];
            self.pivot = vec![0; n];
            self.row_weight = vec![0.0; n];
        } else {
            self.lu.fill(Complex64::new(0.0, 0.0));
        }
        self.lower = lower;
        self.upper = upper;
        &mut self.lu
    }

    /// Factors the row-major `n`×`n` matrix `a`, treated as dense.
    ///
    /// # Errors
    /// As [`Lu::factor_assembled`].
    ///
    /// # Panics
    /// If `a.len() != n * n`.
    pub fn factor(&mut self, a: &[Complex64], n: usize) -> Result<(), Singular> {
        assert_eq!(a.len(), n * n, "matrix must be n×n");
        let band = n.saturating_sub(1);
        self.assemble(n, band, band).copy_from_slice(a);
        self.factor_assembled()
    }

    /// Factors the matrix filled in through [`Lu::assemble`].
    ///
    /// # Errors
    /// [`Singular`] if a weighted pivot is below [`SINGULAR_PIVOT`] or the matrix holds a
    /// non-finite entry. An entry outside the declared band is a programming error and gives
    /// wrong results, so `mna` derives the band from the stamp pattern.
    pub fn factor_assembled(&mut self) -> Result<(), Singular> {
        let (n, lower) = (self.n, self.lower);
        let upper = (self.lower + self.upper).min(n.saturating_sub(1));
        let lu = &mut self.lu[..];

        for i in 0..n {
            let row = &lu[i * n + i.saturating_sub(lower)..i * n + (i + self.upper + 1).min(n)];
            let mut max = 0.0f64;
            for z in row {
                let m = z.l1_norm();
                if m > max {
                    max = m;
                }
            }
            if max == 0.0 || !max.is_finite() {
                return Err(Singular { column: i });
            }
            self.row_weight[i] = 1.0 / max;
        }

        for k in 0..n {
            let last_row = (k + lower).min(n - 1);
            let last_col = (k + upper).min(n - 1);
            let mut best = k;
            let mut best_mag = lu[k * n + k].l1_norm() * self.row_weight[k];
            for i in k + 1..=last_row {
                let mag = lu[i * n + k].l1_norm() * self.row_weight[i];
                if mag > best_mag {
                    best = i;
                    best_mag = mag;
                }
            }
            if best_mag.is_nan() || best_mag < SINGULAR_PIVOT {
                return Err(Singular { column: k });
            }
            self.pivot[k] = best;
            if best != k {
                let (upper_part, lower_part) = lu.split_at_mut(best * n);
                upper_part[k * n + k..=k * n + last_col].swap_with_slice(&mut lower_part[k..=last_col]);
                self.row_weight.swap(k, best);
            }
            let inv_pivot = lu[k * n + k].inv();
            self.inverse_diagonal[k] = inv_pivot;
            let (head, tail) = lu.split_at_mut((k + 1) * n);
            let pivot_row = &head[k * n + k + 1..=k * n + last_col];
            for i in k + 1..=last_row {
                let row = &mut tail[(i - k - 1) * n..(i - k) * n];
                let entry = row[k];
                if entry.re == 0.0 && entry.im == 0.0 {
                    continue;
                }
                let factor = entry * inv_pivot;
                row[k] = factor;
                for (target, u) in row[k + 1..=last_col].iter_mut().zip(pivot_row) {
                    *target -= factor * u;
                }
            }
        }
        Ok(())
    }

    /// Solves A·x = b in place (`b` becomes x) with the held factorisation.
    ///
    /// # Panics
    /// If `b.len()` differs from the factored size.
    pub fn solve_in_place(&self, b: &mut [Complex64]) {
        let (n, lower) = (self.n, self.lower);
        let upper = (self.lower + self.upper).min(n.saturating_sub(1));
        assert_eq!(b.len(), n, "right-hand side length must match the matrix");
        let lu = &self.lu[..];
        // Forward: replay the interchanges and apply the unit lower factor column by column.
        for k in 0..n {
            b.swap(k, self.pivot[k]);
            let bk = b[k];
            if bk.re == 0.0 && bk.im == 0.0 {
                continue;
            }
            for i in k + 1..=(k + lower).min(n - 1) {
                b[i] -= lu[i * n + k] * bk;
            }
        }
        // Back substitution with U.
        for i in (0..n).rev() {
            let row = &lu[i * n + i + 1..i * n + (i + upper).min(n - 1) + 1];
            let mut sum = b[i];
            for (u, x) in row.iter().zip(&b[i + 1..]) {
                sum -= u * x;
            }
            b[i] = sum * self.inverse_diagonal[i];
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn c(re: f64, im: f64) -> Complex64 {
        Complex64::new(re, im)
    }

    fn multiply(a: &[Complex64], x: &[Complex64], n: usize) -> Vec<Complex64> {
        (0..n).map(|i| (0..n).map(|j| a[i * n + j] * x[j]).sum()).collect()
    }

    #[test]
    fn solves_a_small_complex_system() {
        let a = vec![c(2.0, 1.0), c(0.0, -1.0), c(1.0, 0.0), c(3.0, 0.5)];
        let x = vec![c(1.0, -2.0), c(0.5, 0.25)];
        let mut b = multiply(&a, &x, 2);
        let mut lu = Lu::new();
        lu.factor(&a, 2).unwrap();
        lu.solve_in_place(&mut b);
        for (got, want) in b.iter().zip(&x) {
            assert!((got - want).norm() < 1e-14);
        }
    }

    #[test]
    fn zero_row_is_singular() {
        let a = vec![c(1.0, 0.0), c(2.0, 0.0), c(0.0, 0.0), c(0.0, 0.0)];
        assert_eq!(Lu::new().factor(&a, 2), Err(Singular { column: 1 }));
    }

    #[test]
    fn dependent_rows_are_singular() {
        let a = vec![c(1.0, 1.0), c(2.0, 0.0), c(2.0, 2.0), c(4.0, 0.0)];
        assert!(Lu::new().factor(&a, 2).is_err());
    }

    #[test]
    fn needs_pivoting() {
        // A zero on the diagonal forces a row swap.
        let a = vec![c(0.0, 0.0), c(1.0, 0.0), c(1.0, 0.0), c(0.0, 0.0)];
        let mut b = vec![c(3.0, 0.0), c(4.0, 0.0)];
        let mut lu = Lu::new();
        lu.factor(&a, 2).unwrap();
        lu.solve_in_place(&mut b);
        assert!((b[0] - c(4.0, 0.0)).norm() < 1e-15 && (b[1] - c(3.0, 0.0)).norm() < 1e-15);
    }

    #[test]
    fn banded_factor_matches_dense() {
        // A tridiagonal-plus-one matrix (lower 1, upper 2) that needs pivoting.
        let n = 6;
        let mut a = vec![c(0.0, 0.0); n * n];
        for i in 0..n {
            a[i * n + i] = c(0.1 * i as f64, 0.3);
            if i + 1 < n {
                a[(i + 1) * n + i] = c(2.0, -1.0);
                a[i * n + i + 1] = c(1.0, 0.5);
            }
            if i + 2 < n {
                a[i * n + i + 2] = c(-0.5, 0.0);
            }
        }
        let x: Vec<Complex64> = (0..n).map(|i| c(i as f64, 1.0 - i as f64)).collect();
        let mut banded = Lu::new();
        banded.assemble(n, 1, 2).copy_from_slice(&a);
        banded.factor_assembled().unwrap();
        let mut b = multiply(&a, &x, n);
        banded.solve_in_place(&mut b);
        for (got, want) in b.iter().zip(&x) {
            assert!((got - want).norm() < 1e-13, "{got} vs {want}");
        }
    }

    proptest! {
        // Diagonally dominant random matrices of mixed scale: the residual is small relative to b.
        #[test]
        fn residual_is_small(n in 1usize..9, seed in proptest::collection::vec(-1.0f64..1.0, 200), scale in -6i32..6) {
            let s = 10f64.powi(scale);
            let mut a = vec![c(0.0, 0.0); n * n];
            for i in 0..n {
                for j in 0..n {
                    let k = (i * n + j) * 2 % 190;
                    a[i * n + j] = c(seed[k], seed[k + 1]) * if i % 2 == 0 { s } else { 1.0 };
                }
                a[i * n + i] += c(n as f64 + 1.0, 0.0) * if i % 2 == 0 { s } else { 1.0 };
            }
            let x: Vec<Complex64> = (0..n).map(|i| c(seed[190 + i % 10], 1.0)).collect();
            let mut b = multiply(&a, &x, n);
            let mut lu = Lu::new();
            lu.factor(&a, n).unwrap();
            lu.solve_in_place(&mut b);
            for (got, want) in b.iter().zip(&x) {
                prop_assert!((got - want).norm() < 1e-10 * (1.0 + want.norm()));
            }
        }
    }
}
