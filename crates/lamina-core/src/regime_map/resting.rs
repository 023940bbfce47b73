//! A cell's resting point: the exact largest exponent of a cell at rest (the largest real
//! part of the Jacobian's eigenvalues there), and the test that lets a cell whose settle
//! time ended at a stable resting point skip its span.

use nalgebra::{DMatrix, DVector};

use crate::integrate::Rates;
use crate::model::Model;
use crate::rest::{RestNewtonSettings, eigenvalues_of, solve_resting_point};

/// The largest model for which the span may be skipped: the bound solves an `n^2 x n^2`
/// linear system.
const MOST_STATES_TO_SKIP: usize = 8;

/// The resting point Newton's method reaches from `state` and the largest real part of the
/// eigenvalues of the Jacobian there, when it lies within `near` of `state` (largest state
/// difference); `None` otherwise or when Newton's method fails. For a model that does not
/// use `t`.
pub(super) fn resting_exponent(
    model: &mut Model,
    state: &[f64],
    near: f64,
    escape: f64,
) -> Option<(Vec<f64>, Vec<f64>, f64)> {
    let n = state.len();
    let rest = solve_resting_point(model, state, escape, &RestNewtonSettings::default()).ok()?;
    let distance = (rest.state.iter().zip(state))
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    if distance > near {
        return None;
    }
    let eigenvalues = eigenvalues_of(&rest.jacobian, n)?;
    let largest = eigenvalues
        .iter()
        .map(|e| e.re)
        .fold(f64::NEG_INFINITY, f64::max);
    largest
        .is_finite()
        .then_some((rest.state, rest.jacobian, largest))
}

/// Whether a model that does not use `t`, at `state` after its settle time, is so close to a
/// stable resting point that its motion over any span stays within `tolerance` (a function
/// of the size of the states, as the classification's motion test takes it): then the span
/// need not be run. Returns the exact largest exponent there.
///
/// Every eigenvalue of the Jacobian `J` at the resting point `x*` must have a negative real
/// part. Then `P` solving `J^T P + P J = -I` is positive definite, and along the linearised
/// flow `e' = J e` the energy `e^T P e` never grows, so `|e(t)| <= K |e(0)|` with
/// `K = sqrt(cond P)` for all later times (Lyapunov's theorem for linear systems). The motion
/// over the span, at most twice the largest distance from `x*`, is then at most
/// `2 K |state - x*|`; the span is skipped when that is at most half the tolerance (the other
/// half left to the flow's nonlinear part, which is of second order in the tiny distance).
/// A cheap first test (`|f| <= |J| * tolerance` at `state`) spares Newton's method for cells
/// that still move.
pub(super) fn rests_for_good(
    model: &mut Model,
    state: &[f64],
    tolerance: impl Fn(f64) -> f64,
    escape: f64,
) -> Option<f64> {
    let n = state.len();
    if n == 0 || n > MOST_STATES_TO_SKIP {
        return None;
    }
    let mut rates = vec![0.0; n];
    let mut jacobian = vec![0.0; n * n];
    model.rates(0.0, state, &mut rates);
    model.jacobian(0.0, state, &mut jacobian);
    let allowed = 0.25 * tolerance(root_mean_square(state));
    if norm(&rates) > norm(&jacobian) * allowed {
        return None;
    }
    let (rest, jacobian, largest) = resting_exponent(model, state, allowed, escape)?;
    if largest >= 0.0 {
        return None;
    }
    let distance = norm(
        &(rest.iter().zip(state))
            .map(|(a, b)| a - b)
            .collect::<Vec<f64>>(),
    );
    let size = root_mean_square(&rest).min(root_mean_square(state));
    let growth = transient_growth(&jacobian, n)?;
    (2.0 * growth * distance <= 0.5 * tolerance(size)).then_some(largest)
}

/// `sqrt(cond P)` for `P` solving `J^T P + P J = -I` (`J` row-major `n x n` with every
/// eigenvalue in the left half-plane): the most the linearised flow `e' = J e` ever
/// lengthens a vector. `None` when the equation has no positive definite solution.
fn transient_growth(jacobian: &[f64], n: usize) -> Option<f64> {
    let j = |row: usize, column: usize| jacobian[row * n + column];
    // vec(P) column-major: P_ab at a + n b; row (i, j) of J^T P + P J
    let mut system = DMatrix::<f64>::zeros(n * n, n * n);
    for i in 0..n {
        for k in 0..n {
            for c in 0..n {
                // (J^T P)_ic = sum_k J_ki P_kc, (P J)_ic = sum_k P_ik J_kc
                system[(i + n * c, k + n * c)] += j(k, i);
                system[(i + n * c, i + n * k)] += j(k, c);
            }
        }
    }
    let rhs = DVector::from_fn(n * n, |r, _| if r % (n + 1) == 0 { -1.0 } else { 0.0 });
    let p = system.lu().solve(&rhs)?;
    let p = DMatrix::from_fn(n, n, |a, b| 0.5 * (p[a + n * b] + p[b + n * a]));
    let eigenvalues = p.symmetric_eigenvalues();
    let (low, high) = eigenvalues
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        });
    (low > 0.0 && high.is_finite()).then(|| (high / low).sqrt())
}

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

fn root_mean_square(v: &[f64]) -> f64 {
    (v.iter().map(|x| x * x).sum::<f64>() / v.len().max(1) as f64).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_normal_matrix_never_lengthens_and_a_sheared_one_does() {
        // [analytic] a normal stable J (here -I and a rotation with damping) has P = I / (2a)
        // up to scale, so cond P = 1: no transient growth
        let damped_rotation = [-1.0, 2.0, -2.0, -1.0];
        let growth = transient_growth(&damped_rotation, 2).expect("stable");
        assert!((growth - 1.0).abs() < 1e-12, "{growth}");
        // [analytic] J = [[-1, s], [0, -1]] lengthens e = (0, 1) to about s / e at t = 1, so
        // the bound must be at least that
        let shear = [-1.0, 10.0, 0.0, -1.0];
        let growth = transient_growth(&shear, 2).expect("stable");
        assert!(growth >= 10.0 / std::f64::consts::E, "{growth}");
        // [analytic] an unstable J has no positive definite P
        assert!(transient_growth(&[0.5, 0.0, 0.0, -1.0], 2).is_none());
    }
}
