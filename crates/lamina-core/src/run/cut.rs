//! The cut (Poincaré section): a plane or a level surface, a crossing direction, and the
//! location of crossings on a step's dense output.

use super::{CutSpec, SpecError};
use crate::model::Model;

/// Which crossings of the surface count.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Direction {
    /// `g` goes from negative to positive.
    Rising,
    /// `g` goes from positive to negative.
    Falling,
    /// Either way.
    Both,
}

/// A compiled cut surface.
#[derive(Clone, Debug)]
pub enum Surface {
    /// `normal . x = offset`, one weight per state.
    Plane {
        /// One weight per state, in state order.
        normal: Vec<f64>,
        /// Right-hand side.
        offset: f64,
    },
}

/// A compiled cut.
#[derive(Clone, Debug)]
pub struct Cut {
    /// The surface.
    pub surface: Surface,
    /// Which crossings count.
    pub direction: Direction,
}

impl Cut {
    /// Compiles `spec` against the model's names.
    pub fn compile(spec: &CutSpec, model: &Model) -> Result<Self, SpecError> {
        let _ = (spec, model);
        todo!()
    }
}

/// One crossing of the cut.
#[derive(Clone, Debug, PartialEq)]
pub struct CutPoint {
    /// Time of the crossing.
    pub t: f64,
    /// Time since the previous recorded crossing; `None` for the first.
    pub return_time: Option<f64>,
    /// State at the crossing.
    pub state: Vec<f64>,
}
