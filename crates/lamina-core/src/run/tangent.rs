//! One tangent vector carried along a run over its recorded window, for the largest
//! Lyapunov exponent in the same pass as the cut points and strobe samples
//! ([`super::Run::carry_tangent`]). The settle time is stepped without it.

use crate::integrate::{Integrator, StepError};
use crate::lyapunov::{ExponentSettings, LargestExponent, OneVector, Tangent};
use crate::model::Model;

/// The model with one tangent vector, and the vector's running exponent estimate.
#[derive(Clone, Debug)]
pub(super) struct CarriedTangent {
    /// The variational system `x' = f`, `q' = J q` (the model's `n` values first).
    pub(super) system: Tangent,
    exponent: OneVector,
    /// Whether the integrator steps the variational system (from the start of the recorded
    /// window on).
    pub(super) active: bool,
    n: usize,
}

impl CarriedTangent {
    /// A tangent vector for `model` averaged from `t_record` over `span`.
    pub(super) fn new(
        model: &Model,
        t_record: f64,
        span: f64,
        settings: &ExponentSettings,
    ) -> Self {
        let n = model.start().len();
        Self {
            system: Tangent::new(model.clone(), 1),
            exponent: OneVector::new(n, t_record, span, settings),
            active: false,
            n,
        }
    }

    /// Starts stepping the variational system at `t` from the model's state `x`, with the
    /// starting tangent vector (the integrator is reset: it keeps its work counters). The
    /// error control measures the model's states only.
    pub(super) fn activate(&mut self, integrator: &mut Integrator, t: f64, x: &[f64]) {
        let mut y = vec![0.0; 2 * self.n];
        y[..self.n].copy_from_slice(x);
        self.exponent.start(&mut y[self.n..]);
        // the vector follows the states' steps: only the states' errors choose them
        integrator.control_error_of_first(Some(self.n));
        integrator.reset(&mut self.system, t, &y);
        self.active = true;
    }

    /// Takes the tangent vector at the end of the step just taken (ending at `t`): updates
    /// the estimate and rescales the vector when it has grown or shrunk past the growth
    /// limit. Call after the step has been sampled.
    ///
    /// # Errors
    /// [`StepError::NotFinite`] at `t` when the vector is not finite or has vanished, or the
    /// step's dense output (built before a rescaling) is not finite.
    pub(super) fn after_step(
        &mut self,
        integrator: &mut Integrator,
        t: f64,
    ) -> Result<(), StepError> {
        let q = &integrator.x()[self.n..];
        match self.exponent.observe(t, q) {
            Ok(None) => Ok(()),
            Ok(Some(factor)) => integrator.scale_tail(&mut self.system, self.n, factor),
            Err(()) => Err(StepError::NotFinite { t }),
        }
    }

    /// The estimate so far (`None` before the recorded window).
    pub(super) fn result(&self) -> Option<LargestExponent> {
        self.active.then(|| self.exponent.result())
    }
}
