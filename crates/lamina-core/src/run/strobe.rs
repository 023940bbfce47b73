//! The strobe (time-T map): samples at `phase + k T` taken from the dense output.

use super::{SpecError, StrobeSpec};
use crate::model::Model;

/// A compiled strobe.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Strobe {
    /// Sampling period, positive.
    pub period: f64,
    /// Absolute time of sample index 0.
    pub phase: f64,
}

impl Strobe {
    /// Evaluates the period expression with the model's parameter values.
    pub fn compile(spec: &StrobeSpec, model: &Model) -> Result<Self, SpecError> {
        let _ = (spec, model);
        todo!()
    }
}

/// One strobe sample.
#[derive(Clone, Debug, PartialEq)]
pub struct StrobeSample {
    /// Absolute sample index: `t = phase + index * period`.
    pub index: i64,
    /// Sample time.
    pub t: f64,
    /// State at `t`.
    pub state: Vec<f64>,
}
