//! The strobe (time-T map): samples at `first_at + k T` taken from the dense output.

use super::{SpecError, StrobeSpec};
use crate::expr::Program;
use crate::model::Model;

/// A compiled strobe.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Strobe {
    /// Sampling period, positive.
    pub period: f64,
    /// Absolute time of sample index 0.
    pub first_at: f64,
}

impl Strobe {
    /// Evaluates the period expression with the model's parameter values.
    pub fn compile(spec: &StrobeSpec, model: &Model) -> Result<Self, SpecError> {
        let program = Program::compile(
            model.names(),
            &[("strobe period".to_string(), spec.period.as_str())],
        )?;
        if program.uses_states() || program.uses_time() {
            return Err(SpecError::PeriodNotConstant {
                expression: spec.period.clone(),
            });
        }
        let start = model.start();
        let period = program.eval_one(&mut program.scratch(), 0.0, start, model.parameters());
        if !(period.is_finite() && period > 0.0) {
            return Err(SpecError::BadPeriod {
                expression: spec.period.clone(),
                value: period,
            });
        }
        Ok(Self {
            period,
            first_at: spec.first_at,
        })
    }

    /// Time of sample `index`, computed afresh (never accumulated) so it does not drift.
    #[inline]
    pub fn time_of(&self, index: i64) -> f64 {
        self.first_at + index as f64 * self.period
    }

    /// The first sample index whose time is at or after `t`.
    pub fn first_index_from(&self, t: f64) -> i64 {
        let mut k = ((t - self.first_at) / self.period).ceil() as i64;
        while self.time_of(k - 1) >= t {
            k -= 1;
        }
        while self.time_of(k) < t {
            k += 1;
        }
        k
    }
}

/// One strobe sample.
#[derive(Clone, Debug, PartialEq)]
pub struct StrobeSample {
    /// Absolute sample index: `t = first_at + index * period`.
    pub index: i64,
    /// Sample time.
    pub t: f64,
    /// State at `t`.
    pub state: Vec<f64>,
}

impl AsRef<[f64]> for StrobeSample {
    /// The sampled state.
    fn as_ref(&self) -> &[f64] {
        &self.state
    }
}
