//! Why resting points could not be searched for or one could not be refined.

/// Why a resting-point search or refinement failed.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum RestError {
    /// The model uses `t`: it is driven, so no state stays put.
    #[error(
        "the model uses t (it is forced): no state stays put, so it has no resting points; its \
         steady states are periodic orbits of the strobe map at the forcing period (lamina cycle)"
    )]
    Forced,
    /// The model has no states.
    #[error("the model has no states")]
    NoStates,
    /// A seed of the wrong length or not finite.
    #[error("the seed state {detail}")]
    BadSeed {
        /// What is wrong with it.
        detail: String,
    },
    /// Newton's method did not converge from the seed.
    #[error(
        "Newton's method found no resting point from this state: it stopped after {iterations} \
         step(s) with the rates still {residual:e} in size"
    )]
    NoConvergence {
        /// Steps taken.
        iterations: usize,
        /// Size of the rates where it stopped.
        residual: f64,
    },
    /// Newton's iterates passed the escape size.
    #[error(
        "Newton's iterates passed the escape size {} (no resting point within it from here)",
        crate::run::Size(*escape)
    )]
    Escaped {
        /// The escape size (`limits.escape`).
        escape: f64,
    },
    /// The interrupt flag was raised.
    #[error("stopped (asked to stop)")]
    Cancelled,
}
