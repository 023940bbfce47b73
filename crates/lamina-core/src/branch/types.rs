//! What a branch is made of: its computed points, its special points, how it was started and
//! why each end stopped. Plain data for the command line and a window panel alike.

use std::fmt;
use std::ops::ControlFlow;

use crate::cycle::{Multiplier, Number};
use crate::rest::{Eigenvalue, RestKind};

/// What a branch follows.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BranchOf {
    /// A resting point (equilibrium).
    Rest,
    /// A periodic orbit.
    Orbit,
}

impl BranchOf {
    /// `rest` or `cycle`, the words of the command line.
    pub fn key(self) -> &'static str {
        match self {
            Self::Rest => "rest",
            Self::Orbit => "cycle",
        }
    }
}

/// The parameter a branch moves and the range it stays in.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BranchRange {
    /// Index of the parameter.
    pub parameter: usize,
    /// One end of the range (the sweep block's `from`).
    pub from: f64,
    /// The other end (the sweep block's `to`).
    pub to: f64,
}

impl BranchRange {
    /// The smaller end.
    pub fn low(&self) -> f64 {
        self.from.min(self.to)
    }
    /// The larger end.
    pub fn high(&self) -> f64 {
        self.from.max(self.to)
    }
    /// `|to - from|`.
    pub fn width(&self) -> f64 {
        (self.to - self.from).abs()
    }
}

/// How stability is read at a branch point.
#[derive(Clone, Debug, PartialEq)]
pub enum Spectrum {
    /// A resting point's eigenvalues, most unstable first.
    Eigenvalues(Vec<Eigenvalue>),
    /// A periodic orbit's multipliers by decreasing modulus: the `n - 1` of its return map
    /// for an autonomous model (the same for any cut the orbit crosses transversally), the
    /// `n` of the strobe map for a forced one.
    Multipliers(Vec<Multiplier>),
}

/// One computed point of a branch.
#[derive(Clone, Debug, PartialEq)]
pub struct BranchPoint {
    /// The parameter value.
    pub value: f64,
    /// The state: the resting point; for an orbit its point on the cut (the crossing that
    /// continues the previous point's), its strobe sample at the strobe's first time, or,
    /// where it records no point, the point where it is held.
    pub state: Vec<f64>,
    /// The orbit's period (total time of one round); `None` for a resting point.
    pub period: Option<f64>,
    /// The orbit's recorded points in orbit order, starting with `state`: its crossings of
    /// the cut over one period, or its strobe samples; empty for a resting point.
    pub points: Vec<Vec<f64>>,
    /// Every eigenvalue (multiplier) inside the stable half plane (unit circle).
    pub stable: bool,
    /// Unstable directions.
    pub n_unstable: usize,
    /// A resting point's kind; `None` for an orbit.
    pub kind: Option<RestKind>,
    /// Eigenvalues or multipliers.
    pub spectrum: Spectrum,
    /// Newton steps of the corrector that found it.
    pub iterations: usize,
    /// Signed distance along the branch from its start (negative toward `from`), in the
    /// norm the steps are measured in.
    pub arclength: f64,
}

/// The kinds of special points, where the behaviour changes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SpecialKind {
    /// The branch turns back: two resting points (or orbits) meet and vanish.
    Fold,
    /// A complex pair of eigenvalues crosses the imaginary axis: an orbit is born.
    Hopf,
    /// A multiplier passes -1: an orbit of twice the period is born.
    PeriodDoubling,
    /// A complex pair of multipliers crosses the unit circle: a torus is born.
    Torus,
    /// Two branches cross.
    BranchPoint,
}

impl SpecialKind {
    /// The kind in words, for people and legends: `period doubling`.
    pub fn words(self) -> &'static str {
        match self {
            Self::Fold => "fold",
            Self::Hopf => "Hopf",
            Self::PeriodDoubling => "period doubling",
            Self::Torus => "torus birth",
            Self::BranchPoint => "branch point",
        }
    }

    /// The kind as one machine-readable word: `period_doubling`.
    pub fn key(self) -> &'static str {
        match self {
            Self::Fold => "fold",
            Self::Hopf => "hopf",
            Self::PeriodDoubling => "period_doubling",
            Self::Torus => "torus",
            Self::BranchPoint => "branch_point",
        }
    }
}

impl fmt::Display for SpecialKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.words())
    }
}

/// Where a special point is held, to start another branch there (opaque).
#[derive(Clone, Debug, PartialEq)]
pub struct Anchor {
    /// The unknowns of the branch's equations at the point.
    pub(crate) unknowns: Vec<f64>,
    /// Shooting segments of the orbit (1 for a resting point).
    pub(crate) segments: usize,
    /// Strobe periods per orbit period for a forced model (else 1).
    pub(crate) returns: usize,
}

/// A point where the behaviour changes, located by a root of its test function.
#[derive(Clone, Debug, PartialEq)]
pub struct SpecialPoint {
    /// What happens there.
    pub kind: SpecialKind,
    /// The parameter value.
    pub value: f64,
    /// The state (as for [`BranchPoint::state`]).
    pub state: Vec<f64>,
    /// The orbit's recorded points there (as for [`BranchPoint::points`]); empty at a
    /// resting point.
    pub points: Vec<Vec<f64>>,
    /// The orbit's period there; at a Hopf point the period of the orbit born there,
    /// `2 pi / frequency`.
    pub period: Option<f64>,
    /// At a Hopf point the angular frequency of the pair on the imaginary axis; at a torus
    /// birth the angle (radians) of the multiplier on the unit circle.
    pub frequency: Option<f64>,
    /// Index (in branch order) of the computed point just before it.
    pub after: usize,
    /// Signed distance along the branch from its start.
    pub arclength: f64,
    /// Where it is held, to start the branch born there.
    pub anchor: Anchor,
}

/// How a branch was started.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum BranchStart {
    /// From the given resting point or orbit at the model's parameter value.
    Given {
        /// The parameter value.
        value: f64,
    },
    /// The orbits born at a Hopf point of a resting branch.
    Hopf {
        /// The parameter value of the Hopf point.
        value: f64,
        /// The period of the orbit born there.
        period: f64,
    },
    /// The orbits of twice the period born at a period doubling.
    PeriodDoubling {
        /// The parameter value of the period doubling.
        value: f64,
        /// The period of the orbit that doubles there.
        period: f64,
    },
}

/// Why one end of a branch stopped.
#[derive(Clone, Debug, PartialEq)]
pub enum EndReason {
    /// It reached an end of the parameter range (the last point lies on it).
    Bound {
        /// The end reached.
        value: f64,
    },
    /// It computed its most points.
    PointLimit {
        /// Points computed in this direction.
        n_points: usize,
    },
    /// Newton's method failed even with the smallest step.
    NewtonFailed {
        /// The parameter value of the last point.
        value: f64,
        /// What failed.
        detail: String,
    },
    /// It came back to its start: the branch is a closed curve.
    ClosedLoop,
    /// The orbit shrank onto a resting point (near a Hopf point).
    OrbitShrank {
        /// The parameter value where it was stopped.
        value: f64,
    },
    /// The period grew past the limit (the orbit slows down near a resting point, as before a
    /// homoclinic orbit).
    PeriodGrew {
        /// The parameter value where it was stopped.
        value: f64,
        /// The period reached.
        period: f64,
    },
    /// The interrupt flag was raised or the sink asked to stop.
    Cancelled,
}

impl EndReason {
    /// A sentence for people, naming the parameter.
    pub fn describe(&self, parameter: &str) -> String {
        match self {
            Self::Bound { value } => {
                format!(
                    "reached the end of the range, {parameter} = {}",
                    Number(*value)
                )
            }
            Self::PointLimit { n_points } => {
                format!("stopped after the most points ({n_points})")
            }
            Self::NewtonFailed { value, detail } => format!(
                "Newton's method failed after {parameter} = {} even with the smallest step: {detail}",
                Number(*value)
            ),
            Self::ClosedLoop => "came back to its start: the branch is a closed curve".to_string(),
            Self::OrbitShrank { value } => format!(
                "the orbit shrank onto a resting point near {parameter} = {} (a Hopf point)",
                Number(*value)
            ),
            Self::PeriodGrew { value, period } => format!(
                "the period grew to {} near {parameter} = {} (the orbit slows down near a \
                 resting point, as before a homoclinic orbit)",
                Number(*period),
                Number(*value)
            ),
            Self::Cancelled => "stopped (asked to stop)".to_string(),
        }
    }
}

/// One end of a branch: which way it went and why it stopped.
#[derive(Clone, Debug, PartialEq)]
pub struct BranchEnd {
    /// The end of the range it was heading for.
    pub toward: f64,
    /// Why it stopped.
    pub reason: EndReason,
    /// Points computed in this direction.
    pub n_points: usize,
}

/// A followed branch.
#[derive(Clone, Debug, PartialEq)]
pub struct Branch {
    /// Resting points or orbits.
    pub of: BranchOf,
    /// Index of the parameter moved.
    pub parameter: usize,
    /// The computed points in branch order: from the end reached going toward `from`,
    /// through the start, to the end reached going toward `to`.
    pub points: Vec<BranchPoint>,
    /// Index of the start in `points`; `None` for a branch born at a special point (its start,
    /// the special point itself, is not an orbit).
    pub start_index: Option<usize>,
    /// The special points in branch order.
    pub special: Vec<SpecialPoint>,
    /// How it was started.
    pub start: BranchStart,
    /// The special point of another branch it was born at (a Hopf point or a period
    /// doubling); `None` for a branch started from a given point.
    pub born_at: Option<SpecialPoint>,
    /// One end per direction followed.
    pub ends: Vec<BranchEnd>,
    /// Whether an orbit's derivatives came from central differences (rates that jump with the
    /// states) instead of the variational equations.
    pub from_differences: bool,
    /// Most shooting segments used for an orbit (1 for single shooting).
    pub most_segments: usize,
}

impl Branch {
    /// Newton steps per computed point (the corrector's, special points not counted).
    pub fn newton_steps_per_point(&self) -> f64 {
        if self.points.is_empty() {
            return 0.0;
        }
        self.points.iter().map(|p| p.iterations).sum::<usize>() as f64 / self.points.len() as f64
    }
}

/// Receives a branch as it grows: each point as it is computed (in computation order; the
/// sign of [`BranchPoint::arclength`] tells the side), each special point as it is located,
/// and progress. Returning `Break` from `point` stops the branch.
pub trait BranchSink {
    /// A new point.
    fn point(&mut self, point: &BranchPoint) -> ControlFlow<()> {
        let _ = point;
        ControlFlow::Continue(())
    }
    /// A special point, located.
    fn special(&mut self, special: &SpecialPoint) {
        let _ = special;
    }
    /// The fraction done (by points or by the parameter distance covered, whichever is
    /// further).
    fn progress(&mut self, fraction: f64) {
        let _ = fraction;
    }
}

impl BranchSink for () {}
