//! Orbit branches: the shooting equations of a periodic orbit in one parameter, their
//! measurement (multipliers, recorded points) and the guesses that start an orbit branch
//! from a found orbit, at a Hopf point or at a period doubling.

mod measure;
mod sensitivity;
mod shooting;
mod start;

pub(crate) use shooting::{OrbitLimits, OrbitProblem};
pub(crate) use start::Born;
pub use start::OrbitStart;

use crate::run::{Cut, StrobeSpec};

/// What an orbit branch is followed on, which decides how its time runs and what it records.
#[derive(Clone, Debug)]
pub enum OrbitMap {
    /// An autonomous model's orbit; its points are its crossings of this cut (the cut map's
    /// periodic points, as `cycle::find_cycle` finds them).
    Cut(Cut),
    /// An autonomous model's orbit without a cut: nothing is recorded but the orbit.
    Flow,
    /// A forced model's orbit, sampled by this strobe: its period is a whole number of
    /// strobe periods, evaluated again at every parameter value.
    Strobe(StrobeSpec),
}
