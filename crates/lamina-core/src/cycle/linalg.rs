//! Small dense linear algebra for the cycle search, on nalgebra: least-norm solves by the
//! singular value decomposition, eigenvalues from the real Schur form, and an orthonormal
//! basis of a plane.

use nalgebra::{DMatrix, DVector};

/// Singular values below this fraction of the largest count as zero.
pub(crate) const RANK_TOLERANCE: f64 = 1e-10;
/// Iteration cap of the SVD and Schur decompositions (they converge in a few dozen sweeps
/// for the small matrices here; the cap only guards against non-finite input).
const MAX_SWEEPS: usize = 10_000;

/// The least-norm solution of `a x = b` for the `n x n` row-major `a`, treating singular
/// values below [`RANK_TOLERANCE`] of the largest as zero. Returns the solution and whether
/// `a` was found singular; `None` when the decomposition fails (non-finite entries).
pub(crate) fn solve_least_norm(a: &[f64], n: usize, b: &[f64]) -> Option<(Vec<f64>, bool)> {
    if a.iter().chain(b).any(|v| !v.is_finite()) {
        return None;
    }
    let matrix = DMatrix::from_row_slice(n, n, a);
    let svd = nalgebra::linalg::SVD::try_new(matrix, true, true, f64::EPSILON, MAX_SWEEPS)?;
    let largest = svd.singular_values.iter().fold(0.0f64, |m, &s| m.max(s));
    let smallest = svd
        .singular_values
        .iter()
        .fold(f64::INFINITY, |m, &s| m.min(s));
    let cut = RANK_TOLERANCE * largest;
    let singular = smallest <= cut;
    let x = svd.solve(&DVector::from_column_slice(b), cut).ok()?;
    Some((x.iter().copied().collect(), singular))
}

/// The eigenvalues `(re, im)` of the `n x n` row-major `a`: nalgebra's real Schur form, with
/// its 1 x 1 and 2 x 2 diagonal blocks solved here (so a nearly double real eigenvalue gives
/// two real values, never NaN). `None` when the decomposition fails (non-finite entries).
pub(crate) fn eigenvalues(a: &[f64], n: usize) -> Option<Vec<(f64, f64)>> {
    if n == 0 {
        return Some(Vec::new());
    }
    if a.iter().any(|v| !v.is_finite()) {
        return None;
    }
    let matrix = DMatrix::from_row_slice(n, n, a);
    let (_, t) = nalgebra::linalg::Schur::try_new(matrix, f64::EPSILON, MAX_SWEEPS)?.unpack();
    let mut values = Vec::with_capacity(n);
    let mut m = 0;
    while m < n {
        if m + 1 < n && t[(m + 1, m)] != 0.0 {
            values.extend(block_eigenvalues(
                t[(m, m)],
                t[(m, m + 1)],
                t[(m + 1, m)],
                t[(m + 1, m + 1)],
            ));
            m += 2;
        } else {
            values.push((t[(m, m)], 0.0));
            m += 1;
        }
    }
    Some(values)
}

/// Eigenvalues of `[[a, b], [c, d]]`.
fn block_eigenvalues(a: f64, b: f64, c: f64, d: f64) -> [(f64, f64); 2] {
    let mean = 0.5 * (a + d);
    let half_diff = 0.5 * (a - d);
    let discriminant = half_diff * half_diff + b * c;
    if discriminant >= 0.0 {
        let root = discriminant.sqrt();
        // the larger in magnitude first, the other from the determinant (no cancellation)
        let big = mean + root.copysign(mean);
        let small = if big != 0.0 {
            (a * d - b * c) / big
        } else {
            mean - root
        };
        [(big, 0.0), (small, 0.0)]
    } else {
        let root = (-discriminant).sqrt();
        [(mean, root), (mean, -root)]
    }
}

/// An orthonormal basis of the plane orthogonal to the unit vector `u` (length `n`): the
/// last `n - 1` columns of the Householder reflection that takes the first axis to `u` (up to
/// sign), as an `n x (n - 1)` row-major matrix.
pub(crate) fn complement_basis(u: &[f64]) -> Vec<f64> {
    let n = u.len();
    if n == 0 {
        return Vec::new();
    }
    // v = u + sign(u_0) e_0; H = I - 2 v v^T / (v . v)
    let mut v = u.to_vec();
    v[0] += if u[0] >= 0.0 { 1.0 } else { -1.0 };
    let vv: f64 = v.iter().map(|x| x * x).sum();
    let mut basis = vec![0.0; n * (n - 1)];
    for i in 0..n {
        for j in 1..n {
            let identity = if i == j { 1.0 } else { 0.0 };
            basis[i * (n - 1) + (j - 1)] = identity - 2.0 * v[i] * v[j] / vv;
        }
    }
    basis
}

/// `b^T a b` for the `n x n` row-major `a` and the `n x m` row-major `b`: `a` restricted to
/// the span of `b`'s orthonormal columns, `m x m` row-major.
pub(crate) fn restrict(a: &[f64], b: &[f64], n: usize, m: usize) -> Vec<f64> {
    let a = DMatrix::from_row_slice(n, n, a);
    let b = DMatrix::from_row_slice(n, m, b);
    let r = b.transpose() * a * b;
    let mut out = Vec::with_capacity(m * m);
    for i in 0..m {
        for j in 0..m {
            out.push(r[(i, j)]);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn eigenvalues_of_rotations_and_shears() {
        // [analytic] a rotation by 0.3 scaled by 2 has eigenvalues 2 exp(+-0.3 i)
        let (c, s) = (2.0 * 0.3f64.cos(), 2.0 * 0.3f64.sin());
        let mut values = eigenvalues(&[c, -s, s, c], 2).expect("finite");
        values.sort_by(|p, q| q.1.total_cmp(&p.1));
        assert!((values[0].0 - c).abs() < 1e-14 && (values[0].1 - s).abs() < 1e-14);
        // [analytic] the identity and a shear have the double eigenvalue 1, both real
        for a in [[1.0, 0.0, 0.0, 1.0], [1.0, 1e-3, 0.0, 1.0]] {
            for (re, im) in eigenvalues(&a, 2).expect("finite") {
                assert!((re - 1.0).abs() < 1e-12 && im == 0.0, "{re} {im}");
            }
        }
        // [analytic] a triangular matrix has its diagonal as eigenvalues
        let mut values =
            eigenvalues(&[3.0, 1.0, 2.0, 0.0, -2.0, 5.0, 0.0, 0.0, 0.5], 3).expect("finite");
        values.sort_by(|p, q| p.0.total_cmp(&q.0));
        for (value, expected) in values.iter().zip([-2.0, 0.5, 3.0]) {
            assert!((value.0 - expected).abs() < 1e-12 && value.1 == 0.0);
        }
        assert!(eigenvalues(&[f64::NAN], 1).is_none());
        assert!(eigenvalues(&[], 0).expect("empty").is_empty());
    }

    #[test]
    fn least_norm_solve_regular_and_singular() {
        // [analytic] [[2, 1], [1, 3]] x = [3, 5] has x = (0.8, 1.4)
        let (x, singular) = solve_least_norm(&[2.0, 1.0, 1.0, 3.0], 2, &[3.0, 5.0]).expect("ok");
        assert!(!singular);
        assert!((x[0] - 0.8).abs() < 1e-14 && (x[1] - 1.4).abs() < 1e-14);
        // [analytic] the zero matrix: singular, least-norm solution zero
        let (x, singular) = solve_least_norm(&[0.0; 4], 2, &[1e-12, 0.0]).expect("ok");
        assert!(singular && x == vec![0.0, 0.0]);
    }

    #[test]
    fn complement_basis_is_orthonormal_and_orthogonal_to_u() {
        for u in [
            vec![1.0, 0.0, 0.0],
            vec![0.0, -0.6, 0.8],
            vec![-0.5, 0.5, std::f64::consts::FRAC_1_SQRT_2],
        ] {
            let b = complement_basis(&u);
            for j in 0..2 {
                let col: Vec<f64> = (0..3).map(|i| b[i * 2 + j]).collect();
                let dot_u: f64 = col.iter().zip(&u).map(|(a, b)| a * b).sum();
                let length: f64 = col.iter().map(|a| a * a).sum();
                // [analytic] a Householder reflection is orthogonal
                assert!(dot_u.abs() < 1e-15 && (length - 1.0).abs() < 1e-15);
            }
        }
    }
}
