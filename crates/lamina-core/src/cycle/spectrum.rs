//! Multipliers of a periodic orbit and what they say: the stability verdict, and the
//! multiplier nearest the unit circle with the way stability would be lost there.

use std::fmt;

use super::CycleError;
use super::linalg;

/// Half-width of the band around the unit circle in which a multiplier counts as on it
/// (neither stable nor unstable): numerical multipliers of a centre or an identity map come
/// out within about the integrator tolerance of modulus 1.
pub const UNIT_CIRCLE_BAND: f64 = 1e-6;

/// Imaginary parts below this fraction of the modulus count as zero (a real multiplier).
const REAL_TOLERANCE: f64 = 1e-9;

/// A multiplier: an eigenvalue of a linearised map, a complex number.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Multiplier {
    /// Real part.
    pub re: f64,
    /// Imaginary part.
    pub im: f64,
}

impl Multiplier {
    /// Its modulus `|m|`.
    pub fn modulus(&self) -> f64 {
        self.re.hypot(self.im)
    }

    /// Whether it is real (imaginary part negligible against the modulus).
    pub fn is_real(&self) -> bool {
        self.im.abs() <= REAL_TOLERANCE * self.modulus().max(f64::MIN_POSITIVE)
    }
}

impl fmt::Display for Multiplier {
    /// Full precision; scientific notation for very small or large parts.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.is_real() {
            write!(f, "{}", Number(self.re))
        } else if self.im >= 0.0 {
            write!(f, "{} + {}i", Number(self.re), Number(self.im))
        } else {
            write!(f, "{} - {}i", Number(self.re), Number(-self.im))
        }
    }
}

/// A number written with full round-trip precision, in scientific notation when it is very
/// small or large (so `1.2e-12`, not twelve zeros).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Number(pub f64);

impl fmt::Display for Number {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let magnitude = self.0.abs();
        if magnitude == 0.0 || (1e-4..1e7).contains(&magnitude) || !magnitude.is_finite() {
            write!(f, "{}", self.0)
        } else {
            write!(f, "{:e}", self.0)
        }
    }
}

/// The eigenvalues of the `n x n` row-major matrix `a`, sorted by decreasing modulus (a
/// complex pair with the positive imaginary part first).
///
/// # Errors
/// [`CycleError::Eigenvalues`] when the matrix has non-finite entries or the Schur
/// decomposition does not converge.
pub fn multipliers(a: &[f64], n: usize) -> Result<Vec<Multiplier>, CycleError> {
    if a.len() != n * n {
        return Err(CycleError::Eigenvalues {
            detail: format!(
                "a {n} x {n} matrix needs {} entries, not {}",
                n * n,
                a.len()
            ),
        });
    }
    let values = linalg::eigenvalues(a, n).ok_or_else(|| CycleError::Eigenvalues {
        detail: "the linearised map has non-finite entries or its Schur form did not converge"
            .to_string(),
    })?;
    let mut values: Vec<Multiplier> = values
        .into_iter()
        .map(|(re, im)| Multiplier { re, im })
        .collect();
    values.sort_by(|p, q| {
        q.modulus()
            .total_cmp(&p.modulus())
            .then(q.im.total_cmp(&p.im))
    });
    Ok(values)
}

/// The stability of a periodic orbit, from its map's multipliers.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Verdict {
    /// Every multiplier inside the unit circle: nearby orbits approach it.
    Stable,
    /// Some multipliers outside the unit circle: a saddle (or a source when all are).
    Unstable {
        /// Multipliers outside the unit circle (unstable directions).
        n_unstable: usize,
    },
    /// None outside, some on the unit circle (within [`UNIT_CIRCLE_BAND`]): neutral, as for
    /// a centre, a family of orbits or an identity map; linear terms do not decide.
    Neutral {
        /// Multipliers on the unit circle.
        n_on_circle: usize,
    },
}

impl Verdict {
    /// The verdict for these multipliers.
    pub fn of(multipliers: &[Multiplier]) -> Self {
        let n_unstable = multipliers
            .iter()
            .filter(|m| m.modulus() > 1.0 + UNIT_CIRCLE_BAND)
            .count();
        let n_on_circle = multipliers
            .iter()
            .filter(|m| (m.modulus() - 1.0).abs() <= UNIT_CIRCLE_BAND)
            .count();
        if n_unstable > 0 {
            Self::Unstable { n_unstable }
        } else if n_on_circle > 0 {
            Self::Neutral { n_on_circle }
        } else {
            Self::Stable
        }
    }

    /// Whether the orbit is (asymptotically) stable.
    pub fn is_stable(&self) -> bool {
        matches!(self, Self::Stable)
    }
}

impl fmt::Display for Verdict {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Stable => write!(f, "stable"),
            Self::Unstable { n_unstable: 1 } => write!(f, "unstable, 1 unstable direction"),
            Self::Unstable { n_unstable } => {
                write!(f, "unstable, {n_unstable} unstable directions")
            }
            Self::Neutral { n_on_circle } => write!(
                f,
                "neutral: {n_on_circle} multiplier(s) on the unit circle (a centre, a family of \
                 orbits or a bifurcation point)"
            ),
        }
    }
}

/// How stability is gained or lost where a multiplier crosses the unit circle.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Loss {
    /// A real multiplier through +1: a fold (orbits meet and vanish) or a symmetry breaking.
    ThroughPlusOne,
    /// A real multiplier through -1: period doubling.
    ThroughMinusOne,
    /// A complex pair through the unit circle: birth of a torus (a second frequency).
    ComplexPair,
}

impl fmt::Display for Loss {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::ThroughPlusOne => write!(f, "through +1 (fold-like: orbits meet and vanish)"),
            Self::ThroughMinusOne => write!(f, "through -1 (period doubling)"),
            Self::ComplexPair => write!(f, "a complex pair (torus birth: a second frequency)"),
        }
    }
}

/// The multiplier nearest the unit circle.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Nearest {
    /// The multiplier.
    pub multiplier: Multiplier,
    /// `|m| - 1`: negative inside the circle.
    pub distance: f64,
    /// How stability would change if it reached the circle here.
    pub loss: Loss,
}

impl Nearest {
    /// The multiplier of `multipliers` nearest the unit circle; `None` for an empty list.
    pub fn of(multipliers: &[Multiplier]) -> Option<Self> {
        let nearest = multipliers.iter().min_by(|p, q| {
            (p.modulus() - 1.0)
                .abs()
                .total_cmp(&(q.modulus() - 1.0).abs())
        })?;
        let loss = if !nearest.is_real() {
            Loss::ComplexPair
        } else if nearest.re >= 0.0 {
            Loss::ThroughPlusOne
        } else {
            Loss::ThroughMinusOne
        };
        Some(Self {
            multiplier: *nearest,
            distance: nearest.modulus() - 1.0,
            loss,
        })
    }
}
