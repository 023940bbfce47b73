//! The regime of one cell, as a word: resting, periodic (with its number of returns),
//! quasi-periodic, chaotic, escaped or failed (with why).

use std::fmt;

use crate::run::StopReason;

/// What a cell settles into.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Regime {
    /// The motion comes to rest at a resting point.
    Resting,
    /// A periodic orbit that comes back to itself after `returns` cut points or strobe
    /// samples (1 to 12).
    Periodic {
        /// Returns to the cut or strobe before the orbit closes.
        returns: usize,
    },
    /// The points do not repeat within 12 returns and the largest exponent is not clearly
    /// positive: motion on a torus.
    QuasiPeriodic,
    /// The points do not repeat and the largest exponent is clearly positive.
    Chaotic,
    /// A state passed the escape size.
    Escaped {
        /// When it did.
        t: f64,
    },
    /// The cell could not be classified.
    Failed(Failure),
}

/// Why a cell could not be classified.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Failure {
    /// Its run stopped on numerical trouble other than an escape.
    Stopped(StopReason),
    /// Too few cut points or strobe samples to judge, and the motion does not rest.
    TooFewPoints {
        /// How many there were.
        n_points: usize,
    },
    /// The points do not repeat and the largest exponent could not be estimated.
    NoExponent,
}

impl Regime {
    /// The regime as the one word of the CSV file: `resting`, `periodic`, `quasi_periodic`,
    /// `chaotic`, `escaped` or `failed`.
    pub fn word(&self) -> &'static str {
        match self {
            Self::Resting => "resting",
            Self::Periodic { .. } => "periodic",
            Self::QuasiPeriodic => "quasi_periodic",
            Self::Chaotic => "chaotic",
            Self::Escaped { .. } => "escaped",
            Self::Failed(_) => "failed",
        }
    }

    /// The number of returns of a periodic cell.
    pub fn returns(&self) -> Option<usize> {
        match self {
            Self::Periodic { returns } => Some(*returns),
            _ => None,
        }
    }

    /// The regime named by `word` (as [`Regime::word`] writes it) with `returns` for a
    /// periodic one; an escaped or failed regime read back carries no time or reason.
    pub fn from_word(word: &str, returns: Option<usize>) -> Option<Self> {
        Some(match word {
            "resting" => Self::Resting,
            "periodic" => Self::Periodic {
                returns: returns.filter(|k| *k >= 1)?,
            },
            "quasi_periodic" => Self::QuasiPeriodic,
            "chaotic" => Self::Chaotic,
            "escaped" => Self::Escaped { t: f64::NAN },
            "failed" => Self::Failed(Failure::NoExponent),
            _ => return None,
        })
    }
}

impl fmt::Display for Regime {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Resting => write!(f, "resting"),
            Self::Periodic { returns: 1 } => write!(f, "periodic (1 return)"),
            Self::Periodic { returns } => write!(f, "periodic ({returns} returns)"),
            Self::QuasiPeriodic => write!(f, "quasi-periodic"),
            Self::Chaotic => write!(f, "chaotic"),
            Self::Escaped { t } if t.is_nan() => write!(f, "escaped"),
            Self::Escaped { t } => write!(f, "escaped at t = {t}"),
            Self::Failed(failure) => write!(f, "failed: {failure}"),
        }
    }
}

impl fmt::Display for Failure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Stopped(reason) => write!(f, "{reason}"),
            Self::TooFewPoints { n_points } => write!(
                f,
                "only {n_points} point(s) in the span and the motion does not rest: lengthen \
                 the span or check that the orbit meets the cut"
            ),
            Self::NoExponent => write!(
                f,
                "the points do not repeat and the largest exponent could not be estimated"
            ),
        }
    }
}
