//! Small dense linear algebra for the stiff method: LU decomposition with partial pivoting
//! (Golub & Van Loan, Matrix Computations, 4th ed., algorithm 3.4.1) and the matching solve,
//! in place, without allocating after construction.

/// An `n x n` matrix factorised as `P A = L U` (row-major, `L` unit lower triangular below the
/// diagonal, `U` on and above it), with the row interchanges in `pivots`.
#[derive(Clone, Debug, Default)]
pub(super) struct Lu {
    n: usize,
    /// The factors, row-major.
    lu: Vec<f64>,
    /// Row `k` was swapped with row `pivots[k]` at elimination step `k`.
    pivots: Vec<usize>,
}

impl Lu {
    /// Storage for `n x n` matrices.
    pub(super) fn new(n: usize) -> Self {
        Self {
            n,
            lu: vec![0.0; n * n],
            pivots: vec![0; n],
        }
    }

    /// The matrix to factorise, row-major; fill it, then call [`Lu::factorise`].
    pub(super) fn matrix_mut(&mut self) -> &mut [f64] {
        &mut self.lu
    }

    /// Factorises the matrix in place. Returns false when it is singular to working precision
    /// (a zero pivot) or holds a value that is not finite; the factors are then unusable.
    pub(super) fn factorise(&mut self) -> bool {
        let n = self.n;
        let a = &mut self.lu[..n * n];
        for k in 0..n {
            // the largest remaining entry of column k becomes the pivot
            let mut p = k;
            let mut largest = a[k * n + k].abs();
            for i in k + 1..n {
                let v = a[i * n + k].abs();
                if v > largest {
                    largest = v;
                    p = i;
                }
            }
            if largest == 0.0 || !largest.is_finite() {
                return false;
            }
            self.pivots[k] = p;
            if p != k {
                for j in 0..n {
                    a.swap(k * n + j, p * n + j);
                }
            }
            let inv = 1.0 / a[k * n + k];
            for i in k + 1..n {
                let factor = a[i * n + k] * inv;
                a[i * n + k] = factor;
                if factor != 0.0 {
                    for j in k + 1..n {
                        a[i * n + j] -= factor * a[k * n + j];
                    }
                }
            }
        }
        a.iter().all(|v| v.is_finite())
    }

    /// Solves `A x = b` with the factors of the last successful [`Lu::factorise`]; `b` is
    /// overwritten by `x`.
    pub(super) fn solve(&self, b: &mut [f64]) {
        let n = self.n;
        let a = &self.lu[..n * n];
        let b = &mut b[..n];
        for k in 0..n {
            let p = self.pivots[k];
            if p != k {
                b.swap(k, p);
            }
        }
        // forward substitution with the unit lower factor
        for i in 1..n {
            let row = &a[i * n..i * n + i];
            let sum: f64 = row.iter().zip(&b[..i]).map(|(l, x)| l * x).sum();
            b[i] -= sum;
        }
        // back substitution with the upper factor
        for i in (0..n).rev() {
            let row = &a[i * n + i + 1..(i + 1) * n];
            let sum: f64 = row.iter().zip(&b[i + 1..]).map(|(u, x)| u * x).sum();
            b[i] = (b[i] - sum) / a[i * n + i];
        }
    }
}

#[cfg(test)]
mod tests {
    use super::Lu;

    fn solve(a: &[f64], b: &[f64]) -> Option<Vec<f64>> {
        let n = b.len();
        let mut lu = Lu::new(n);
        lu.matrix_mut().copy_from_slice(a);
        if !lu.factorise() {
            return None;
        }
        let mut x = b.to_vec();
        lu.solve(&mut x);
        Some(x)
    }

    #[test]
    fn solves_a_system_that_needs_pivoting() {
        // [analytic] A = [[0, 2, 1], [1, 1, 1], [2, 1, 0]], x = (1, 2, 3) gives b = A x
        let a = [0.0, 2.0, 1.0, 1.0, 1.0, 1.0, 2.0, 1.0, 0.0];
        let b = [7.0, 6.0, 4.0];
        let x = solve(&a, &b).expect("regular matrix");
        for (xi, expected) in x.iter().zip([1.0, 2.0, 3.0]) {
            assert!((xi - expected).abs() < 1e-14, "{x:?}");
        }
    }

    #[test]
    fn residual_is_round_off_on_a_larger_system() {
        // a diagonally weighted matrix with all entries non-zero
        let n = 7;
        let a: Vec<f64> = (0..n * n)
            .map(|k| {
                let (i, j) = (k / n, k % n);
                1.0 / (1.0 + i as f64 + 2.0 * j as f64) + if i == j { 3.0 } else { 0.0 }
            })
            .collect();
        let b: Vec<f64> = (0..n).map(|i| (i as f64).sin()).collect();
        let x = solve(&a, &b).expect("regular matrix");
        for i in 0..n {
            let ax: f64 = (0..n).map(|j| a[i * n + j] * x[j]).sum();
            // [common practice] a pivoted LU solve leaves a residual near round-off
            assert!((ax - b[i]).abs() < 1e-14, "row {i}");
        }
    }

    #[test]
    fn singular_and_non_finite_matrices_are_refused() {
        assert!(solve(&[1.0, 2.0, 2.0, 4.0], &[1.0, 1.0]).is_none());
        assert!(solve(&[1.0, f64::NAN, 0.0, 1.0], &[1.0, 1.0]).is_none());
        assert!(solve(&[0.0], &[1.0]).is_none());
        assert_eq!(solve(&[], &[]), Some(vec![]));
    }
}
