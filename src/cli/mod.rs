//! Command implementations: each loads the scenario, hands it to the core and writes results.

mod check;
mod explorer;
mod lyapunov;
mod points;
mod prepare;
mod progress;

pub use check::check;
pub use explorer::open_explorer;
pub use lyapunov::{LyapunovArgs, lyapunov};
pub use points::{PointKind, PointsArgs, points};
