//! Newton's method on `P^k(x) - x = 0` for the cut map or the strobe map, with the Jacobian
//! from the variational equations and a damped (halved) step.

use super::flow_map::{FlowMap, MapImage, MapPoint, norm};
use super::{CycleError, linalg};

/// Settings of Newton's method.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct NewtonSettings {
    /// Most Newton steps.
    pub max_iterations: usize,
    /// Converged when `|P^k(x) - x| <= tolerance * max(1, |x|)`, or when a full step moves the
    /// point by less than that.
    pub tolerance: f64,
    /// Most halvings of a step that does not lower the residual.
    pub max_halvings: usize,
}

impl Default for NewtonSettings {
    fn default() -> Self {
        Self {
            max_iterations: 40,
            tolerance: 1e-9,
            max_halvings: 12,
        }
    }
}

impl NewtonSettings {
    /// Settings whose tolerance suits an integration at relative tolerance `rtol`: a hundred
    /// times `rtol` (the map itself is only that accurate), at least 1e-13.
    pub fn for_rtol(rtol: f64) -> Self {
        Self {
            tolerance: (100.0 * rtol).max(1e-13),
            ..Self::default()
        }
    }
}

/// A refined periodic point.
#[derive(Clone, Debug, PartialEq)]
pub struct Refined {
    /// The periodic point (on the cut for the cut map).
    pub point: MapPoint,
    /// Its image under `k` applications of the map, with the linearisation.
    pub image: MapImage,
    /// `|P^k(x) - x|` at the point.
    pub residual: f64,
    /// Newton steps taken.
    pub iterations: usize,
}

/// Refines `seed` to a point of period `k` of `map` by Newton's method.
///
/// Each step solves `(DP^k - I) d = -(P^k(x) - x)` for the least-norm `d` (singular directions
/// are left alone, so an identity map or a centre, whose residual is already small, converges
/// at once instead of failing) and halves the step until the residual drops. Stability plays no
/// part: saddles are found as well as stable orbits.
///
/// # Errors
/// [`CycleError::NoConvergence`] with the residual reached, [`CycleError::Singular`] when the
/// Jacobian is singular and the residual is not small, or the error of the map itself
/// ([`CycleError::LostCrossing`], [`CycleError::Tangent`], ...) when no damped step could be
/// evaluated.
pub fn refine(
    map: &mut FlowMap,
    seed: &MapPoint,
    k: usize,
    settings: &NewtonSettings,
) -> Result<Refined, CycleError> {
    let n = map.dim();
    let t0 = seed.t;
    let mut x = seed.state.clone();
    map.project(t0, &mut x);
    let mut image = map.apply(
        &MapPoint {
            t: t0,
            state: x.clone(),
        },
        k,
    )?;
    let mut residual = distance(&image.state, &x);
    let done = |x: &[f64]| settings.tolerance * norm(x).max(1.0);
    for iteration in 0..settings.max_iterations {
        if residual <= done(&x) {
            return finish(map, settings, t0, x, image, residual, iteration);
        }
        let mut a = image.jacobian.clone();
        for i in 0..n {
            a[i * n + i] -= 1.0;
        }
        let rhs: Vec<f64> = x.iter().zip(&image.state).map(|(x, p)| x - p).collect();
        let Some((step, singular)) = linalg::solve_least_norm(&a, n, &rhs) else {
            return Err(CycleError::NoConvergence {
                iterations: iteration,
                residual,
                tolerance: settings.tolerance,
            });
        };
        let step_length = norm(&step);
        let mut lambda = 1.0;
        let mut last_error = None;
        let mut accepted = None;
        for _ in 0..=settings.max_halvings {
            let mut trial: Vec<f64> = x.iter().zip(&step).map(|(x, d)| x + lambda * d).collect();
            map.project(t0, &mut trial);
            match map.apply(
                &MapPoint {
                    t: t0,
                    state: trial.clone(),
                },
                k,
            ) {
                Ok(trial_image) => {
                    let trial_residual = distance(&trial_image.state, &trial);
                    if trial_residual < residual {
                        accepted = Some((trial, trial_image, trial_residual));
                        break;
                    }
                }
                Err(err @ CycleError::Cancelled { .. }) => return Err(err),
                Err(err) => last_error = Some(err),
            }
            lambda *= 0.5;
        }
        match accepted {
            Some((trial, trial_image, trial_residual)) => {
                x = trial;
                image = trial_image;
                residual = trial_residual;
                if lambda == 1.0 && step_length <= done(&x) {
                    return finish(map, settings, t0, x, image, residual, iteration + 1);
                }
            }
            // no step lowers the residual: at the noise floor of the integration when the
            // step is tiny, otherwise stuck
            None if step_length <= 1e3 * done(&x) => {
                return finish(map, settings, t0, x, image, residual, iteration);
            }
            None if singular => return Err(CycleError::Singular { residual }),
            None => {
                return Err(last_error.unwrap_or(CycleError::NoConvergence {
                    iterations: iteration,
                    residual,
                    tolerance: settings.tolerance,
                }));
            }
        }
    }
    if residual <= done(&x) {
        let iterations = settings.max_iterations;
        return finish(map, settings, t0, x, image, residual, iterations);
    }
    Err(CycleError::NoConvergence {
        iterations: settings.max_iterations,
        residual,
        tolerance: settings.tolerance,
    })
}

/// Orbits whose size is below this many tolerances (relative to the state) count as a rest
/// point: the damped steps stop at the noise floor only this close.
const REST_POINT_TOLERANCES: f64 = 1e4;
/// Times across the period at which the rates at a strobe map's fixed point are looked at.
const REST_SAMPLES: usize = 8;

/// The converged point, unless it is a rest point: on the cut (the return map of a spiral
/// around an equilibrium on the cut has that equilibrium as its limit, not a periodic orbit)
/// or as the strobe map's fixed point (a damped model settled at rest).
#[allow(clippy::too_many_arguments)]
fn finish(
    map: &mut FlowMap,
    settings: &NewtonSettings,
    t0: f64,
    x: Vec<f64>,
    image: MapImage,
    residual: f64,
    iterations: usize,
) -> Result<Refined, CycleError> {
    let period = image.t - image.t_start;
    let rest_size = REST_POINT_TOLERANCES * settings.tolerance * norm(&x).max(1.0);
    if map.is_cut() {
        let size = map.speed(t0, &x) * period / std::f64::consts::TAU;
        if size <= rest_size {
            return Err(CycleError::RestPoint { size });
        }
    } else {
        // a fixed point of the strobe map where the rates vanish at every time of the period
        // (the model's field is frozen at the point and looked at across the period, so a
        // forced orbit that merely turns round at the strobe time is not mistaken for rest)
        let speed = (0..REST_SAMPLES)
            .map(|j| map.speed(t0 + period * j as f64 / REST_SAMPLES as f64, &x))
            .fold(0.0, f64::max);
        let size = speed * period / std::f64::consts::TAU;
        if size <= rest_size {
            return Err(CycleError::RestingPoint { size, state: x });
        }
    }
    Ok(Refined {
        point: MapPoint { t: t0, state: x },
        image,
        residual,
        iterations,
    })
}

/// Euclidean distance.
fn distance(a: &[f64], b: &[f64]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(p, q)| (p - q) * (p - q))
        .sum::<f64>()
        .sqrt()
}
