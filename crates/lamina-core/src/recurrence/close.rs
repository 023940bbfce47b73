//! Close returns: the points of a cloud that come back nearest to themselves after k
//! returns, the seeds of Newton's method for an orbit of k returns.

use super::distance;

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

#[cfg(test)]
mod tests {
    use super::*;

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
