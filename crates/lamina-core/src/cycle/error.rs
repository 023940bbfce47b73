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
        "the orbit shrank onto a rest point (an equilibrium) on the cut: its size {size:e} is          below what the tolerance resolves, so there is no periodic orbit here"
    )]
    RestPoint {
        /// Estimated size of the orbit (speed at the point times the period over 2 pi).
        size: f64,
    },
    /// A state passed the scenario's escape size while following the orbit.
    #[error("a state passed the escape size {} at t = {t} while following the orbit", crate::run::Size(*escape))]
    Escaped {
        /// The escape size (`limits.escape`).
        escape: f64,
        /// Time at the end of the step where it happened.
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
    /// The eigenvalue computation did not converge (non-finite matrix entries).
    #[error("the multipliers could not be computed: {detail}")]
    Eigenvalues {
        /// What went wrong.
        detail: String,
    },
}
