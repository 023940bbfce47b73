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
    /// Number of intervals: `steps + 1` values from `from` to `to`.
    pub steps: u32,
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
        self.steps as usize + 1
    }

    /// The parameter value of index `idx`: `from + idx (to - from) / steps`, computed afresh
    /// so that every shard of a sweep gets bit-identical values.
    pub fn value(&self, idx: usize) -> f64 {
        if self.steps == 0 {
            return self.from;
        }
        if idx == self.steps as usize {
            return self.to;
        }
        self.from + (self.to - self.from) * (idx as f64 / f64::from(self.steps))
    }

    /// Indices of shard `shard` of `n_shards`: every `n_shards`-th value starting at `shard`.
    pub fn shard_indices(&self, shard: usize, n_shards: usize) -> Vec<usize> {
        (0..self.n_values())
            .filter(|i| n_shards > 0 && i % n_shards == shard)
            .collect()
    }
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
