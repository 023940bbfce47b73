//! The small dense linear algebra of continuation, on nalgebra: the bordered system
//! `[DF; c^T]` solved by LU with its determinant's sign and size, null vectors by the singular
//! value decomposition.

use nalgebra::{DMatrix, DVector};

/// Iteration cap of the SVD (it converges in a few dozen sweeps for these sizes; the cap only
/// guards against non-finite input).
const MAX_SWEEPS: usize = 10_000;

/// An LU factorisation of a square bordered matrix.
pub(crate) struct Bordered {
    lu: nalgebra::linalg::LU<f64, nalgebra::Dyn, nalgebra::Dyn>,
    size: usize,
}

impl Bordered {
    /// Factorises `[jacobian; border]`: `jacobian` has `size - 1` rows of `size` entries
    /// (row-major), `border` is the last row. `None` for non-finite entries.
    pub(crate) fn new(jacobian: &[f64], border: &[f64]) -> Option<Self> {
        let size = border.len();
        if jacobian.len() != (size - 1) * size
            || jacobian.iter().chain(border).any(|v| !v.is_finite())
        {
            return None;
        }
        let matrix = DMatrix::from_fn(size, size, |i, j| {
            if i + 1 < size {
                jacobian[i * size + j]
            } else {
                border[j]
            }
        });
        Some(Self {
            lu: matrix.lu(),
            size,
        })
    }

    /// Solves the system; `None` when it is singular or the solution is not finite.
    pub(crate) fn solve(&self, rhs: &[f64]) -> Option<Vec<f64>> {
        let x = self.lu.solve(&DVector::from_column_slice(rhs))?;
        x.iter()
            .all(|v| v.is_finite())
            .then(|| x.iter().copied().collect())
    }

    /// Solves for the last unit vector (the tangent of the branch when the border is the
    /// previous tangent).
    pub(crate) fn solve_last_unit(&self) -> Option<Vec<f64>> {
        let mut rhs = vec![0.0; self.size];
        rhs[self.size - 1] = 1.0;
        self.solve(&rhs)
    }

    /// `sign(det) * |det|^(1/size)`: the determinant's sign with a size that neither
    /// overflows nor underflows, continuous where the determinant passes zero.
    pub(crate) fn scaled_determinant(&self) -> f64 {
        let u = self.lu.u();
        let mut sign = if self.lu.p().determinant::<f64>() < 0.0 {
            -1.0
        } else {
            1.0
        };
        let mut log_size = 0.0;
        for i in 0..self.size {
            let d = u[(i, i)];
            if d == 0.0 {
                return 0.0;
            }
            if d < 0.0 {
                sign = -sign;
            }
            log_size += d.abs().ln();
        }
        sign * (log_size / self.size as f64).exp()
    }
}

/// A unit null vector of the `rows x cols` row-major matrix `a` (`rows < cols`, or square and
/// singular): the right singular vector of its smallest singular value. `None` for
/// non-finite entries.
pub(crate) fn null_vector(a: &[f64], rows: usize, cols: usize) -> Option<Vec<f64>> {
    if a.len() != rows * cols || a.iter().any(|v| !v.is_finite()) || rows > cols {
        return None;
    }
    // padded to square so that the SVD returns every right singular vector
    let matrix = DMatrix::from_fn(
        cols,
        cols,
        |i, j| if i < rows { a[i * cols + j] } else { 0.0 },
    );
    let svd = nalgebra::linalg::SVD::try_new(matrix, false, true, f64::EPSILON, MAX_SWEEPS)?;
    let v_t = svd.v_t?;
    let (smallest, _) = svd
        .singular_values
        .iter()
        .enumerate()
        .min_by(|a, b| a.1.total_cmp(b.1))?;
    Some(v_t.row(smallest).iter().copied().collect())
}

/// `a b` for row-major `n x n` matrices.
pub(crate) fn multiply(a: &[f64], b: &[f64], n: usize) -> Vec<f64> {
    let mut out = vec![0.0; n * n];
    for i in 0..n {
        for k in 0..n {
            let aik = a[i * n + k];
            if aik != 0.0 {
                for j in 0..n {
                    out[i * n + j] += aik * b[k * n + j];
                }
            }
        }
    }
    out
}

/// `a x` for a row-major `n x n` matrix.
pub(crate) fn apply(a: &[f64], x: &[f64]) -> Vec<f64> {
    let n = x.len();
    (0..n)
        .map(|i| (0..n).map(|j| a[i * n + j] * x[j]).sum())
        .collect()
}

/// Euclidean norm.
pub(crate) fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// Largest magnitude.
pub(crate) fn max_norm(v: &[f64]) -> f64 {
    v.iter().fold(0.0f64, |m, x| m.max(x.abs()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bordered_solve_and_determinant() {
        // [analytic] [[2, 1], [1, 3]]: det 5, solution of [3, 5] is (0.8, 1.4)
        let b = Bordered::new(&[2.0, 1.0], &[1.0, 3.0]).expect("finite");
        let x = b.solve(&[3.0, 5.0]).expect("regular");
        assert!((x[0] - 0.8).abs() < 1e-14 && (x[1] - 1.4).abs() < 1e-14);
        assert!((b.scaled_determinant() - 5f64.sqrt()).abs() < 1e-14);
        // [analytic] swapping the rows flips the sign
        let b = Bordered::new(&[1.0, 3.0], &[2.0, 1.0]).expect("finite");
        assert!((b.scaled_determinant() + 5f64.sqrt()).abs() < 1e-14);
    }

    #[test]
    fn null_vector_of_a_row() {
        // [analytic] the null space of [1, 1] is spanned by (1, -1) / sqrt 2
        let v = null_vector(&[1.0, 1.0], 1, 2).expect("finite");
        assert!((v[0] + v[1]).abs() < 1e-14 && (v[0].abs() - 0.5f64.sqrt()).abs() < 1e-14);
    }
}
