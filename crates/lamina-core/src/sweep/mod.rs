//! Parameter sweeps: run the model at a range of values of one parameter and keep the last
//! cut points or strobe samples of each, for an orbit diagram. Either follow the branch (each
//! value starts where the previous one ended) or restart every value from the scenario's start
//! (values independent, run in parallel through rayon, whose pool the caller configures).
//!
//! Each value's kept points are labelled by the one recurrence detector
//! ([`column_recurrence`]); [`changes`] and [`describe`] say where the label changes along the
//! sweep.

mod changes;
mod column;
mod driver;

pub use changes::{Change, changes, column_recurrence, describe};
pub use column::{SweepColumn, SweepSource, SweepSpec, grid_value};
pub use driver::{SweepError, run_value, sweep_follow, sweep_restart};
