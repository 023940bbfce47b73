//! Command implementations: each loads the scenario, hands it to the core and writes results.

mod branch;
mod branch_output;
mod branch_picture;
mod branch_start;
mod check;
mod cycle;
mod cycle_output;
mod explorer;
mod lyapunov;
mod points;
mod prepare;
mod progress;
mod recheck;
mod render;
mod rest;
mod signals;
mod sweep;

pub use branch::{BranchArgs, branch};
pub use check::check;
pub use cycle::{CycleArgs, cycle};
pub use explorer::open_explorer;
pub use lyapunov::{LyapunovArgs, lyapunov};
pub use points::{PointKind, PointsArgs, points};
pub use render::{RenderArgs, render};
pub use rest::{RestArgs, rest};
pub use signals::output_closed;
pub use sweep::{SweepArgs, sweep};
