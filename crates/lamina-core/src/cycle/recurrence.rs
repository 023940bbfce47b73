//! Recurrence in a sequence of settled cut points or strobe samples: the smallest k for which
//! every point comes back near itself after k returns, and the closest returns that seed
//! Newton's method.

use std::fmt;

/// Settings of the recurrence search.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RecurrenceSettings {
    /// Largest k tried.
    pub max_k: usize,
    /// Points repeat after k returns when every `|p[i + k] - p[i]|` in the later half of the
    /// sequence is at most this fraction of the cloud's scale.
    pub tolerance: f64,
}

impl Default for RecurrenceSettings {
    fn default() -> Self {
        Self {
            max_k: 12,
            tolerance: 1e-6,
        }
    }
}

/// What the recurrence search found.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Recurrence {
    /// The points repeat every `k` returns.
    Repeats {
        /// The smallest k.
        k: usize,
        /// The largest `|p[i + k] - p[i]|` over the later half of the points.
        spread: f64,
        /// `spread` over the cloud's scale.
        relative_spread: f64,
    },
    /// No k up to `max_k` repeats: a torus, chaos, or a transient not yet settled.
    NoRepeat {
        /// Largest k tried.
        max_k: usize,
        /// The k that came closest.
        closest_k: usize,
        /// Its relative spread.
        relative_spread: f64,
    },
    /// Too few points to judge.
    TooFewPoints {
        /// How many there were.
        n_points: usize,
    },
}

impl Recurrence {
    /// The repeat length, if the points repeat.
    pub fn k(&self) -> Option<usize> {
        match self {
            Self::Repeats { k, .. } => Some(*k),
            _ => None,
        }
    }
}

impl fmt::Display for Recurrence {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Repeats { k: 1, spread, .. } => {
                write!(f, "repeats every return, spread {spread:.1e}")
            }
            Self::Repeats { k, spread, .. } => {
                write!(f, "repeats every {k} returns, spread {spread:.1e}")
            }
            Self::NoRepeat {
                max_k,
                closest_k,
                relative_spread,
            } => write!(
                f,
                "no repeat within {max_k} returns (closest: every {closest_k}, relative spread \
                 {relative_spread:.1e}): a torus, chaos or an unsettled transient"
            ),
            Self::TooFewPoints { n_points } => {
                write!(f, "too few points to look for a repeat ({n_points})")
            }
        }
    }
}

/// Fewest pairs `(p[i], p[i + k])` a k is judged on.
const MIN_PAIRS: usize = 3;

/// Finds the smallest k (up to `settings.max_k`) for which the points repeat.
///
/// The scale of the cloud is the larger of its extent (the length of the vector of its
/// coordinate ranges) and its root-mean-square distance from the origin, so that a cloud that
/// has collapsed to one point is judged against the size of that point's coordinates.
pub fn find_recurrence<P: AsRef<[f64]>>(points: &[P], settings: &RecurrenceSettings) -> Recurrence {
    let n_points = points.len();
    if n_points < MIN_PAIRS + 1 {
        return Recurrence::TooFewPoints { n_points };
    }
    let scale = cloud_scale(points);
    let from = n_points / 2;
    let mut closest: Option<(usize, f64)> = None;
    for k in 1..=settings.max_k.max(1) {
        // pairs inside the later half where there are enough of them, else the last pairs
        let first = from.min(n_points.saturating_sub(k + MIN_PAIRS));
        if n_points < first + k + MIN_PAIRS {
            break;
        }
        let spread = (first..n_points - k)
            .map(|i| distance(points[i].as_ref(), points[i + k].as_ref()))
            .fold(0.0f64, f64::max);
        let relative_spread = spread / scale;
        if relative_spread <= settings.tolerance {
            return Recurrence::Repeats {
                k,
                spread,
                relative_spread,
            };
        }
        if closest.is_none_or(|(_, best)| relative_spread < best) {
            closest = Some((k, relative_spread));
        }
    }
    match closest {
        Some((closest_k, relative_spread)) => Recurrence::NoRepeat {
            max_k: settings.max_k,
            closest_k,
            relative_spread,
        },
        None => Recurrence::TooFewPoints { n_points },
    }
}

/// A close return: point `index` comes back to within `distance` of itself after k returns.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CloseReturn {
    /// Index of the point.
    pub index: usize,
    /// `|p[index + k] - p[index]|`.
    pub distance: f64,
}

/// Up to `max_count` closest returns after `k` steps, closest first; two chosen points are at
/// least `k` indices apart, so that they are not the same passage of the orbit.
pub fn close_returns<P: AsRef<[f64]>>(
    points: &[P],
    k: usize,
    max_count: usize,
) -> Vec<CloseReturn> {
    if k == 0 || points.len() <= k {
        return Vec::new();
    }
    let mut all: Vec<CloseReturn> = (0..points.len() - k)
        .map(|index| CloseReturn {
            index,
            distance: distance(points[index].as_ref(), points[index + k].as_ref()),
        })
        .filter(|r| r.distance.is_finite())
        .collect();
    all.sort_by(|a, b| {
        a.distance
            .total_cmp(&b.distance)
            .then(b.index.cmp(&a.index))
    });
    let mut chosen: Vec<CloseReturn> = Vec::new();
    for candidate in all {
        if chosen.len() >= max_count {
            break;
        }
        if chosen
            .iter()
            .all(|c| c.index.abs_diff(candidate.index) >= k)
        {
            chosen.push(candidate);
        }
    }
    chosen
}

/// The larger of the cloud's extent and its root-mean-square distance from the origin
/// (never zero).
fn cloud_scale<P: AsRef<[f64]>>(points: &[P]) -> f64 {
    let dim = points.first().map_or(0, |p| p.as_ref().len());
    let mut extent2 = 0.0;
    for j in 0..dim {
        let (lo, hi) = points
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
                let v = p.as_ref().get(j).copied().unwrap_or(0.0);
                (lo.min(v), hi.max(v))
            });
        extent2 += (hi - lo) * (hi - lo);
    }
    let mean_square = points
        .iter()
        .map(|p| p.as_ref().iter().map(|v| v * v).sum::<f64>())
        .sum::<f64>()
        / points.len().max(1) as f64;
    extent2
        .sqrt()
        .max(mean_square.sqrt())
        .max(f64::MIN_POSITIVE)
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

    #[test]
    fn finds_the_smallest_repeat() {
        // [analytic] a sequence cycling through three values repeats every 3
        let points: Vec<Vec<f64>> = (0..30).map(|i| vec![(i % 3) as f64, 1.0]).collect();
        let found = find_recurrence(&points, &RecurrenceSettings::default());
        assert_eq!(found.k(), Some(3), "{found}");
        // [analytic] an irrational rotation never repeats
        let turn = (5f64.sqrt() - 1.0) / 2.0;
        let points: Vec<Vec<f64>> = (0..200)
            .map(|i| {
                let a = std::f64::consts::TAU * turn * i as f64;
                vec![a.cos(), a.sin()]
            })
            .collect();
        let found = find_recurrence(&points, &RecurrenceSettings::default());
        assert!(
            matches!(found, Recurrence::NoRepeat { max_k: 12, .. }),
            "{found}"
        );
        assert!(matches!(
            find_recurrence(&points[..2], &RecurrenceSettings::default()),
            Recurrence::TooFewPoints { n_points: 2 }
        ));
    }

    #[test]
    fn close_returns_are_sorted_and_apart() {
        let points: Vec<Vec<f64>> = [0.0, 5.0, 0.1, 5.0, 0.1001, 7.0]
            .iter()
            .map(|&v| vec![v])
            .collect();
        let found = close_returns(&points, 2, 2);
        // [analytic] p[3] = p[1] exactly; the next closest returns (from 2 and 0) are the same
        // passage, so the second pick is 3
        assert_eq!(found.len(), 2);
        assert_eq!((found[0].index, found[0].distance), (1, 0.0));
        assert_eq!((found[1].index, found[1].distance), (3, 2.0));
    }
}
