//! Recurrence in a cloud of cut points or strobe samples: does it repeat after k returns
//! (k <= 12), does it not repeat at all (a torus or chaos), or is it still drifting (not
//! settled)? One detector for every caller: the periodic-orbit search (which k to look for,
//! which points to start from), the sweep (the label, colour and listed changes of every
//! parameter value) and anything else that classifies a cloud.
//!
//! The tolerance of the repeat test follows the integrator's accuracy and the cloud's own
//! size: two points count as one when they are within [`ACCURACY_TOLERANCES`] integrator
//! tolerances (`rtol` times the cloud's size plus `atol`) of each other. A cloud that does not
//! repeat within that tolerance is examined for drift before it is called a torus or chaos:
//! steps after k returns that a fitted linear map shrinks (a transient still converging onto
//! an orbit, straight or as a spiral), or points that keep moving one way (a slow drift), read
//! "not settled". A spiral that comes back near itself after k returns while it still
//! converges onto an orbit of fewer is "not settled" too, never a k-return orbit.

mod close;
mod drift;

use std::fmt;

pub use close::{CloseReturn, close_returns};

use crate::integrate::StepControl;

/// Two points within this many integrator tolerances (`rtol * size + atol`, with the cloud's
/// size) count as the same point. Points of a settled orbit computed at a tolerance differ by
/// the integration error accumulated over a return, which for a stable orbit is some tens of
/// tolerances; the factor leaves room above that.
pub const ACCURACY_TOLERANCES: f64 = 1e3;

/// The repeat tolerance is never below this fraction of the cloud's size (double precision).
const ROUND_OFF: f64 = 1e-13;

/// Fewest pairs `(p[i], p[i + k])` a k is judged on.
const MIN_PAIRS: usize = 3;

/// Fewest points on which a cloud that does not repeat is called "no repeat" or "not settled":
/// with fewer, a torus or chaos cannot be told from a transient.
pub const MIN_POINTS_TO_JUDGE: usize = 16;

/// Settings of the recurrence detector.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RecurrenceSettings {
    /// Largest number of returns tried.
    pub max_k: usize,
    /// Relative tolerance of the integration that made the points.
    pub rtol: f64,
    /// Absolute tolerance of the integration that made the points.
    pub atol: f64,
}

impl Default for RecurrenceSettings {
    /// Up to 12 returns, for points integrated at the default tolerances.
    fn default() -> Self {
        Self::for_control(&StepControl::default())
    }
}

impl RecurrenceSettings {
    /// Up to 12 returns, for points integrated with `control`'s tolerances.
    pub fn for_control(control: &StepControl) -> Self {
        Self {
            max_k: 12,
            rtol: control.rtol,
            atol: control.atol,
        }
    }

    /// The distance within which two points of a cloud of this `size` (root-mean-square
    /// magnitude) count as the same point.
    pub fn tolerance(&self, size: f64) -> f64 {
        (ACCURACY_TOLERANCES * (self.rtol * size + self.atol)).max(ROUND_OFF * size)
    }
}

/// What the recurrence detector found.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Recurrence {
    /// The points repeat every `k` returns: a periodic orbit of `k` returns.
    Repeats {
        /// The least such k.
        k: usize,
        /// The largest `|p[i + k] - p[i]|` over the later half of the points.
        spread: f64,
        /// The tolerance it was judged against.
        tolerance: f64,
    },
    /// The points have not settled: they still converge onto an orbit or drift.
    NotSettled {
        /// The number of returns the drift was found at: the orbit it converges onto has that
        /// many returns (or the stride at which the points move one way).
        closest_k: usize,
        /// The largest `|p[i + k] - p[i]|` over the later half, for that k.
        spread: f64,
        /// The tolerance a repeat needs.
        tolerance: f64,
        /// What the drift looks like.
        drift: drift::Drift,
    },
    /// No k up to `max_k` repeats and the points do not drift: a torus or chaos (or a
    /// periodic orbit of more returns).
    NoRepeat {
        /// Largest k tried.
        max_k: usize,
        /// The k that came closest.
        closest_k: usize,
        /// Its spread.
        spread: f64,
        /// The tolerance it was judged against.
        tolerance: f64,
    },
    /// Too few points to judge: fewer than 4, or fewer than [`MIN_POINTS_TO_JUDGE`] that do
    /// not repeat.
    TooFewPoints {
        /// How many there were.
        n_points: usize,
    },
}

pub use drift::Drift;

/// The recurrence as a plain label, for colours, legends and changes along a sweep.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum RecurrenceKind {
    /// A periodic orbit of this many returns.
    Returns(usize),
    /// Not settled.
    NotSettled,
    /// No repeat within the largest number of returns tried.
    NoRepeat {
        /// The most returns tried.
        max_k: usize,
    },
    /// Too few points to judge.
    TooFewPoints,
}

impl fmt::Display for RecurrenceKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Returns(k) => write!(f, "{k}-return orbit"),
            Self::NotSettled => write!(f, "not settled"),
            Self::NoRepeat { max_k } => write!(f, "no repeat within {max_k} returns"),
            Self::TooFewPoints => write!(f, "too few points"),
        }
    }
}

impl Recurrence {
    /// The number of returns, if the points repeat.
    pub fn k(&self) -> Option<usize> {
        match self {
            Self::Repeats { k, .. } => Some(*k),
            _ => None,
        }
    }

    /// The plain label.
    pub fn kind(&self) -> RecurrenceKind {
        match self {
            Self::Repeats { k, .. } => RecurrenceKind::Returns(*k),
            Self::NotSettled { .. } => RecurrenceKind::NotSettled,
            Self::NoRepeat { max_k, .. } => RecurrenceKind::NoRepeat { max_k: *max_k },
            Self::TooFewPoints { .. } => RecurrenceKind::TooFewPoints,
        }
    }

    /// The number of returns to look for an orbit with: the repeat, or for a cloud not
    /// settled the k it comes closest to repeating after (a transient still converging onto
    /// an orbit, which Newton's method can finish); `None` for no repeat or too few points.
    pub fn search_k(&self) -> Option<usize> {
        match self {
            Self::Repeats { k, .. } => Some(*k),
            Self::NotSettled { closest_k, .. } => Some(*closest_k),
            Self::NoRepeat { .. } | Self::TooFewPoints { .. } => None,
        }
    }
}

impl fmt::Display for Recurrence {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Repeats { k: 1, spread, .. } => {
                write!(f, "repeats every return (spread {spread:.1e})")
            }
            Self::Repeats { k, spread, .. } => {
                write!(f, "repeats every {k} returns (spread {spread:.1e})")
            }
            Self::NotSettled {
                spread,
                tolerance,
                drift,
                ..
            } => write!(
                f,
                "not settled: {drift}, spread {spread:.1e} against a repeat tolerance of \
                 {tolerance:.1e}; lengthen the settle time"
            ),
            Self::NoRepeat {
                max_k,
                closest_k,
                spread,
                tolerance,
            } => write!(
                f,
                "no repeat within {max_k} returns (closest: every {closest_k}, spread \
                 {spread:.1e} against a tolerance of {tolerance:.1e}): a torus or chaos"
            ),
            Self::TooFewPoints { n_points } => write!(
                f,
                "too few points ({n_points}) to tell a repeat, a drift, a torus and chaos apart \
                 (keep at least {MIN_POINTS_TO_JUDGE})"
            ),
        }
    }
}

/// Classifies a cloud of cut points or strobe samples (in time order): the least k up to
/// `settings.max_k` after which every point of the later half comes back to within the
/// tolerance ([`RecurrenceSettings::tolerance`]) of itself; failing that, "not settled" when
/// the points drift ([`Drift`]), else "no repeat" (both only from [`MIN_POINTS_TO_JUDGE`]
/// points on: fewer are "too few points").
pub fn find_recurrence<P: AsRef<[f64]>>(points: &[P], settings: &RecurrenceSettings) -> Recurrence {
    let n_points = points.len();
    if n_points < MIN_PAIRS + 1 {
        return Recurrence::TooFewPoints { n_points };
    }
    let tolerance = settings.tolerance(size(points));
    let mut closest: Option<(usize, f64)> = None;
    for k in 1..=settings.max_k.max(1) {
        if n_points < k + MIN_PAIRS {
            break;
        }
        let spread = later_spread(points, k);
        if spread <= tolerance {
            return repeats_or_spiral(points, k, spread, tolerance);
        }
        // a spread not clearly below a smaller k's is no closer to repeating
        if closest.is_none_or(|(_, best)| spread < 0.5 * best) {
            closest = Some((k, spread));
        }
    }
    let Some((closest_k, spread)) = closest else {
        return Recurrence::TooFewPoints { n_points };
    };
    if n_points < MIN_POINTS_TO_JUDGE {
        return Recurrence::TooFewPoints { n_points };
    }
    match drift::drift(points, closest_k, tolerance) {
        Some(drift) => {
            let k = drift.k();
            Recurrence::NotSettled {
                closest_k: k,
                spread: later_spread(points, k),
                tolerance,
                drift,
            }
        }
        None => Recurrence::NoRepeat {
            max_k: settings.max_k,
            closest_k,
            spread,
            tolerance,
        },
    }
}

/// A repeat after `k` returns, unless the differences after fewer returns still shrink
/// steadily: then the cloud is a transient spiralling onto an orbit of fewer returns whose
/// turn per return is close to a fraction j / k of a full turn, so that after k returns it
/// comes back near itself while it is still converging (a slowly damped resonance sampled
/// once per clock period does this).
fn repeats_or_spiral<P: AsRef<[f64]>>(
    points: &[P],
    k: usize,
    spread: f64,
    tolerance: f64,
) -> Recurrence {
    for j in 1..k {
        if let Some(drift @ Drift::Converging { .. }) = drift::converging(points, j, tolerance) {
            return Recurrence::NotSettled {
                closest_k: j,
                spread: later_spread(points, j),
                tolerance,
                drift,
            };
        }
    }
    Recurrence::Repeats {
        k,
        spread,
        tolerance,
    }
}

/// The largest `|p[i + k] - p[i]|` over the pairs inside the later half of the points where
/// there are enough of them, else over the last [`MIN_PAIRS`] pairs.
fn later_spread<P: AsRef<[f64]>>(points: &[P], k: usize) -> f64 {
    let n = points.len();
    let first = (n / 2).min(n.saturating_sub(k + MIN_PAIRS));
    (first..n.saturating_sub(k))
        .map(|i| distance(points[i].as_ref(), points[i + k].as_ref()))
        .fold(0.0f64, f64::max)
}

/// The root-mean-square magnitude of the points (never zero).
fn size<P: AsRef<[f64]>>(points: &[P]) -> f64 {
    let mean_square = points
        .iter()
        .map(|p| p.as_ref().iter().map(|v| v * v).sum::<f64>())
        .sum::<f64>()
        / points.len().max(1) as f64;
    mean_square.sqrt().max(f64::MIN_POSITIVE)
}

pub(crate) fn distance(a: &[f64], b: &[f64]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(p, q)| (p - q) * (p - q))
        .sum::<f64>()
        .sqrt()
}

#[cfg(test)]
mod tests;
