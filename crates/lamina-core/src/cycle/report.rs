//! The periodic-orbit report: Newton's point measured (period, multipliers of the map, Floquet
//! multipliers, verdict, stability margin).

use super::flow_map::{FlowMap, MapPoint};
use super::newton::Refined;
use super::search::Search;
use super::spectrum::{Multiplier, Outlook, Verdict, multipliers};
use super::{CycleError, linalg};

/// Which map an orbit was found on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum MapChoice {
    /// The cut map (Poincaré map).
    Cut,
    /// The strobe map (time-T map).
    Strobe,
}

/// A periodic orbit found and measured.
#[derive(Clone, Debug, PartialEq)]
pub struct CycleReport {
    /// The map the orbit is a fixed point of (after `k` applications).
    pub map: MapChoice,
    /// Returns per period: the least number of returns after which the orbit closes (never
    /// an orbit of fewer returns run several times; see [`Search`]).
    pub k: usize,
    /// The total time of the `k` returns.
    pub period: f64,
    /// The periodic point (all states; on the cut for the cut map).
    pub point: MapPoint,
    /// The `k` points of the orbit on the map, starting with `point`.
    pub orbit: Vec<MapPoint>,
    /// Multipliers of the k-times-applied map, by decreasing modulus: `n - 1` for the cut map
    /// (the linearised map restricted to the cut), `n` for the strobe map.
    pub multipliers: Vec<Multiplier>,
    /// For the cut map: all `n` Floquet multipliers, the eigenvalues of the monodromy matrix
    /// over the period, one of them the trivial 1 (along the flow), by decreasing modulus.
    /// `None` for the strobe map, whose multipliers are already those of the monodromy matrix
    /// over `k` strobe periods.
    pub floquet: Option<Vec<Multiplier>>,
    /// The monodromy matrix `Phi` over the period, `n x n` row-major.
    pub monodromy: Vec<f64>,
    /// `|P^k(x) - x|` at the point.
    pub residual: f64,
    /// Newton steps taken.
    pub iterations: usize,
    /// Whether the derivatives came from central differences of the map (rates that jump
    /// with the states) rather than the variational equations.
    pub from_differences: bool,
    /// Switches on the orbit, each crossed with its saltation matrix in the variational
    /// equations (0 for a model without switches, or when differences were used).
    pub n_saltations: u64,
    /// Whether differences were used because a switch on the orbit is not crossed
    /// transversally (the flow slides along or grazes it), where no saltation matrix exists.
    pub sliding: bool,
    /// Stable, unstable (with the number of unstable directions) or neutral.
    pub verdict: Verdict,
    /// The stability margin: how far inside the unit circle, how stability would be lost
    /// where a multiplier is close to it, or how strongly the orbit repels.
    pub outlook: Outlook,
    /// How the search went: the returns asked for and the seeds set aside because they
    /// closed after fewer returns.
    pub search: Search,
}

impl CycleReport {
    /// Where the derivatives came from, in words: the variational equations (with the
    /// saltation matrices of the switches), or central differences of the map and why.
    pub fn derivatives(&self) -> String {
        match (self.from_differences, self.sliding, self.n_saltations) {
            (true, true, _) => "central differences of the map (a switch on the orbit is not \
                                crossed transversally: the flow slides along or grazes it)"
                .to_string(),
            (true, false, _) => {
                "central differences of the map (the rates jump with the states: %)".to_string()
            }
            (false, _, 0) => "variational equations".to_string(),
            (false, _, n) => {
                format!("variational equations, with a saltation matrix at each of {n} switches")
            }
        }
    }

    /// Measures a refined point: multipliers, Floquet multipliers, verdict.
    ///
    /// For the cut map the linearised map `(I - f grad g^T / (grad g . f)) Phi` has the
    /// trivial eigenvalue 0 along the flow; it is restricted to an orthonormal basis of the
    /// cut's tangent plane, which leaves exactly the `n - 1` multipliers of the cut map.
    ///
    /// # Errors
    /// [`CycleError::Eigenvalues`] for a non-finite linearisation; [`CycleError::Tangent`]
    /// when the cut has no normal at the point.
    pub fn measure(map: &mut FlowMap, refined: Refined) -> Result<Self, CycleError> {
        let n = map.dim();
        let Refined {
            point,
            image,
            residual,
            iterations,
        } = refined;
        let (choice, map_multipliers, floquet) = if map.is_cut() {
            let normal = map
                .unit_normal(point.t, &point.state)
                .ok_or(CycleError::Tangent { t: point.t })?;
            let basis = linalg::complement_basis(&normal);
            let restricted = linalg::restrict(&image.jacobian, &basis, n, n - 1);
            (
                MapChoice::Cut,
                multipliers(&restricted, n - 1)?,
                Some(multipliers(&image.monodromy, n)?),
            )
        } else {
            (MapChoice::Strobe, multipliers(&image.jacobian, n)?, None)
        };
        let image_k = image.orbit.len();
        let mut orbit = Vec::with_capacity(image_k);
        orbit.push(point.clone());
        orbit.extend(
            image
                .orbit
                .iter()
                .take(image.orbit.len().saturating_sub(1))
                .cloned(),
        );
        Ok(Self {
            map: choice,
            k: image_k,
            period: image.t - image.t_start,
            point,
            orbit,
            verdict: Verdict::of(&map_multipliers),
            outlook: Outlook::of(&map_multipliers),
            multipliers: map_multipliers,
            floquet,
            monodromy: image.monodromy,
            residual,
            iterations,
            from_differences: map.uses_differences(),
            n_saltations: if map.uses_differences() {
                0
            } else {
                map.n_saltations()
            },
            sliding: map.fell_back_to_differences(),
            search: Search::direct(image_k),
        })
    }

    /// Whether the orbit is (asymptotically) stable.
    pub fn is_stable(&self) -> bool {
        self.verdict.is_stable()
    }

    /// A sentence on how the search went when it did not simply find what was asked (an
    /// orbit of fewer returns, or seeds set aside because theirs closed early).
    pub fn search_note(&self) -> Option<String> {
        self.search.note(self.k)
    }
}
