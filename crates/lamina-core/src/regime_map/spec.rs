//! What a regime map is asked for: two parameter axes, the settle time and span of every
//! cell, and which points classify it; cells numbered by rows.

use crate::sweep::{SweepSource, grid_value};

/// A regime map with its parameters as indices: two parameters on a grid, each cell
/// integrated from its start for `settle`, then recorded for `span` and classified from its
/// cut points or strobe samples.
#[derive(Clone, Debug, PartialEq)]
pub struct RegimeMapSpec {
    /// The parameter across.
    pub x: MapAxisSpec,
    /// The parameter up.
    pub y: MapAxisSpec,
    /// Transient per cell, integrated but not recorded.
    pub settle: f64,
    /// Recorded time per cell, after the transient.
    pub span: f64,
    /// Cut points or strobe samples.
    pub source: SweepSource,
}

impl RegimeMapSpec {
    /// Number of cells, `x.values * y.values`.
    pub fn n_cells(&self) -> usize {
        self.x.n_values() * self.y.n_values()
    }

    /// The number of cell `(x_idx, y_idx)`: rows by y, then x (`y_idx * x.values + x_idx`).
    pub fn cell_index(&self, x_idx: usize, y_idx: usize) -> usize {
        y_idx * self.x.n_values() + x_idx
    }

    /// The axis indices `(x_idx, y_idx)` of cell `index`.
    pub fn cell_position(&self, index: usize) -> (usize, usize) {
        let nx = self.x.n_values().max(1);
        (index % nx, index / nx)
    }

    /// The parameter values `(x, y)` of cell `index`.
    pub fn cell_values(&self, index: usize) -> (f64, f64) {
        let (i, j) = self.cell_position(index);
        (self.x.value(i), self.y.value(j))
    }

    /// Cells of shard `shard` of `n_shards`: every `n_shards`-th cell from `shard`, in order.
    pub fn shard_indices(&self, shard: usize, n_shards: usize) -> Vec<usize> {
        (0..self.n_cells())
            .filter(|i| n_shards > 0 && i % n_shards == shard)
            .collect()
    }
}

/// One axis of a [`RegimeMapSpec`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MapAxisSpec {
    /// Index of the parameter varied along this axis.
    pub parameter: usize,
    /// First value.
    pub from: f64,
    /// Last value.
    pub to: f64,
    /// Number of values, both ends included.
    pub values: u32,
}

impl MapAxisSpec {
    /// Number of values.
    pub fn n_values(&self) -> usize {
        self.values as usize
    }

    /// Value `idx` along the axis, spaced as a sweep's values ([`grid_value`]).
    pub fn value(&self, idx: usize) -> f64 {
        grid_value(self.from, self.to, self.values, idx)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec() -> RegimeMapSpec {
        let axis = |parameter, values| MapAxisSpec {
            parameter,
            from: 0.0,
            to: 1.0,
            values,
        };
        RegimeMapSpec {
            x: axis(0, 3),
            y: axis(1, 2),
            settle: 1.0,
            span: 1.0,
            source: SweepSource::Cut,
        }
    }

    #[test]
    fn cells_run_by_rows_and_shards_cover_each_once() {
        let spec = spec();
        // [analytic] 3 x 2 cells, rows by y then x
        assert_eq!(spec.n_cells(), 6);
        assert_eq!(spec.cell_position(4), (1, 1));
        assert_eq!(spec.cell_index(1, 1), 4);
        assert_eq!(spec.cell_values(5), (1.0, 1.0));
        let mut all: Vec<usize> = (0..4).flat_map(|i| spec.shard_indices(i, 4)).collect();
        all.sort_unstable();
        // [analytic] the shards of a partition hold every cell exactly once
        assert_eq!(all, (0..6).collect::<Vec<_>>());
    }
}
