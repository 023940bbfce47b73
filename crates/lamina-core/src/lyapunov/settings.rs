//! Settings of a Lyapunov-exponent run and the errors of settings that cannot run.

/// How the exponents are computed. The integrator and the time window come from the
/// [`RunSpec`](crate::run::RunSpec): the settle time is integrated without tangent vectors,
/// the exponents are averaged over the span after it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ExponentSettings {
    /// How many exponents, the largest first (`None`: all of them, one per state).
    /// `Some(1)` is the cheap case: the largest exponent alone, with one tangent vector.
    pub count: Option<usize>,
    /// The tangent vectors are re-orthonormalised (QR) after any step at whose end one of
    /// them has grown or shrunk by more than this factor since the last QR (> 1). The QR is
    /// then as frequent as the flow stretches, whatever the time scale of the model, and the
    /// vectors never get far from orthonormal, so the integrator's tolerance holds for every
    /// direction.
    pub growth_limit: f64,
    /// At most this many samples of the running estimate are kept (and sent to the sink),
    /// evenly spread over the span, plus the final one.
    pub trace_samples: usize,
    /// The spread (error indication) is taken over this last fraction of the averaging time
    /// (in (0, 1]).
    pub tail_fraction: f64,
}

impl Default for ExponentSettings {
    fn default() -> Self {
        Self {
            count: None,
            growth_limit: 10.0,
            trace_samples: 1000,
            tail_fraction: 0.2,
        }
    }
}

impl ExponentSettings {
    /// The full spectrum with the default settings.
    pub fn all() -> Self {
        Self::default()
    }

    /// The largest exponent alone with the default settings.
    pub fn largest() -> Self {
        Self {
            count: Some(1),
            ..Self::default()
        }
    }
}

/// Settings or a window that a Lyapunov-exponent run cannot use.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ExponentError {
    /// The number of exponents asked for is 0 or more than the model has states.
    #[error(
        "cannot compute {requested} exponent(s) of a model with {n_states} state(s): ask for 1 to {n_states}"
    )]
    Count {
        /// Exponents asked for.
        requested: usize,
        /// States of the model.
        n_states: usize,
    },
    /// The time window is not usable: span not positive, settle negative, or a time not
    /// finite.
    #[error(
        "the time window (start {t_start}, settle {settle}, span {span}) needs a finite start, settle >= 0 and span > 0"
    )]
    Window {
        /// Start time.
        t_start: f64,
        /// Settle time.
        settle: f64,
        /// Span.
        span: f64,
    },
    /// The time window lies too far from 0 for its length: it would be lost in rounding.
    #[error("{0}")]
    TimeTooCoarse(crate::run::TimeResolution),
    /// The working memory the run needs cannot be had.
    #[error(
        "{n_exponents} exponent(s) of a model with {n_states} state(s) need about {} of working \
         memory (the variational equations carry {n_states} + {n_states} x {n_exponents} values), \
         more than can be had: compute fewer exponents",
        crate::memory::bytes_text(*bytes)
    )]
    TooLarge {
        /// Bytes needed.
        bytes: u64,
        /// States of the model.
        n_states: usize,
        /// Exponents asked for.
        n_exponents: usize,
    },
    /// The growth limit is not a finite number above 1.
    #[error("the growth limit {0} must be a finite number above 1")]
    GrowthLimit(f64),
    /// The tail fraction is not in (0, 1].
    #[error("the tail fraction {0} must be above 0 and at most 1")]
    TailFraction(f64),
}
