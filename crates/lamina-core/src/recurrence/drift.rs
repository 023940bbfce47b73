//! Whether a cloud that does not repeat is still on its way: steps after k returns that a
//! linear map shrinks (a transient converging onto an orbit of k returns, straight or as a
//! spiral), or points that keep moving one way (a slow drift). Chaos and a torus do neither:
//! no linear map takes one step of chaos to the next, a torus section turns without
//! shrinking, and their points come and go.

use std::fmt;

use nalgebra::{DMatrix, DVector, SymmetricEigen};

/// Fewest differences a trend is fitted to.
const MIN_TREND: usize = 8;

/// A linear map must reproduce the steps to within this root-mean-square fraction to count
/// as the return map near an orbit (chaos misses by nearly all of the step).
const MAP_MISFIT: f64 = 0.3;

/// The fitted map must shrink the steps by at least this factor over the points kept (a map
/// of radius close to 1 is no evidence of a transient over so few points).
const SHRINK_OVER_WINDOW: f64 = 0.8;

/// A second principal direction of the steps is used when it carries at least this fraction
/// of the first's energy (else the steps lie on a line).
const PLANE_SHARE: f64 = 1e-6;

/// A straight line in time must explain at least this fraction of a coordinate's variance
/// (along every residue class of k) for the points to count as moving one way.
const MOVE_FIT: f64 = 0.9;

/// Fewest members of a residue class for the straight-line test.
const MIN_CLASS: usize = 6;

/// How a cloud drifts.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Drift {
    /// The steps after `k` returns shrink by a linear map: a transient still converging onto
    /// an orbit of `k` returns.
    Converging {
        /// The returns compared.
        k: usize,
        /// Factor by which the differences shrink per return (below 1).
        factor_per_return: f64,
        /// Returns still needed, at that rate, to come within the repeat tolerance.
        more_returns: f64,
    },
    /// The points move steadily one way (every k-th point, for every starting point).
    Moving {
        /// The stride.
        k: usize,
        /// How far they moved over the cloud (the fitted change, largest coordinate).
        distance: f64,
    },
}

impl Drift {
    /// The number of returns (the stride) the drift was found at.
    pub fn k(&self) -> usize {
        match self {
            Self::Converging { k, .. } | Self::Moving { k, .. } => *k,
        }
    }
}

impl fmt::Display for Drift {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Converging {
                k,
                factor_per_return,
                more_returns,
            } => write!(
                f,
                "the steps after {k} return(s) still shrink, by {:.2} % per return (about \
                 {:.0} more returns to settle)",
                100.0 * (1.0 - factor_per_return),
                more_returns.ceil()
            ),
            Self::Moving { distance, .. } => write!(
                f,
                "the points still move steadily one way ({distance:.1e} over the points kept)"
            ),
        }
    }
}

/// The drift of `points`, if they drift by more than `tolerance`: differences after j
/// returns that shrink steadily, for the least j up to `k`, else points that move one way
/// at the least such stride.
pub fn drift<P: AsRef<[f64]>>(points: &[P], k: usize, tolerance: f64) -> Option<Drift> {
    (1..=k)
        .find_map(|j| converging(points, j, tolerance))
        .or_else(|| (1..=k).find_map(|j| moving(points, j, tolerance)))
}

/// A transient converging onto an orbit of `k` returns: along every residue class of k (the
/// points `p[r], p[r + k], p[r + 2k], ...`), the steps `d[m] = p[r + (m + 1) k] - p[r + m k]`
/// follow a linear map `d[m + 1] = A d[m]` whose spectral radius is below 1. Near the orbit
/// the return map is linear, and its slowest directions (one real multiplier, or a complex
/// pair: a spiral) dominate the steps, so `A` is fitted in the plane of the two largest
/// principal directions of the steps. A spiral whose steps swell and shrink with the turn is
/// caught as well as a straight approach; chaos fits no linear map, and a torus section (a
/// closed curve) fits at best a rotation, of spectral radius 1.
pub(super) fn converging<P: AsRef<[f64]>>(points: &[P], k: usize, tolerance: f64) -> Option<Drift> {
    let n = points.len();
    if k == 0 || n < k * (MIN_TREND + 1) {
        return None;
    }
    let mut slowest: Option<(f64, f64, usize)> = None; // (radius, last step, steps)
    for start in 0..k {
        let class: Vec<&[f64]> = (start..n).step_by(k).map(|i| points[i].as_ref()).collect();
        let steps: Vec<Vec<f64>> = class
            .windows(2)
            .map(|w| w[1].iter().zip(w[0]).map(|(b, a)| b - a).collect())
            .collect();
        let fit = StepMap::fit(&steps)?;
        let decay = fit.radius.powf(steps.len() as f64);
        if fit.misfit > MAP_MISFIT
            || fit.radius >= 1.0
            || decay > SHRINK_OVER_WINDOW
            || observed_shrink(&steps) > SHRINK_OVER_WINDOW
        {
            return None;
        }
        let last = steps.last().map_or(0.0, |d| norm(d));
        if slowest.is_none_or(|(radius, _, _)| fit.radius > radius) {
            slowest = Some((fit.radius, last, steps.len()));
        }
    }
    let (radius, last, _) = slowest?;
    // the step after m more applications is radius^m times the last one; the points are
    // within `tolerance` of where they go when the remaining steps add up to less than it
    let remaining = last * radius / (1.0 - radius);
    let more_applications = if remaining > tolerance {
        (tolerance * (1.0 - radius) / (last * radius)).ln() / radius.ln()
    } else {
        0.0
    };
    Some(Drift::Converging {
        k,
        factor_per_return: radius.powf(1.0 / k as f64),
        more_returns: more_applications * k as f64,
    })
}

/// A linear map fitted to a sequence of steps: `d[m + 1] = A d[m]` in the plane of their
/// two largest principal directions.
struct StepMap {
    /// Spectral radius of `A`.
    radius: f64,
    /// Root-mean-square misfit over root-mean-square step (0: exact), counting the part of
    /// the steps outside the plane.
    misfit: f64,
}

impl StepMap {
    fn fit(steps: &[Vec<f64>]) -> Option<Self> {
        let dim = steps.first()?.len();
        if steps.len() < MIN_TREND || dim == 0 {
            return None;
        }
        // the plane of the two largest principal directions of the steps
        let mut covariance = DMatrix::<f64>::zeros(dim, dim);
        for d in steps {
            let v = DVector::from_column_slice(d);
            covariance += &v * v.transpose();
        }
        if !covariance.iter().all(|v| v.is_finite()) || covariance.trace() <= 0.0 {
            return None;
        }
        let eigen = SymmetricEigen::new(covariance);
        let mut order: Vec<usize> = (0..dim).collect();
        order.sort_by(|&a, &b| eigen.eigenvalues[b].total_cmp(&eigen.eigenvalues[a]));
        let largest = eigen.eigenvalues[order[0]];
        let plane: Vec<DVector<f64>> = order
            .iter()
            .take(2)
            .filter(|&&i| eigen.eigenvalues[i] > PLANE_SHARE * largest)
            .map(|&i| eigen.eigenvectors.column(i).into_owned())
            .collect();
        let project = |d: &[f64]| -> Vec<f64> {
            plane
                .iter()
                .map(|u| u.iter().zip(d).map(|(a, b)| a * b).sum())
                .collect()
        };
        let y: Vec<Vec<f64>> = steps.iter().map(|d| project(d)).collect();
        let r = plane.len();
        // A = (sum y[m+1] y[m]^T) (sum y[m] y[m]^T)^-1, r x r with r = 1 or 2
        let mut cross = DMatrix::<f64>::zeros(r, r);
        let mut gram = DMatrix::<f64>::zeros(r, r);
        for pair in y.windows(2) {
            let (now, next) = (
                DVector::from_column_slice(&pair[0]),
                DVector::from_column_slice(&pair[1]),
            );
            cross += &next * now.transpose();
            gram += &now * now.transpose();
        }
        let a = cross * gram.try_inverse()?;
        let mut misfit2 = 0.0;
        let mut total2 = 0.0;
        for (m, pair) in y.windows(2).enumerate() {
            let predicted = &a * DVector::from_column_slice(&pair[0]);
            let next = &steps[m + 1];
            let in_plane: f64 = pair[1].iter().map(|v| v * v).sum();
            let whole: f64 = next.iter().map(|v| v * v).sum();
            misfit2 += (predicted - DVector::from_column_slice(&pair[1])).norm_squared()
                + (whole - in_plane).max(0.0);
            total2 += whole;
        }
        if total2 <= 0.0 {
            return None;
        }
        let radius = if r == 1 {
            a[(0, 0)].abs()
        } else {
            // eigenvalues of a 2 x 2 matrix from its trace and determinant
            let (trace, det) = (a[(0, 0)] + a[(1, 1)], a.determinant());
            let discriminant = trace * trace / 4.0 - det;
            if discriminant >= 0.0 {
                let root = discriminant.sqrt();
                (trace / 2.0 + root).abs().max((trace / 2.0 - root).abs())
            } else {
                det.max(0.0).sqrt()
            }
        };
        radius.is_finite().then_some(Self {
            radius,
            misfit: (misfit2 / total2).sqrt(),
        })
    }
}

/// Root-mean-square step over the last third of the steps against the first third: a
/// transient's steps do shrink, whatever the fitted map says (a zig-zag of a settled orbit can
/// fit a map of radius just below 1 and not shrink at all).
fn observed_shrink(steps: &[Vec<f64>]) -> f64 {
    let third = (steps.len() / 3).max(1);
    let rms = |part: &[Vec<f64>]| {
        (part
            .iter()
            .map(|d| d.iter().map(|v| v * v).sum::<f64>())
            .sum::<f64>()
            / part.len().max(1) as f64)
            .sqrt()
    };
    let first = rms(&steps[..third]);
    let last = rms(&steps[steps.len() - third..]);
    if first > 0.0 { last / first } else { 1.0 }
}

fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// Every k-th point (from every start) following a straight line in some coordinate.
fn moving<P: AsRef<[f64]>>(points: &[P], k: usize, tolerance: f64) -> Option<Drift> {
    let n = points.len();
    let dim = points.first()?.as_ref().len();
    if n < k * MIN_CLASS {
        return None;
    }
    let mut moved = 0.0f64;
    for j in 0..dim {
        let mut every_class = true;
        let mut change = f64::INFINITY;
        for start in 0..k {
            let class: Vec<(f64, f64)> = (start..n)
                .step_by(k)
                .map(|i| (i as f64, points[i].as_ref()[j]))
                .collect();
            match Line::fit(&class) {
                Some(fit) if fit.r_squared >= MOVE_FIT => {
                    let span = class.last().map_or(0.0, |l| l.0) - class[0].0;
                    change = change.min((fit.slope * span).abs());
                }
                _ => every_class = false,
            }
        }
        if every_class && change > tolerance {
            moved = moved.max(change);
        }
    }
    (moved > 0.0).then_some(Drift::Moving { k, distance: moved })
}

/// A least-squares straight line through points `(x, y)`.
#[derive(Clone, Copy, Debug)]
struct Line {
    slope: f64,
    /// Fraction of the variance of y the line explains (0 for a constant y).
    r_squared: f64,
}

impl Line {
    fn fit(xy: &[(f64, f64)]) -> Option<Self> {
        let n = xy.len() as f64;
        if xy.len() < 3 {
            return None;
        }
        let (mx, my) = xy
            .iter()
            .fold((0.0, 0.0), |(a, b), (x, y)| (a + x / n, b + y / n));
        let (mut sxx, mut sxy, mut syy) = (0.0, 0.0, 0.0);
        for (x, y) in xy {
            sxx += (x - mx) * (x - mx);
            sxy += (x - mx) * (y - my);
            syy += (y - my) * (y - my);
        }
        if sxx <= 0.0 || !syy.is_finite() {
            return None;
        }
        let slope = sxy / sxx;
        let r_squared = if syy > 0.0 {
            (sxy * sxy / (sxx * syy)).clamp(0.0, 1.0)
        } else {
            0.0
        };
        Some(Self { slope, r_squared })
    }
}
