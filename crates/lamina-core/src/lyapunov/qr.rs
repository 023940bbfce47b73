//! QR re-orthonormalisation of the tangent vectors by modified Gram–Schmidt.
//!
//! Only the diagonal of R is needed (the logarithms of its entries are what the Lyapunov
//! exponents average), so R is not stored. Each column is orthogonalised twice against the
//! earlier ones ("twice is enough"), which keeps the columns orthonormal to rounding even
//! when they have nearly lined up.

/// A new part shorter than this fraction of its column is rounding noise.
const ROUNDING_NOISE: f64 = 16.0 * f64::EPSILON;

/// Orthonormalises the `m` columns of `columns` in place, column `k` being
/// `columns[k * n..(k + 1) * n]`, and writes the diagonal of R into `diagonal`: entry `k` is
/// the length of column `k`'s part orthogonal to the columns before it.
///
/// Returns false when a column has no part orthogonal to the earlier ones that is finite and
/// longer than rounding noise (the columns were dependent to working precision, or not
/// finite); the columns are then left partly changed.
pub(crate) fn orthonormalise(columns: &mut [f64], n: usize, diagonal: &mut [f64]) -> bool {
    let m = diagonal.len();
    if n == 0 || columns.len() < n * m {
        return false;
    }
    for (k, r) in diagonal.iter_mut().enumerate() {
        let (done, rest) = columns.split_at_mut(k * n);
        let column = &mut rest[..n];
        let original = dot(column, column).sqrt();
        for _pass in 0..2 {
            for earlier in done.chunks_exact(n) {
                let r = dot(earlier, column);
                for (c, &e) in column.iter_mut().zip(earlier) {
                    *c -= r * e;
                }
            }
        }
        let length = dot(column, column).sqrt();
        if !(length.is_finite() && length > ROUNDING_NOISE * original) {
            return false;
        }
        for c in column.iter_mut() {
            *c /= length;
        }
        *r = length;
    }
    true
}

/// The largest length of the `m` columns (each `n` long) of `columns`.
pub(crate) fn longest_column(columns: &[f64], n: usize) -> f64 {
    columns
        .chunks_exact(n.max(1))
        .map(|c| dot(c, c).sqrt())
        .fold(0.0, f64::max)
}

fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn columns_become_orthonormal_and_r_diagonal_is_the_new_part() {
        // [analytic] columns (3, 4, 0) and (1, 1, 1): r11 = 5; the second column's part
        // orthogonal to (0.6, 0.8, 0) is (1,1,1) - 1.4 (0.6, 0.8, 0) = (0.16, -0.12, 1),
        // of length sqrt(0.0256 + 0.0144 + 1) = sqrt(1.04).
        let mut columns = [3.0, 4.0, 0.0, 1.0, 1.0, 1.0];
        let mut diagonal = [0.0; 2];
        assert!(orthonormalise(&mut columns, 3, &mut diagonal));
        assert!((diagonal[0] - 5.0).abs() < 1e-15);
        assert!((diagonal[1] - 1.04_f64.sqrt()).abs() < 1e-15);
        let (a, b) = columns.split_at(3);
        assert!(dot(a, b).abs() < 1e-15);
        assert!((dot(a, a) - 1.0).abs() < 1e-15);
        assert!((dot(b, b) - 1.0).abs() < 1e-15);
    }

    #[test]
    fn nearly_parallel_columns_stay_orthogonal() {
        // [analytic] (1, 0) and (1, 1e-12): the second's new part is (0, 1e-12).
        let mut columns = [1.0, 0.0, 1.0, 1e-12];
        let mut diagonal = [0.0; 2];
        assert!(orthonormalise(&mut columns, 2, &mut diagonal));
        assert!((diagonal[1] - 1e-12).abs() < 1e-24);
        assert!(columns[2].abs() < 1e-15 && (columns[3] - 1.0).abs() < 1e-15);
    }

    #[test]
    fn dependent_or_non_finite_columns_are_refused() {
        let mut diagonal = [0.0; 2];
        assert!(!orthonormalise(&mut [1.0, 2.0, 2.0, 4.0], 2, &mut diagonal));
        assert!(!orthonormalise(
            &mut [f64::NAN, 0.0, 0.0, 1.0],
            2,
            &mut diagonal
        ));
        assert!(!orthonormalise(&mut [1.0, 0.0], 2, &mut diagonal));
    }
}
