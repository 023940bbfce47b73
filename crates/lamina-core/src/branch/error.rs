//! Why a branch could not be started, and why one correction failed.

use crate::integrate::StepError;

/// Why a branch could not be started (the reasons a started branch stops are
/// [`super::EndReason`]s).
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum BranchError {
    /// The parameter index is not one of the model's.
    #[error("the branch's parameter is not a parameter of the model")]
    NoParameter,
    /// `from` equals `to`.
    #[error("the range is empty: from and to are both {value}; give them different values")]
    EmptyRange {
        /// The one value.
        value: f64,
    },
    /// A range end is not finite.
    #[error("the range [{from}, {to}] is not finite")]
    BadRange {
        /// One end.
        from: f64,
        /// The other.
        to: f64,
    },
    /// The model's value of the parameter is outside the range.
    #[error(
        "the parameter's value {value} lies outside the range [{low}, {high}]: a branch starts \
         at the scenario's value, so move the value into the range or widen the range"
    )]
    OutsideRange {
        /// The model's value.
        value: f64,
        /// The smaller end.
        low: f64,
        /// The larger end.
        high: f64,
    },
    /// A resting-point branch of a model that uses `t`.
    #[error(
        "the model uses t (it is forced): it has no resting points; follow its periodic orbit of \
         the strobe map instead (--of cycle)"
    )]
    Forced,
    /// The cut of a model or surface that uses `t`.
    #[error(
        "the model uses t (it is forced): its orbits are followed on the strobe map, not the cut"
    )]
    ForcedCut,
    /// A strobe orbit of an autonomous model.
    #[error(
        "the model does not use t: its orbits' periods change with the parameter, so they are \
         followed on the cut (or without a map), not on a strobe of fixed period"
    )]
    AutonomousStrobe,
    /// The strobe period does not evaluate.
    #[error("the strobe period is not a positive number at the parameter value {value}")]
    BadPeriod {
        /// The parameter value.
        value: f64,
    },
    /// The start is not near a resting point or an orbit.
    #[error("the start is not near a {what}: {detail}")]
    NotNear {
        /// `resting point` or `periodic orbit`.
        what: &'static str,
        /// What Newton's method said.
        detail: String,
    },
    /// A special point of the wrong kind was given to start a branch at.
    #[error("a {given} point cannot start this branch (it needs a {needed} point)")]
    WrongSpecial {
        /// The kind given.
        given: &'static str,
        /// The kind needed.
        needed: &'static str,
    },
    /// The starting orbit's data do not fit.
    #[error("the starting orbit {detail}")]
    BadOrbit {
        /// What is wrong.
        detail: String,
    },
    /// The interrupt flag was raised.
    #[error("stopped (asked to stop)")]
    Cancelled,
}

/// Why one Newton correction (or an evaluation in it) failed; the walker shortens the step.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub(crate) enum StepFailure {
    /// The integration failed.
    #[error("integrating the orbit failed: {0}")]
    Integration(#[from] StepError),
    /// A state passed the escape size.
    #[error("a state passed the escape size {}", crate::run::Size(*escape))]
    Escaped {
        /// The escape size (`limits.escape`).
        escape: f64,
    },
    /// The period became zero or negative.
    #[error("the period became {period}, not positive")]
    Period {
        /// The period.
        period: f64,
    },
    /// The strobe period did not evaluate.
    #[error("the strobe period is not a positive number at {value}")]
    StrobePeriod {
        /// The parameter value.
        value: f64,
    },
    /// The linear system was singular.
    #[error("the linearised equations are singular")]
    Singular,
    /// Newton's steps stopped shrinking.
    #[error("Newton's steps stopped shrinking (last step {step:e})")]
    NotContracting {
        /// Size of the last step.
        step: f64,
    },
    /// The tangent turned too far in one step (the step may have jumped to another branch).
    #[error("the branch turned by {angle:.2} rad in one step")]
    Turn {
        /// The angle between the tangents.
        angle: f64,
    },
    /// The iteration limit was reached.
    #[error("no convergence in {iterations} steps (last step {step:e})")]
    NoConvergence {
        /// Steps taken.
        iterations: usize,
        /// Size of the last step.
        step: f64,
    },
    /// The eigenvalues or multipliers could not be computed.
    #[error("the eigenvalues could not be computed (non-finite Jacobian)")]
    Spectrum,
    /// The orbit has no direction of flow at its point (it sits on a resting point).
    #[error("the orbit sits on a resting point (no flow at its point)")]
    NoFlow,
    /// The interrupt flag was raised.
    #[error("stopped (asked to stop)")]
    Cancelled,
}
