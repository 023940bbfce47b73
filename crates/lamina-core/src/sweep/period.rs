//! The repeat of a sweep column: the smallest number of returns k after which the kept
//! points repeat, and the words for it and for where it changes along a sweep (one wording
//! for the command line and the window).

/// The smallest `k <= max_k` such that every kept point is within `tolerance` (relative to
/// the spread of the points, plus an absolute floor) of the point `k` places later; `None`
/// when no such `k` exists (a torus, chaos, or too few points to tell).
pub fn repeat_period(points: &[Vec<f64>], max_k: usize, tolerance: f64) -> Option<usize> {
    let n = points.len();
    let dim = points.first()?.len();
    let mut scale = 0.0f64;
    for d in 0..dim {
        let (lo, hi) = points
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
                (lo.min(p[d]), hi.max(p[d]))
            });
        scale = scale.max(hi - lo).max(hi.abs()).max(lo.abs());
    }
    let limit = tolerance * scale.max(1e-12);
    (1..=max_k.min(n / 2)).find(|&k| {
        (0..n - k).all(|i| {
            points[i]
                .iter()
                .zip(&points[i + k])
                .all(|(a, b)| (a - b).abs() <= limit)
        })
    })
}

/// A place along a sweep where the repeat period changes, bracketed by two neighbouring
/// parameter values.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PeriodChange {
    /// The last value with the old period.
    pub below: f64,
    /// The first value with the new period.
    pub above: f64,
    /// Old period (`None`: no repeat found).
    pub from: Option<usize>,
    /// New period.
    pub to: Option<usize>,
}

impl PeriodChange {
    /// `1-return orbit to 2-return orbit between a = 0.234 and 0.236`, the values in their
    /// shortest round-trip form; `max_returns` is the most returns the repeat was looked for.
    pub fn describe(&self, parameter: &str, max_returns: usize) -> String {
        format!(
            "{} to {} between {parameter} = {} and {}",
            returns_text(self.from, max_returns),
            returns_text(self.to, max_returns),
            self.below,
            self.above
        )
    }
}

/// `1-return orbit`, `2-return orbit`, or `no repeat within 12 returns` for `None`.
pub fn returns_text(returns: Option<usize>, max_returns: usize) -> String {
    match returns {
        Some(k) => format!("{k}-return orbit"),
        None => format!("no repeat within {max_returns} returns"),
    }
}

/// Changes of period between neighbouring values of `(value, period)` (in sweep order).
pub fn period_changes(periods: &[(f64, Option<usize>)]) -> Vec<PeriodChange> {
    periods
        .windows(2)
        .filter(|w| w[0].1 != w[1].1)
        .map(|w| PeriodChange {
            below: w[0].0,
            above: w[1].0,
            from: w[0].1,
            to: w[1].1,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::repeat_period;

    #[test]
    fn finds_the_smallest_repeat() {
        let p = |v: f64| vec![v, 0.0];
        // [analytic] a sequence repeating every 2 has period 2, a constant one period 1
        assert_eq!(
            repeat_period(&[p(1.0), p(2.0), p(1.0), p(2.0), p(1.0), p(2.0)], 12, 1e-6),
            Some(2)
        );
        assert_eq!(repeat_period(&vec![p(1.0); 8], 12, 1e-6), Some(1));
        assert_eq!(
            repeat_period(&[p(1.0), p(2.0), p(3.0), p(4.5), p(5.0), p(6.1)], 3, 1e-6),
            None
        );
        assert_eq!(repeat_period(&[], 12, 1e-6), None);
    }

    #[test]
    fn lists_where_the_period_changes() {
        let changes =
            super::period_changes(&[(1.0, Some(1)), (2.0, Some(1)), (3.0, Some(2)), (4.0, None)]);
        assert_eq!(changes.len(), 2);
        assert_eq!(
            (changes[0].below, changes[0].above, changes[0].to),
            (2.0, 3.0, Some(2))
        );
        assert_eq!(changes[1].to, None);
        assert_eq!(
            changes[0].describe("b", 12),
            "1-return orbit to 2-return orbit between b = 2 and 3"
        );
        assert_eq!(
            changes[1].describe("b", 12),
            "2-return orbit to no repeat within 12 returns between b = 3 and 4"
        );
    }
}
