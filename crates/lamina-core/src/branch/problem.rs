//! The equations a branch follows, as the walker sees them: `F(u) = 0` with the parameter as
//! the last unknown, their Jacobian, and the measurement of a converged point (its stability,
//! the test functions of the special points, what it records).

use super::error::StepFailure;
use super::types::{Anchor, BranchPoint, EndReason};

/// Test functions that the problem computes from a point's spectrum; the walker adds the fold
/// (the parameter component of the tangent) and the branch point (the bordered determinant).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub(crate) struct Tests {
    /// Hopf: `prod_{i<j} (l_i + l_j)` over the eigenvalues (each factor scaled by
    /// `|l_i| + |l_j|`), zero where a pair sums to zero (Kuznetsov, ch. 10).
    pub(crate) hopf: Option<f64>,
    /// Period doubling: `prod (m_i + 1)` over the multipliers.
    pub(crate) period_doubling: Option<f64>,
    /// Torus birth: `prod_{i<j} (m_i m_j - 1)` over the multipliers.
    pub(crate) torus: Option<f64>,
}

/// A converged point measured.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Measured {
    /// The point as reported (its `iterations` and `arclength` are set by the walker).
    pub(crate) point: BranchPoint,
    /// Test functions of the spectrum.
    pub(crate) tests: Tests,
    /// A reason to stop here (an orbit that shrank or whose period grew too long).
    pub(crate) end: Option<EndReason>,
}

/// A point in a new layout of the unknowns (more shooting segments).
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Layout {
    /// The unknowns.
    pub(crate) unknowns: Vec<f64>,
    /// A guess of the tangent (its weighted parts kept, the rest zero).
    pub(crate) tangent: Vec<f64>,
}

/// A system of equations whose solution curve is followed.
pub(crate) trait Problem: Clone {
    /// Number of unknowns, the parameter last (one more than the number of equations).
    fn n_unknowns(&self) -> usize;

    /// Weight of each unknown in the arclength (1 for those that define the point, 0 for
    /// the further shooting points of an orbit, which follow from the others).
    fn weights(&self) -> &[f64];

    /// Newton's tolerance for the size of the last step, relative to `max(1, |u|)`.
    fn tolerance(&self) -> f64;

    /// Evaluates `F(u)` into `residual` and its Jacobian (row-major, `n_unknowns - 1` rows of
    /// `n_unknowns`) into `jacobian`. `reference` is the predicted point, which fixes the
    /// phase of an orbit.
    fn evaluate(
        &mut self,
        u: &[f64],
        reference: &[f64],
        residual: &mut [f64],
        jacobian: &mut [f64],
    ) -> Result<(), StepFailure>;

    /// Measures the point `u` last evaluated; `previous` is the reported state of the point
    /// before it, to continue the same crossing of an orbit.
    fn measure(&mut self, u: &[f64], previous: Option<&[f64]>) -> Result<Measured, StepFailure>;

    /// With more shooting segments where one segment stretches too much (or always, with
    /// `force`, after a failure): the unknowns and a tangent guess in the new layout.
    fn refine_layout(
        &mut self,
        u: &[f64],
        tangent: &[f64],
        force: bool,
    ) -> Result<Option<Layout>, StepFailure> {
        let _ = (u, tangent, force);
        Ok(None)
    }

    /// Where the point `u` is held, for a branch started there.
    fn anchor(&self, u: &[f64]) -> Anchor;

    /// Most shooting segments used so far (1 for single shooting or a resting point).
    fn most_segments(&self) -> usize {
        1
    }

    /// Whether the Jacobian comes from central differences (rates that jump with the states).
    fn uses_differences(&self) -> bool {
        false
    }
}
