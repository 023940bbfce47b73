//! The search for an orbit of k returns from a list of seeds: Newton's method from each seed
//! in turn, and the check that the orbit found really needs k returns. An orbit of j returns
//! (j a divisor of k) run k / j times is also a fixed point of the k-times-applied map, so
//! Newton may converge to it; such an orbit is never reported as one of k returns.

use super::CycleError;
use super::flow_map::{FlowMap, MapPoint, norm};
use super::newton::{NewtonSettings, Refined, refine};
use super::report::CycleReport;

/// Within this many Newton tolerances (relative to the size of the state, at least 1) two
/// points of an orbit count as one. Newton's residual bounds how far apart the images of a
/// fixed point of fewer returns can be; the factor leaves room for multipliers near -1, which
/// amplify it.
const COINCIDE_TOLERANCES: f64 = 1e3;

/// A seed whose Newton iteration converged onto an orbit of fewer returns than asked.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FewerReturns {
    /// Index of the seed in the list given.
    pub seed: usize,
    /// Returns after which its orbit closes.
    pub returns: usize,
}

/// How an orbit search went.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Search {
    /// Returns asked for.
    pub asked: usize,
    /// Index of the seed the reported orbit came from.
    pub seed: usize,
    /// Seeds tried in all.
    pub n_seeds: usize,
    /// Seeds set aside because their orbit closed after fewer returns, in the order tried.
    pub fewer: Vec<FewerReturns>,
}

impl Search {
    /// A search that found what it asked for at once, from a single seed.
    pub fn direct(k: usize) -> Self {
        Self {
            asked: k,
            seed: 0,
            n_seeds: 1,
            fewer: Vec::new(),
        }
    }

    /// A sentence for the report when the search did not simply find what was asked (an orbit
    /// of fewer returns was found, or seeds were set aside); `None` otherwise. `k` is the
    /// number of returns of the reported orbit.
    pub fn note(&self, k: usize) -> Option<String> {
        let asked = returns(self.asked);
        if k < self.asked {
            return Some(format!(
                "asked for {asked}, but every seed that converged closed after {}: this is the \
                 {k}-return orbit (as an orbit of {asked} its points would coincide); no orbit \
                 of {asked} that are all distinct was found from {} seed(s)",
                returns(k),
                self.n_seeds
            ));
        }
        if self.fewer.is_empty() {
            return None;
        }
        // group the seeds set aside by the returns their orbit closed after
        let mut groups: Vec<(usize, Vec<usize>)> = Vec::new();
        for f in &self.fewer {
            match groups.iter_mut().find(|(j, _)| *j == f.returns) {
                Some((_, seeds)) => seeds.push(f.seed + 1),
                None => groups.push((f.returns, vec![f.seed + 1])),
            }
        }
        let set_aside: Vec<String> = groups
            .iter()
            .map(|(j, seeds)| {
                let which = match seeds.as_slice() {
                    [one] => format!("seed {one}"),
                    many => format!(
                        "seeds {}",
                        many.iter()
                            .map(ToString::to_string)
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                };
                format!(
                    "{which} closed after {} (the {j}-return orbit run {} times)",
                    returns(*j),
                    self.asked / j
                )
            })
            .collect();
        Some(format!(
            "asked for {asked}: {} and set aside; this orbit, from seed {}, has {asked} that \
             are all distinct",
            set_aside.join("; "),
            self.seed + 1
        ))
    }
}

/// "1 return", "3 returns".
fn returns(k: usize) -> String {
    if k == 1 {
        "1 return".to_string()
    } else {
        format!("{k} returns")
    }
}

/// The least number of returns `j` (a divisor of `k`) after which the orbit of `point` comes
/// back to within `closeness` of it; `orbit` holds its images after 1, 2, ..., k returns.
pub fn least_returns(point: &MapPoint, orbit: &[MapPoint], k: usize, closeness: f64) -> usize {
    (1..k)
        .filter(|j| k.is_multiple_of(*j))
        .find(|&j| {
            orbit
                .get(j - 1)
                .is_some_and(|image| distance(&image.state, &point.state) <= closeness)
        })
        .unwrap_or(k)
}

/// How close two points of an orbit must be to count as one, for Newton's `settings`.
fn closeness(settings: &NewtonSettings, point: &MapPoint) -> f64 {
    COINCIDE_TOLERANCES * settings.tolerance * norm(&point.state).max(1.0)
}

/// Looks for an orbit of `k` returns of `map` from each seed in turn (closest return first,
/// as [`super::close_returns`] orders them) and reports the first whose points are all
/// distinct.
///
/// A seed whose Newton iteration converges onto an orbit of fewer returns `j` (confirmed by
/// Newton's method on the j-times-applied map from the same point) is set aside and the next
/// seed is tried. When no seed gives an orbit of `k` distinct returns, the orbit of fewer
/// returns first found is reported as what it is (`k = j`); [`CycleReport::search`] records
/// what happened, and [`Search::note`] says it in a sentence.
///
/// # Errors
/// [`CycleError::ZeroReturns`] for `k = 0`, [`CycleError::NoSeed`] without seeds; otherwise,
/// when every seed fails, the failure of the first seed.
pub fn find_cycle(
    map: &mut FlowMap,
    seeds: &[MapPoint],
    k: usize,
    settings: &NewtonSettings,
) -> Result<CycleReport, CycleError> {
    if k == 0 {
        return Err(CycleError::ZeroReturns);
    }
    let mut first_error = None;
    let mut fewer = Vec::new();
    let mut shortest: Option<(usize, Refined)> = None;
    let search = |seed: usize, fewer: &[FewerReturns]| Search {
        asked: k,
        seed,
        n_seeds: seeds.len(),
        fewer: fewer.to_vec(),
    };
    for (index, seed) in seeds.iter().enumerate() {
        let refined = match refine(map, seed, k, settings) {
            Ok(refined) => refined,
            Err(err) => {
                first_error.get_or_insert(err);
                continue;
            }
        };
        if let Some(short) = fewer_returns(map, &refined, k, settings) {
            fewer.push(FewerReturns {
                seed: index,
                returns: short.image.orbit.len(),
            });
            shortest.get_or_insert((index, short));
            continue;
        }
        match CycleReport::measure(map, refined) {
            Ok(mut report) => {
                report.search = search(index, &fewer);
                return Ok(report);
            }
            Err(err) => {
                first_error.get_or_insert(err);
            }
        }
    }
    if let Some((index, short)) = shortest {
        let mut report = CycleReport::measure(map, short)?;
        report.search = search(index, &fewer);
        return Ok(report);
    }
    Err(first_error.unwrap_or(CycleError::NoSeed))
}

/// The orbit of fewer returns that `refined` really is, if it closes before `k` returns:
/// refined again on the j-times-applied map from its point (which confirms it and gives its
/// own multipliers and period).
fn fewer_returns(
    map: &mut FlowMap,
    refined: &Refined,
    k: usize,
    settings: &NewtonSettings,
) -> Option<Refined> {
    let close = closeness(settings, &refined.point);
    let j = least_returns(&refined.point, &refined.image.orbit, k, close);
    if j == k {
        return None;
    }
    let short = refine(map, &refined.point, j, settings).ok()?;
    (distance(&short.point.state, &refined.point.state) <= close).then_some(short)
}

fn distance(a: &[f64], b: &[f64]) -> f64 {
    a.iter()
        .zip(b)
        .map(|(p, q)| (p - q) * (p - q))
        .sum::<f64>()
        .sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn at(state: &[f64]) -> MapPoint {
        MapPoint {
            t: 0.0,
            state: state.to_vec(),
        }
    }

    #[test]
    fn an_orbit_run_twice_has_its_own_number_of_returns() {
        // [analytic] a fixed point run four times closes after one return
        let point = at(&[1.0, 2.0]);
        let orbit = vec![point.clone(); 4];
        assert_eq!(least_returns(&point, &orbit, 4, 1e-9), 1);
        // [analytic] a 2-cycle asked as 4 returns closes after two
        let other = at(&[3.0, 2.0]);
        let orbit = vec![other.clone(), point.clone(), other.clone(), point.clone()];
        assert_eq!(least_returns(&point, &orbit, 4, 1e-9), 2);
        // [analytic] three distinct points: 3 returns; 2 is not a divisor of 3
        let third = at(&[0.0, 0.0]);
        let orbit = vec![other, third, point.clone()];
        assert_eq!(least_returns(&point, &orbit, 3, 1e-9), 3);
    }

    #[test]
    fn the_note_says_what_was_found() {
        let collapsed = Search {
            asked: 2,
            seed: 0,
            n_seeds: 4,
            fewer: vec![FewerReturns {
                seed: 0,
                returns: 1,
            }],
        };
        let note = collapsed.note(1).expect("a note");
        assert!(note.contains("asked for 2 returns"), "{note}");
        assert!(note.contains("this is the 1-return orbit"), "{note}");
        let skipped = collapsed.note(2).expect("a note");
        assert!(
            skipped.contains("seed 1 closed after 1 return (the 1-return orbit run 2 times)"),
            "{skipped}"
        );
        assert_eq!(Search::direct(2).note(2), None);
    }
}
