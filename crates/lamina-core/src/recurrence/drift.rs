//! Whether a cloud that does not repeat is still on its way: differences after k returns that
//! shrink steadily (a transient converging onto an orbit of k returns), or points that keep
//! moving one way (a slow drift). Chaos and a torus do neither: their differences scatter
//! without a trend and their points come and go.

use std::fmt;

use super::distance;

/// Fewest differences a trend is fitted to.
const MIN_TREND: usize = 8;

/// A straight-line fit must explain at least this fraction of the variance of the logarithm
/// of the differences to count as steady shrinking (the scatter of chaos explains next to
/// nothing; a transient's geometric decay nearly all).
const SHRINK_FIT: f64 = 0.6;

/// Steady shrinking must take the differences down by at least this factor over the window
/// (a flat fit is no transient).
const SHRINK_OVER_WINDOW: f64 = 0.8;

/// A straight line in time must explain at least this fraction of a coordinate's variance
/// (along every residue class of k) for the points to count as moving one way.
const MOVE_FIT: f64 = 0.9;

/// Fewest members of a residue class for the straight-line test.
const MIN_CLASS: usize = 6;

/// How a cloud drifts.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Drift {
    /// `|p[i + k] - p[i]|` shrinks steadily: a transient still converging onto an orbit of
    /// `k` returns.
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

impl fmt::Display for Drift {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Converging {
                k,
                factor_per_return,
                more_returns,
            } => write!(
                f,
                "the differences after {k} return(s) still shrink, by {:.2} % per return \
                 (about {:.0} more returns to settle)",
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

/// The drift of `points` at stride `k`, if they drift by more than `tolerance`.
pub fn drift<P: AsRef<[f64]>>(points: &[P], k: usize, tolerance: f64) -> Option<Drift> {
    converging(points, k, tolerance).or_else(|| moving(points, k, tolerance))
}

/// Steady geometric shrinking of `|p[i + k] - p[i]|`.
fn converging<P: AsRef<[f64]>>(points: &[P], k: usize, tolerance: f64) -> Option<Drift> {
    let n = points.len();
    if n < k + MIN_TREND {
        return None;
    }
    let logs: Vec<(f64, f64)> = (0..n - k)
        .filter_map(|i| {
            let d = distance(points[i].as_ref(), points[i + k].as_ref());
            (d > 0.0 && d.is_finite()).then(|| (i as f64, d.ln()))
        })
        .collect();
    if logs.len() < MIN_TREND {
        return None;
    }
    let fit = Line::fit(&logs)?;
    let window = logs.last()?.0 - logs.first()?.0;
    if fit.slope >= 0.0
        || fit.r_squared < SHRINK_FIT
        || (fit.slope * window).exp() > SHRINK_OVER_WINDOW
    {
        return None;
    }
    let last = fit.at(logs.last()?.0).exp();
    let more_returns = if last > tolerance {
        (tolerance / last).ln() / fit.slope
    } else {
        0.0
    };
    Some(Drift::Converging {
        k,
        factor_per_return: fit.slope.exp(),
        more_returns,
    })
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

/// A least-squares straight line `y = intercept + slope x`.
#[derive(Clone, Copy, Debug)]
struct Line {
    slope: f64,
    intercept: f64,
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
        Some(Self {
            slope,
            intercept: my - slope * mx,
            r_squared,
        })
    }

    fn at(&self, x: f64) -> f64 {
        self.intercept + self.slope * x
    }
}
