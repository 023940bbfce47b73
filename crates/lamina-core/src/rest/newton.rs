//! Newton's method on `f(x) = 0` for one resting point: the Jacobian from the compiled model,
//! the least-norm step (so a singular Jacobian, as at a fold, still gives a step) and a halved
//! step until the rates shrink.

use super::RestError;
use crate::cycle::linalg::solve_least_norm;
use crate::integrate::Rates;
use crate::model::Model;

/// Settings of Newton's method for a resting point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RestNewtonSettings {
    /// Most Newton steps (a point with a zero eigenvalue converges only linearly, so allow
    /// many).
    pub max_iterations: usize,
    /// Converged when a full step moves the point by at most this times `max(1, |x|)`.
    pub step_tolerance: f64,
    /// A converged point must have rates at most this times
    /// `max(1, |J|) * max(1, |x|)` (guards against a stall where the Jacobian is singular).
    pub residual_tolerance: f64,
    /// Most halvings of a step that does not shrink the rates.
    pub max_halvings: usize,
}

impl Default for RestNewtonSettings {
    fn default() -> Self {
        Self {
            max_iterations: 100,
            step_tolerance: 1e-12,
            residual_tolerance: 1e-9,
            max_halvings: 30,
        }
    }
}

/// A resting point refined by Newton's method.
#[derive(Clone, Debug, PartialEq)]
pub struct SolvedRest {
    /// The state.
    pub state: Vec<f64>,
    /// `|f(x)|` there.
    pub residual: f64,
    /// The Jacobian there, `n x n` row-major.
    pub jacobian: Vec<f64>,
    /// Newton steps taken.
    pub iterations: usize,
}

/// Refines `seed` to a resting point of `model` (which must not use `t`; the rates are taken
/// at `t = 0`), every state staying within the escape size `escape`.
///
/// # Errors
/// [`RestError::BadSeed`], [`RestError::NoConvergence`], [`RestError::Escaped`].
pub fn solve_resting_point(
    model: &mut Model,
    seed: &[f64],
    escape: f64,
    settings: &RestNewtonSettings,
) -> Result<SolvedRest, RestError> {
    let n = model.dim();
    if seed.len() != n {
        return Err(RestError::BadSeed {
            detail: format!("has {} values but the model has {n} states", seed.len()),
        });
    }
    if seed.iter().any(|v| !v.is_finite()) {
        return Err(RestError::BadSeed {
            detail: "is not finite".to_string(),
        });
    }
    let mut x = seed.to_vec();
    let mut f = vec![0.0; n];
    let mut jacobian = vec![0.0; n * n];
    let mut trial_f = vec![0.0; n];
    model.rates(0.0, &x, &mut f);
    let mut residual = norm(&f);
    for iteration in 0..settings.max_iterations {
        if !residual.is_finite() {
            break;
        }
        model.jacobian(0.0, &x, &mut jacobian);
        let rhs: Vec<f64> = f.iter().map(|v| -v).collect();
        let Some((step, _singular)) = solve_least_norm(&jacobian, n, &rhs) else {
            break;
        };
        let step_length = norm(&step);
        if step_length <= settings.step_tolerance * norm(&x).max(1.0) {
            return finish(model, x, f, jacobian, iteration, settings);
        }
        let mut lambda = 1.0;
        let mut accepted = false;
        for _ in 0..=settings.max_halvings {
            let trial: Vec<f64> = x.iter().zip(&step).map(|(a, d)| a + lambda * d).collect();
            model.rates(0.0, &trial, &mut trial_f);
            let trial_residual = norm(&trial_f);
            if trial_residual < residual || (lambda == 1.0 && trial_residual <= residual) {
                x = trial;
                std::mem::swap(&mut f, &mut trial_f);
                residual = trial_residual;
                accepted = true;
                break;
            }
            lambda *= 0.5;
        }
        if x.iter().any(|v| v.abs() > escape) {
            return Err(RestError::Escaped { escape });
        }
        if !accepted {
            // no step shrinks the rates: at round-off if the step is tiny, else stuck
            if step_length <= 1e4 * settings.step_tolerance * norm(&x).max(1.0) {
                return finish(model, x, f, jacobian, iteration, settings);
            }
            return Err(RestError::NoConvergence {
                iterations: iteration,
                residual,
            });
        }
        if residual == 0.0 {
            model.jacobian(0.0, &x, &mut jacobian);
            return finish(model, x, f, jacobian, iteration + 1, settings);
        }
    }
    Err(RestError::NoConvergence {
        iterations: settings.max_iterations,
        residual,
    })
}

/// The converged point, with its Jacobian, if its rates are small enough.
fn finish(
    model: &mut Model,
    x: Vec<f64>,
    f: Vec<f64>,
    mut jacobian: Vec<f64>,
    iterations: usize,
    settings: &RestNewtonSettings,
) -> Result<SolvedRest, RestError> {
    let residual = norm(&f);
    model.jacobian(0.0, &x, &mut jacobian);
    let size = jacobian.iter().fold(0.0f64, |m, v| m.max(v.abs())).max(1.0);
    let allowed = settings.residual_tolerance * size * norm(&x).max(1.0);
    if residual.is_nan() || residual > allowed {
        return Err(RestError::NoConvergence {
            iterations,
            residual,
        });
    }
    Ok(SolvedRest {
        state: x,
        residual,
        jacobian,
        iterations,
    })
}

/// Euclidean norm.
pub(crate) fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}
