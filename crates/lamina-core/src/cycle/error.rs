//! Why a periodic orbit could not be found or measured.

use crate::integrate::StepError;

/// Why a periodic-orbit search failed. Every variant says what went wrong in words an engineer
/// can act on, with the numbers that tell how far it got.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum CycleError {
    /// The model uses `t`, so where it goes after a crossing depends on the crossing time as
    /// well as the state: its cut map is not a map of the state alone.
    #[error(
        "the model uses t (it is forced): its cut map depends on the crossing time, not only on \
         the state, so it has no fixed points of its own; use the strobe map at the forcing period"
    )]
    ForcedCut,
    /// The cut surface uses `t`: it moves, so its return map is not a map of the state alone.
    #[error(
        "the cut surface uses t (it moves): its return map is not a map of the state alone; use a \
         surface of the states only, or the strobe map"
    )]
    MovingCut,
    /// The number of returns asked for is zero.
    #[error("the number of returns k must be at least 1")]
    ZeroReturns,
    /// A seed or start state of the wrong length, or not finite.
    #[error("the seed state {detail}")]
    BadSeed {
        /// What is wrong with it.
        detail: String,
    },
    /// No seed to start Newton's method from.
    #[error("no seed point: the run gave no cut points or strobe samples to start from")]
    NoSeed,
    /// The orbit did not come back to the cut in time.
    #[error(
        "lost a crossing: after {found} of {k} return(s) the orbit did not cross the cut again \
         within {max_return_time} time units (from t = {t})"
    )]
    LostCrossing {
        /// Returns found before it was lost.
        found: usize,
        /// Returns asked for.
        k: usize,
        /// Time of the last crossing (or of the start).
        t: f64,
        /// The longest return time allowed.
        max_return_time: f64,
    },
    /// The flow grazes the cut instead of crossing it (the flow is tangent to the surface).
    #[error(
        "left the cut: the flow is tangent to the cut surface at t = {t} (it grazes the surface \
         instead of crossing it), so the return map is not defined there"
    )]
    Tangent {
        /// Time of the grazing crossing.
        t: f64,
    },
    /// Newton's method closed in on a rest point (an equilibrium) on the cut: a "periodic
    /// orbit" too small to tell from a point at the tolerance used.
    #[error(
        "the orbit shrank onto a rest point (an equilibrium) on the cut: its size {size:e} is \
         below what the tolerance resolves, so there is no periodic orbit here"
    )]
    RestPoint {
        /// Estimated size of the orbit (speed at the point times the period over 2 pi).
        size: f64,
    },
    /// The strobe map's fixed point is a resting point (an equilibrium) of the model: its
    /// rates vanish there at every time of the period, so it is no periodic orbit.
    #[error(
        "the strobe map's fixed point is a resting point (an equilibrium), not a periodic orbit: \
         the rates vanish there (the motion over the period, {size:e}, is below what the \
         tolerance resolves); the point is {}",
        state_text(state)
    )]
    RestingPoint {
        /// Estimated size of the motion (largest speed over the period times the period over
        /// 2 pi).
        size: f64,
        /// The resting point.
        state: Vec<f64>,
    },
    /// A state passed the scenario's escape size while following the orbit.
    #[error("a state passed the escape size {} at t = {t} while following the orbit", crate::run::Size(*escape))]
    Escaped {
        /// The escape size (`limits.escape`).
        escape: f64,
        /// Time at the end of the step where it happened.
        t: f64,
    },
    /// The model's switches piled up while following the orbit (a sliding mode).
    #[error(
        "the model chatters at t = {t} while following the orbit: its switches pile up with vanishing time between them (a sliding mode)"
    )]
    Chattering {
        /// Time of the last switch.
        t: f64,
    },
    /// The integration of the orbit and its variational equations failed.
    #[error("integrating the orbit and its variational equations failed: {0}")]
    Integration(#[from] StepError),
    /// The Jacobian of `map - identity` is singular where the residual is not small.
    #[error(
        "singular Jacobian: the linearised map minus the identity is singular (a multiplier is 1: \
         a family of orbits, a centre, or a fold) and the residual {residual:e} is not small"
    )]
    Singular {
        /// The residual `|P^k(x) - x|` where it stopped.
        residual: f64,
    },
    /// Newton's method did not reach the tolerance.
    #[error(
        "no convergence: Newton's method stopped after {iterations} step(s) with the residual \
         {residual:e} (tolerance {tolerance:e}); try another seed, another k, or a tighter \
         integrator tolerance"
    )]
    NoConvergence {
        /// Newton steps taken.
        iterations: usize,
        /// The residual `|P^k(x) - x|` reached.
        residual: f64,
        /// The tolerance it had to reach.
        tolerance: f64,
    },
    /// The interrupt was raised while an orbit was followed.
    #[error("cancelled at t = {t} while following the orbit")]
    Cancelled {
        /// Time reached.
        t: f64,
    },
    /// The working memory of the variational equations cannot be had.
    #[error(
        "the variational equations of a model with {n_states} states need about {} of working \
         memory ({n_states} + {n_states}^2 values per vector), more than can be had",
        crate::memory::bytes_text(*bytes)
    )]
    TooLarge {
        /// Bytes needed.
        bytes: u64,
        /// States of the model.
        n_states: usize,
    },
    /// The eigenvalue computation did not converge (non-finite matrix entries).
    #[error("the multipliers could not be computed: {detail}")]
    Eigenvalues {
        /// What went wrong.
        detail: String,
    },
}

/// A state as `(a, b, ...)` with the shortest text that reads back to each number.
fn state_text(state: &[f64]) -> String {
    let values: Vec<String> = state.iter().map(|v| format!("{v:?}")).collect();
    format!("({})", values.join(", "))
}
