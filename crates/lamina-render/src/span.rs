//! The one rule for an axis's range in every 2D view and picture: the values' range with a
//! small margin, but never narrower than a millionth of the values' size, so a series that is
//! one value up to round-off (a period-1 orbit's strobe samples) is drawn as one point with
//! distinct ticks instead of fitting the axes to integrator noise; and the tick labels, with
//! as many digits as the ticks' spacing needs.

/// The narrowest axis span, relative to the size of the values on it.
pub const MIN_RELATIVE_SPAN: f64 = 1e-6;

/// The margin added on each side of the values' range, as a fraction of it.
const MARGIN: f64 = 0.04;

/// The span below which values `lo..=hi` count as one value: [`MIN_RELATIVE_SPAN`] of their
/// size, or 1 for values at zero.
pub fn min_span(lo: f64, hi: f64) -> f64 {
    let scale = lo.abs().max(hi.abs());
    if scale > 0.0 && scale.is_finite() {
        (MIN_RELATIVE_SPAN * scale).max(f64::MIN_POSITIVE)
    } else {
        1.0
    }
}

/// Whether values ranging over `lo..=hi` are one value for drawing (their spread is below
/// [`min_span`]).
pub fn is_one_value(lo: f64, hi: f64) -> bool {
    lo <= hi && hi - lo < min_span(lo, hi)
}

/// The axis range that shows values ranging over `lo..=hi`: their range with a margin of
/// 4 % on each side, or, when the values are one value (see [`is_one_value`]), a window of
/// [`min_span`] centred on them. `None` when there are no values (`lo > hi`, or not finite).
pub fn axis_range(lo: f64, hi: f64) -> Option<(f64, f64)> {
    if !(lo.is_finite() && hi.is_finite()) || lo > hi {
        return None;
    }
    let least = min_span(lo, hi);
    if hi - lo < least {
        let centre = 0.5 * (lo + hi);
        return Some((centre - 0.5 * least, centre + 0.5 * least));
    }
    let pad = (hi - lo) * MARGIN;
    Some((lo - pad, hi + pad))
}

/// The range of the finite `values`: `(lo, hi)`, or `None` when there is none.
pub fn value_range(values: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    let (lo, hi) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    (lo <= hi).then_some((lo, hi))
}

/// The label of tick `value` on an axis over `lo..=hi` with about `n_ticks` ticks: enough
/// decimals that neighbouring ticks read differently (`0.8672995`, `0.8673000`), in
/// scientific notation for very large or very small sizes.
pub fn tick_label(value: f64, lo: f64, hi: f64, n_ticks: usize) -> String {
    let step = ((hi - lo) / n_ticks.max(1) as f64).abs();
    let scale = lo.abs().max(hi.abs());
    if !(step > 0.0 && step.is_finite() && scale.is_finite()) {
        return format!("{value}");
    }
    if !(1e-3..1e6).contains(&scale) && scale > 0.0 {
        // significant digits that tell ticks `step` apart at this size
        let digits = ((scale / step).log10().ceil() as i64 + 1).clamp(1, 16) as usize;
        return format!("{value:.*e}", digits - 1);
    }
    let decimals = (-step.log10().floor() as i64 + 1).clamp(0, 16) as usize;
    let text = format!("{value:.decimals$}");
    // "-0.000" reads oddly: a zero tick is "0"
    if text
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        return format!("{:.decimals$}", 0.0);
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_one_value_series_gets_a_window_of_the_minimum_span() {
        // [analytic] samples spread over 1e-12 around 0.8673 are one value; the window is
        // 1e-6 of their size, centred on them
        let (lo, hi) = (0.8673, 0.8673 + 1e-12);
        assert!(is_one_value(lo, hi));
        let (a, b) = axis_range(lo, hi).unwrap();
        assert!(((b - a) - 0.8673e-6).abs() < 1e-15);
        assert!(a < lo && hi < b);
        // a real spread keeps its range with the margin
        let (a, b) = axis_range(1.0, 2.0).unwrap();
        assert!((a - 0.96).abs() < 1e-12 && (b - 2.04).abs() < 1e-12);
        assert!(!is_one_value(1.0, 2.0));
        // all zero: a unit window
        assert_eq!(axis_range(0.0, 0.0), Some((-0.5, 0.5)));
        assert_eq!(axis_range(1.0, 0.0), None);
    }

    #[test]
    fn ticks_of_a_one_value_series_read_differently() {
        // [analytic] five ticks over the minimum window around 0.8673 must be distinct
        // numbers when written, or the axis says nothing
        let (lo, hi) = axis_range(0.8673, 0.8673).unwrap();
        let labels: Vec<String> = (0..=5)
            .map(|i| tick_label(lo + (hi - lo) * i as f64 / 5.0, lo, hi, 5))
            .collect();
        for (i, a) in labels.iter().enumerate() {
            for b in &labels[i + 1..] {
                assert_ne!(a, b, "{labels:?}");
            }
        }
        // large sizes in scientific notation, still distinct
        let (lo, hi) = axis_range(2.5e7, 2.5e7).unwrap();
        let a = tick_label(lo, lo, hi, 5);
        let b = tick_label(lo + (hi - lo) / 5.0, lo, hi, 5);
        assert_ne!(a, b);
        assert!(a.contains('e'), "{a}");
        assert_eq!(tick_label(-1e-17, -1.0, 1.0, 5), "0.00");
    }
}
