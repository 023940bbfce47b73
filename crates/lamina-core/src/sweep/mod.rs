//! Parameter sweeps: run the model at a range of values of one parameter and keep the last
//! cut points or strobe samples of each, for an orbit diagram. Either follow the branch (each
//! value starts where the previous one ended) or restart every value from the scenario's start
//! (values independent, run in parallel through rayon, whose pool the caller configures).

mod column;
mod driver;
mod period;

pub use column::{SweepColumn, SweepSource, SweepSpec, grid_value};
pub use driver::{SweepError, run_value, sweep_follow, sweep_restart};
pub use period::{PeriodChange, period_changes, repeat_period, returns_text};
