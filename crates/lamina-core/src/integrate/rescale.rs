//! Rescaling between steps the part of the state that moves linearly (tangent vectors,
//! `q' = J(t, x) q`), so that its size stays in range while stepping goes on without a
//! restart.

use super::{Integrator, Rates, StepError};

impl Integrator {
    /// Multiplies the values from index `from` on by `factor`: in the state, in the rates
    /// there (which the next step starts with) and in the last step's dense output. For a
    /// system whose rates of those values are linear in them (tangent vectors), this is the
    /// same solution scaled, so the integrator goes on as before, keeping its step size and
    /// step history.
    ///
    /// The last step's dense output is built first if it was left out (its stages are not
    /// scaled); it is the scaled one afterwards. Call between steps, after the last step has
    /// been sampled as wanted.
    ///
    /// # Errors
    /// As [`Integrator::ensure_dense`]; nothing is scaled then.
    pub fn scale_tail<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        from: usize,
        factor: f64,
    ) -> Result<(), StepError> {
        self.ensure_dense(rates)?;
        let dim = self.x.len();
        if from >= dim {
            return Ok(());
        }
        let scale = |values: &mut [f64]| values.iter_mut().for_each(|v| *v *= factor);
        scale(&mut self.x[from..]);
        scale(&mut self.x_start[from..]);
        if self.f0_valid {
            scale(&mut self.stepper.f0_mut()[from..]);
        }
        for term in self.segment.coeffs.chunks_exact_mut(dim) {
            scale(&mut term[from..]);
        }
        Ok(())
    }
}
