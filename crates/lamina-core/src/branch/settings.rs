//! Settings of a branch: step sizes along the branch, Newton's corrector, the point limit,
//! the location of special points and the shooting segments of an orbit.

/// How a branch is followed. Step sizes are arclengths in the combined space of the states
/// (the first shooting point of an orbit, its period) and the parameter.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BranchSettings {
    /// Most points computed in each direction.
    pub max_points: usize,
    /// First step, as a fraction of the parameter range's width.
    pub initial_step: f64,
    /// Largest step, as a fraction of the width.
    pub max_step: f64,
    /// Smallest step before Newton's failure ends the branch, as a fraction of the width.
    pub min_step: f64,
    /// Most Newton steps of one correction.
    pub max_iterations: usize,
    /// Newton's tolerance for resting points (relative size of the last step).
    pub rest_tolerance: f64,
    /// Newton's tolerance for orbits, in integrator tolerances (`rtol`).
    pub orbit_tolerance_in_rtol: f64,
    /// A special point is located until its bracket is this narrow in the parameter (relative
    /// to `max(1, |value|)`).
    pub locate_tolerance: f64,
    /// Largest turn between neighbouring tangents (radians) before the step is shortened.
    pub max_turn: f64,
    /// Most shooting segments of an orbit.
    pub max_segments: usize,
    /// An orbit is cut into more shooting segments when one segment stretches a perturbation
    /// by more than this.
    pub growth_per_segment: f64,
    /// An orbit branch stops when the period exceeds this many times its start period.
    pub period_limit: f64,
}

impl Default for BranchSettings {
    fn default() -> Self {
        Self {
            max_points: 400,
            initial_step: 0.01,
            max_step: 0.05,
            min_step: 1e-9,
            max_iterations: 10,
            rest_tolerance: 1e-11,
            orbit_tolerance_in_rtol: 100.0,
            locate_tolerance: 1e-10,
            max_turn: 0.5,
            max_segments: 32,
            growth_per_segment: 1e3,
            period_limit: 50.0,
        }
    }
}
