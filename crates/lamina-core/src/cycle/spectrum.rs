//! Multipliers of a periodic orbit and what they say: the stability verdict, and the
//! stability margin (how far inside the unit circle, or how stability would be lost where it is
//! close).

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
            Self::ComplexPair => write!(
                f,
                "with a complex pair crossing the circle (torus birth: a second frequency)"
            ),
        }
    }
}

/// A stable orbit whose largest multiplier has a modulus of at least `1 - NEAR_CIRCLE` is
/// close to losing its stability: small changes of a parameter can carry that multiplier
/// across the unit circle. Below it the orbit is comfortably stable.
pub const NEAR_CIRCLE: f64 = 0.1;

/// What the multipliers say about the orbit's stability margin, in words an engineer can use:
/// how far from the unit circle a stable orbit is, how stability would be lost where that is
/// close, or how strongly an unstable orbit repels.
///
/// How stability would be lost is only said where it means something: for a stable orbit
/// with a multiplier close to the circle. For an unstable orbit, or a stable one far inside
/// the circle, the multiplier nearest the circle says nothing about it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Outlook {
    /// Stable with every multiplier well inside the unit circle.
    WellInside {
        /// The multiplier of largest modulus.
        largest: Multiplier,
    },
    /// Stable, but a multiplier lies within [`NEAR_CIRCLE`] of the unit circle.
    NearCircle {
        /// The multiplier of largest modulus.
        largest: Multiplier,
        /// How stability would be lost if it reached the circle.
        loss: Loss,
    },
    /// Neutral: a multiplier on the unit circle (within [`UNIT_CIRCLE_BAND`]), none outside.
    OnCircle {
        /// The multiplier of largest modulus.
        largest: Multiplier,
    },
    /// Unstable: some multipliers outside the unit circle.
    Unstable {
        /// The multiplier of largest modulus.
        largest: Multiplier,
        /// Multipliers outside the circle.
        n_unstable: usize,
    },
    /// No multipliers to judge (a cut map of a model with one state).
    NoMultipliers,
}

impl Outlook {
    /// The outlook for these multipliers (in any order).
    pub fn of(multipliers: &[Multiplier]) -> Self {
        let Some(largest) = multipliers
            .iter()
            .copied()
            .max_by(|p, q| p.modulus().total_cmp(&q.modulus()))
        else {
            return Self::NoMultipliers;
        };
        match Verdict::of(multipliers) {
            Verdict::Unstable { n_unstable } => Self::Unstable {
                largest,
                n_unstable,
            },
            Verdict::Neutral { .. } => Self::OnCircle { largest },
            Verdict::Stable if largest.modulus() >= 1.0 - NEAR_CIRCLE => Self::NearCircle {
                largest,
                loss: Loss::at(&largest),
            },
            Verdict::Stable => Self::WellInside { largest },
        }
    }

    /// How stability would be lost, where that is meaningful (a stable orbit close to the
    /// circle).
    pub fn loss(&self) -> Option<Loss> {
        match self {
            Self::NearCircle { loss, .. } => Some(*loss),
            _ => None,
        }
    }
}

impl fmt::Display for Outlook {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::WellInside { largest } => write!(
                f,
                "all multipliers well inside the unit circle (largest |m| = {})",
                Number(largest.modulus())
            ),
            Self::NearCircle { largest, loss } => write!(
                f,
                "close to the unit circle: m = {largest} (|m| = {}); if it reached the \
                 circle, stability would be lost {loss}",
                Number(largest.modulus())
            ),
            Self::OnCircle { largest } => write!(
                f,
                "on the unit circle: m = {largest} (|m| = {}); the linear terms do not decide \
                 stability",
                Number(largest.modulus())
            ),
            Self::Unstable {
                largest,
                n_unstable: 1,
            } => write!(
                f,
                "unstable: |m| = {} (m = {largest})",
                Number(largest.modulus())
            ),
            Self::Unstable {
                largest,
                n_unstable,
            } => write!(
                f,
                "unstable: {n_unstable} multipliers outside the unit circle, the largest |m| = \
                 {} (m = {largest})",
                Number(largest.modulus())
            ),
            Self::NoMultipliers => write!(f, "no multipliers to judge"),
        }
    }
}

impl Loss {
    /// The way a multiplier `m` would cross the unit circle.
    pub fn at(m: &Multiplier) -> Self {
        if !m.is_real() {
            Self::ComplexPair
        } else if m.re >= 0.0 {
            Self::ThroughPlusOne
        } else {
            Self::ThroughMinusOne
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn real(re: f64) -> Multiplier {
        Multiplier { re, im: 0.0 }
    }

    #[test]
    fn the_outlook_names_the_loss_only_near_the_circle() {
        // [analytic] an unstable orbit with a tiny second multiplier: the tiny one says
        // nothing about how stability is lost
        let outlook = Outlook::of(&[real(5.78), real(-2e-12)]);
        assert!(matches!(outlook, Outlook::Unstable { n_unstable: 1, .. }));
        assert_eq!(outlook.loss(), None);
        let text = outlook.to_string();
        assert!(text.starts_with("unstable: |m| = 5.78"), "{text}");
        assert!(!text.contains("-1") && !text.contains("doubling"), "{text}");
        // [analytic] a stable orbit far inside the circle
        let outlook = Outlook::of(&[real(1.86744273171e-3)]);
        assert!(matches!(outlook, Outlook::WellInside { .. }));
        assert!(outlook.to_string().contains("well inside"), "{outlook}");
        // [analytic] a stable orbit with a multiplier near -1 would lose stability by period
        // doubling, near +1 by a fold, a complex pair by a torus birth
        assert_eq!(
            Outlook::of(&[real(-0.95), real(0.1)]).loss(),
            Some(Loss::ThroughMinusOne)
        );
        assert_eq!(
            Outlook::of(&[real(0.97)]).loss(),
            Some(Loss::ThroughPlusOne)
        );
        let pair = [
            Multiplier { re: 0.6, im: 0.75 },
            Multiplier { re: 0.6, im: -0.75 },
        ];
        assert_eq!(Outlook::of(&pair).loss(), Some(Loss::ComplexPair));
        assert!(matches!(
            Outlook::of(&[real(1.0)]),
            Outlook::OnCircle { .. }
        ));
        assert_eq!(Outlook::of(&[]), Outlook::NoMultipliers);
    }
}
