//! Resting points (equilibria, operating points) of an autonomous model: every one Newton's
//! method reaches from the start state, from samples of the settled run and from a spread of
//! seeds over the run's box, each with its eigenvalues, stability and kind in plain words.
//!
//! Use: [`find_resting_points`] runs the scenario, seeds Newton and reports a [`RestReport`];
//! [`solve_resting_point`] refines one seed; [`classify`] names a point from its eigenvalues.
//! A forced model (one that uses `t`) has no resting points: the search refuses it with
//! [`RestError::Forced`], whose message points to the strobe map's periodic orbit instead.

mod classify;
mod error;
mod newton;
mod search;

pub use classify::{Eigenvalue, RestKind, Stability, classify, eigenvalues_of};
pub use error::RestError;
pub use newton::{RestNewtonSettings, SolvedRest, solve_resting_point};
pub use search::{RestReport, RestSettings, RestSink, RestingPoint, find_resting_points};
