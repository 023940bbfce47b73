//! What a sweep is asked for and what it gives per parameter value.

use crate::run::StopReason;

/// Which points a sweep keeps.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SweepSource {
    /// Cut points.
    Cut,
    /// Strobe samples.
    Strobe,
}

/// A one-parameter sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepSpec {
    /// Index of the parameter varied.
    pub parameter: usize,
    /// First value.
    pub from: f64,
    /// Last value.
    pub to: f64,
    /// Number of parameter values, both ends included (at least 2 for a sweep that moves).
    pub values: u32,
    /// Transient per value, integrated but not kept.
    pub settle: f64,
    /// Points kept per value.
    pub keep: usize,
    /// Longest recorded time per value (the value ends earlier once `keep` points are in).
    pub span: f64,
    /// Start each value where the previous one ended.
    pub follow: bool,
    /// Cut points or strobe samples.
    pub source: SweepSource,
}

impl SweepSpec {
    /// Number of parameter values.
    pub fn n_values(&self) -> usize {
        self.values as usize
    }

    /// The parameter value of index `idx`; see [`grid_value`].
    pub fn value(&self, idx: usize) -> f64 {
        grid_value(self.from, self.to, self.values, idx)
    }

    /// Indices of shard `shard` of `n_shards`: every `n_shards`-th value starting at `shard`.
    pub fn shard_indices(&self, shard: usize, n_shards: usize) -> Vec<usize> {
        (0..self.n_values())
            .filter(|i| n_shards > 0 && i % n_shards == shard)
            .collect()
    }
}

/// Value `idx` of `values` values from `from` to `to`, both ends included:
/// `from + idx (to - from) / (values - 1)`, computed afresh (so every shard of a sweep or map
/// gets bit-identical values) and rounded to 15 significant digits of the larger end, so that
/// a range between decimal ends lands on the decimal values: 0.234 (which prints as `0.234`),
/// not the 0.23399999999999999 the arithmetic leaves, and 0 in the middle of -1 to 1, not
/// 1e-17. The ends are `from` and `to` exactly; one value is `from`.
pub fn grid_value(from: f64, to: f64, values: u32, idx: usize) -> f64 {
    let last = (values as usize).saturating_sub(1);
    if idx == 0 || last == 0 {
        return from;
    }
    if idx >= last {
        return to;
    }
    let exact = from + (to - from) * (idx as f64 / last as f64);
    round_to_digits_of(exact, from.abs().max(to.abs()))
}

/// `value` rounded to 15 significant digits of `scale` (the most that every decimal of that
/// length keeps through a binary64 round trip [common practice: DBL_DIG = 15]), by way of
/// its decimal text so that the rounding is correctly rounded.
fn round_to_digits_of(value: f64, scale: f64) -> f64 {
    if !value.is_finite() || !scale.is_finite() || scale == 0.0 {
        return value;
    }
    let decimals = 14 - scale.log10().floor() as i32;
    let text = match usize::try_from(decimals) {
        Ok(decimals) if decimals <= 330 => format!("{value:.decimals$}"),
        _ => format!("{value:.14e}"),
    };
    text.parse().unwrap_or(value)
}

/// The kept points of one parameter value.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepColumn {
    /// Index of the value in the sweep.
    pub index: usize,
    /// The parameter value.
    pub value: f64,
    /// Kept points' states, oldest first.
    pub points: Vec<Vec<f64>>,
    /// Kept points' times.
    pub times: Vec<f64>,
    /// Why this value's run ended.
    pub reason: StopReason,
    /// Time and state where the run ended (the start of the next value when following).
    pub end: (f64, Vec<f64>),
}
