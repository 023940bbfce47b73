//! Periodic orbits: the variational equations, the cut and strobe maps with their Jacobians,
//! Newton refinement of an orbit of k returns (checked to need all k), and the multipliers
//! with the stability verdict and margin.
//!
//! Use: [`crate::recurrence::find_recurrence`] on the settled cut points or strobe samples
//! gives k (or says there is none); [`crate::recurrence::close_returns`] picks seeds;
//! [`find_cycle`] refines the seeds with Newton's method on a [`FlowMap`], checks that the
//! orbit found needs all k returns, and measures it into a [`CycleReport`]. All of it is plain
//! functions over plain data, so the command line and a window panel call the same code.
//!
//! A cut of a forced model (one whose rates or cut surface use `t`) is refused: its return map
//! depends on the crossing time as well as the state, so it has no fixed points of the state
//! alone. Such a model's periodic orbits are found with the strobe map at the forcing period,
//! whose `n` multipliers are its Floquet multipliers.

mod cut_map;
mod differences;
mod error;
mod flow_map;
pub(crate) mod linalg;
mod newton;
mod report;
mod search;
mod spectrum;
mod variational;

pub use error::CycleError;
pub use flow_map::{FlowMap, MapImage, MapKind, MapPoint, MapSettings};
pub use newton::{NewtonSettings, Refined, refine};
pub use report::{CycleReport, MapChoice};
pub use search::{FewerReturns, Search, find_cycle, least_returns};
pub use spectrum::{
    Loss, Multiplier, NEAR_CIRCLE, Number, Outlook, UNIT_CIRCLE_BAND, Verdict, multipliers,
};
pub use variational::Variational;
