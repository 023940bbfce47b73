//! Plain run settings (names and expression texts), compiled against a model into the
//! cut, strobe and run configuration the drivers use.

use crate::expr::CompileError;
use crate::integrate::{Method, StepControl};

/// Settings of one run: integrator, time window and limits.
#[derive(Clone, Debug, PartialEq)]
pub struct RunSpec {
    /// Integration method.
    pub method: Method,
    /// Tolerances and step limits.
    pub control: StepControl,
    /// Start time.
    pub t_start: f64,
    /// Transient integrated but not recorded, in time units.
    pub settle: f64,
    /// Length of the recorded window after the transient.
    pub span: f64,
    /// The escape size: a run stops when any state's magnitude passes it.
    pub escape: f64,
    /// A run stops after this many cut points or strobe samples (of either kind).
    pub max_points: usize,
    /// Memory budget for the stored steps, in bytes; storing stops beyond it.
    pub store_bytes: usize,
}

impl Default for RunSpec {
    fn default() -> Self {
        Self {
            method: Method::Dp853,
            control: StepControl::default(),
            t_start: 0.0,
            settle: 0.0,
            span: 100.0,
            escape: 1e6,
            max_points: 200_000,
            store_bytes: 512 << 20,
        }
    }
}

impl RunSpec {
    /// Start of the recorded window.
    pub fn t_record(&self) -> f64 {
        self.t_start + self.settle
    }
    /// End of the run.
    pub fn t_end(&self) -> f64 {
        self.t_start + self.settle + self.span
    }
}

/// The cut surface as typed.
#[derive(Clone, Debug, PartialEq)]
pub enum SurfaceSpec {
    /// `sum normal_i x_i = offset`, the normal given by state names (missing states weigh 0).
    Plane {
        /// Weights by state name.
        normal: Vec<(String, f64)>,
        /// Right-hand side `c`.
        offset: f64,
    },
    /// Level surface `g(x, t) = 0` of an expression in states, parameters and `t`.
    Level(String),
}

/// The cut as typed.
#[derive(Clone, Debug, PartialEq)]
pub struct CutSpec {
    /// The surface.
    pub surface: SurfaceSpec,
    /// Which crossings count.
    pub direction: super::Direction,
}

/// The strobe as typed.
#[derive(Clone, Debug, PartialEq)]
pub struct StrobeSpec {
    /// Period expression in parameters (for example `2*pi/w`).
    pub period: String,
    /// Absolute time of sample 0; samples at `first_at + k * period`.
    pub first_at: f64,
}

/// A cut or strobe setting that does not fit the model.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SpecError {
    /// An expression did not compile.
    #[error(transparent)]
    Expression(#[from] CompileError),
    /// A plane normal names something that is not a state.
    #[error("the cut normal names '{name}', which is not a state (states: {known})")]
    UnknownNormalState {
        /// The unknown name.
        name: String,
        /// The state names, comma-separated.
        known: String,
    },
    /// A plane normal with all weights zero.
    #[error("the cut normal is zero: give at least one state a non-zero weight")]
    ZeroNormal,
    /// The strobe period does not evaluate to a positive finite number.
    #[error("the strobe period '{expression}' evaluates to {value}, not a positive number")]
    BadPeriod {
        /// The period expression.
        expression: String,
        /// What it evaluated to.
        value: f64,
    },
    /// The strobe period uses the states or `t`.
    #[error("the strobe period '{expression}' may use only parameters and constants")]
    PeriodNotConstant {
        /// The period expression.
        expression: String,
    },
}
