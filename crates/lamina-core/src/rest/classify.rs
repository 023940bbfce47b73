//! The eigenvalues of a resting point's Jacobian and what they say: stable or not, how many
//! unstable directions, and the textbook kind (node, focus, saddle, saddle focus, centre).

use std::fmt;

use crate::cycle::Number;

/// Real parts within this fraction of the largest eigenvalue modulus count as zero (the point
/// is then not hyperbolic: linear terms do not decide its stability).
pub const ZERO_REAL_PART: f64 = 1e-9;

/// Imaginary parts below this fraction of the modulus count as zero (a real eigenvalue).
const REAL_TOLERANCE: f64 = 1e-12;

/// An eigenvalue of the Jacobian at a resting point, a complex number.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Eigenvalue {
    /// Real part: the growth rate along its direction.
    pub re: f64,
    /// Imaginary part: the angular frequency of the turning it brings.
    pub im: f64,
}

impl Eigenvalue {
    /// Its modulus.
    pub fn modulus(&self) -> f64 {
        self.re.hypot(self.im)
    }

    /// Whether it is real (imaginary part negligible against the modulus).
    pub fn is_real(&self) -> bool {
        self.im.abs() <= REAL_TOLERANCE * self.modulus()
    }
}

impl fmt::Display for Eigenvalue {
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

/// The eigenvalues of the `n x n` row-major Jacobian `a`, most unstable first (by decreasing
/// real part, a complex pair with its positive imaginary part first); `None` when the matrix
/// has non-finite entries.
pub fn eigenvalues_of(a: &[f64], n: usize) -> Option<Vec<Eigenvalue>> {
    if a.len() != n * n {
        return None;
    }
    let mut values: Vec<Eigenvalue> = crate::cycle::linalg::eigenvalues(a, n)?
        .into_iter()
        .map(|(re, im)| Eigenvalue { re, im })
        .collect();
    values.sort_by(|p, q| q.re.total_cmp(&p.re).then(q.im.total_cmp(&p.im)));
    Some(values)
}

/// The kind of a resting point, from its eigenvalues.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RestKind {
    /// All eigenvalues real and negative: nearby states slide straight in.
    StableNode,
    /// All real parts negative, some eigenvalues complex: nearby states spiral in.
    StableFocus,
    /// Real eigenvalues of both signs: states come in along some directions and leave along
    /// others.
    Saddle,
    /// Real parts of both signs with a complex pair: a saddle whose in- or outflow spirals.
    SaddleFocus,
    /// All eigenvalues real and positive: nearby states move straight away.
    UnstableNode,
    /// All real parts positive, some eigenvalues complex: nearby states spiral out.
    UnstableFocus,
    /// All eigenvalues on the imaginary axis, none zero: nearby states circle (a centre of
    /// the linear terms; the nonlinear terms decide).
    Centre,
    /// Some eigenvalue on the imaginary axis (zero, or a pair with others off the axis): the
    /// linear terms do not decide stability, as at a fold or a Hopf point.
    NotHyperbolic,
}

impl RestKind {
    /// The kind in words, for people: `stable focus`.
    pub fn words(self) -> &'static str {
        match self {
            Self::StableNode => "stable node",
            Self::StableFocus => "stable focus",
            Self::Saddle => "saddle",
            Self::SaddleFocus => "saddle focus",
            Self::UnstableNode => "unstable node",
            Self::UnstableFocus => "unstable focus",
            Self::Centre => "centre",
            Self::NotHyperbolic => "not hyperbolic",
        }
    }

    /// The kind as one machine-readable word (words joined by `_`): `stable_focus`.
    pub fn key(self) -> &'static str {
        match self {
            Self::StableNode => "stable_node",
            Self::StableFocus => "stable_focus",
            Self::Saddle => "saddle",
            Self::SaddleFocus => "saddle_focus",
            Self::UnstableNode => "unstable_node",
            Self::UnstableFocus => "unstable_focus",
            Self::Centre => "centre",
            Self::NotHyperbolic => "not_hyperbolic",
        }
    }
}

impl fmt::Display for RestKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.words())
    }
}

/// What the eigenvalues say about a resting point.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Stability {
    /// Every eigenvalue has a negative real part: nearby states return.
    pub stable: bool,
    /// Eigenvalues with a positive real part (unstable directions).
    pub n_unstable: usize,
    /// The kind in words.
    pub kind: RestKind,
}

/// Classifies a resting point by its eigenvalues: a real part within [`ZERO_REAL_PART`] of
/// the largest modulus counts as zero.
pub fn classify(eigenvalues: &[Eigenvalue]) -> Stability {
    let scale = eigenvalues
        .iter()
        .map(Eigenvalue::modulus)
        .fold(0.0f64, f64::max);
    let zero = ZERO_REAL_PART * scale;
    let n_unstable = eigenvalues.iter().filter(|e| e.re > zero).count();
    let n_stable = eigenvalues.iter().filter(|e| e.re < -zero).count();
    let n_on_axis = eigenvalues.len() - n_unstable - n_stable;
    let turning = eigenvalues.iter().any(|e| !e.is_real());
    let kind = if n_on_axis > 0 {
        let all_circle = n_on_axis == eigenvalues.len()
            && eigenvalues
                .iter()
                .all(|e| !e.is_real() && e.im.abs() > zero);
        if all_circle {
            RestKind::Centre
        } else {
            RestKind::NotHyperbolic
        }
    } else if n_unstable == 0 {
        if turning {
            RestKind::StableFocus
        } else {
            RestKind::StableNode
        }
    } else if n_stable == 0 {
        if turning {
            RestKind::UnstableFocus
        } else {
            RestKind::UnstableNode
        }
    } else if turning {
        RestKind::SaddleFocus
    } else {
        RestKind::Saddle
    };
    Stability {
        stable: n_unstable == 0 && n_on_axis == 0,
        n_unstable,
        kind,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn values(list: &[(f64, f64)]) -> Vec<Eigenvalue> {
        list.iter().map(|&(re, im)| Eigenvalue { re, im }).collect()
    }

    #[test]
    fn textbook_kinds() {
        // [analytic] the linear classification of resting points (signs of the real parts,
        // complex or real)
        let cases = [
            (
                vec![(-1.0, 0.0), (-2.0, 0.0)],
                RestKind::StableNode,
                true,
                0,
            ),
            (
                vec![(-1.0, 2.0), (-1.0, -2.0)],
                RestKind::StableFocus,
                true,
                0,
            ),
            (vec![(1.0, 0.0), (-2.0, 0.0)], RestKind::Saddle, false, 1),
            (
                vec![(0.1, 10.0), (0.1, -10.0), (-13.8, 0.0)],
                RestKind::SaddleFocus,
                false,
                2,
            ),
            (
                vec![(1.0, 0.0), (3.0, 0.0)],
                RestKind::UnstableNode,
                false,
                2,
            ),
            (
                vec![(0.5, 1.0), (0.5, -1.0)],
                RestKind::UnstableFocus,
                false,
                2,
            ),
            (vec![(0.0, 1.0), (0.0, -1.0)], RestKind::Centre, false, 0),
            (
                vec![(0.0, 0.0), (-1.0, 0.0)],
                RestKind::NotHyperbolic,
                false,
                0,
            ),
            (vec![(0.0, 0.0)], RestKind::NotHyperbolic, false, 0),
        ];
        for (list, kind, stable, n_unstable) in cases {
            let s = classify(&values(&list));
            assert_eq!(s.kind, kind, "{list:?}");
            assert_eq!(s.stable, stable, "{list:?}");
            assert_eq!(s.n_unstable, n_unstable, "{list:?}");
        }
    }

    #[test]
    fn eigenvalues_sorted_most_unstable_first() {
        // [analytic] a triangular matrix has its diagonal as eigenvalues
        let e = eigenvalues_of(&[-2.0, 1.0, 0.0, 3.0], 2).expect("finite");
        assert_eq!(e[0].re, 3.0);
        assert_eq!(e[1].re, -2.0);
        assert!(eigenvalues_of(&[f64::NAN], 1).is_none());
    }
}
