//! Regime maps: two parameters on a grid, every cell run from the scenario's start (or from
//! its neighbour's end state), settled, and classified from its cut points or strobe samples
//! and its largest Lyapunov exponent into a plain [`Regime`]: resting, periodic with K
//! returns, quasi-periodic, chaotic, escaped or failed.
//!
//! [`run_cell`] runs one cell; [`run_cells`] runs many on rayon's current pool (which the
//! caller configures) and [`run_cells_in_order`] runs them one after the other, each
//! starting where the one before ended. Cells are numbered by rows: the y value outer, the
//! x value inner ([`RegimeMapSpec::cell_index`]); [`RegimeMapSpec::shard_indices`] picks
//! every N-th cell for spreading one map over several machines.

mod cell;
mod classify;
mod driver;
mod regime;
mod resting;
mod spec;

pub use cell::{MapCell, MapProblem, run_cell};
pub use classify::{Evidence, classify};
pub use driver::{MapError, run_cells, run_cells_in_order};
pub use regime::{Failure, Regime};
pub use spec::{MapAxisSpec, RegimeMapSpec};
