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
        // a scaled value may overflow: the next step checks again
        self.finite_known = false;
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::integrate::{FnRates, Method, StepControl};

    #[test]
    fn a_scaled_linear_part_stays_the_same_solution_scaled() {
        // x' = -x, q' = (1 + x) q: q is linear in itself, so q scaled is again a solution
        let system = || {
            FnRates::new(2, |_t, y: &[f64], dy: &mut [f64]| {
                dy[0] = -y[0];
                dy[1] = (1.0 + y[0]) * y[1];
            })
        };
        let control = StepControl {
            rtol: 1e-10,
            atol: 1e-300,
            ..StepControl::default()
        };
        for method in [
            Method::Dp5,
            Method::Dp853,
            Method::Rodas4,
            Method::Automatic,
        ] {
            let (mut plain_rates, mut scaled_rates) = (system(), system());
            let mut plain = Integrator::new(method, control, 2);
            let mut scaled = Integrator::new(method, control, 2);
            plain.reset(&mut plain_rates, 0.0, &[1.0, 1.0]);
            scaled.reset(&mut scaled_rates, 0.0, &[1.0, 1.0]);
            let mut factor = 1.0;
            while plain.t() < 5.0 {
                plain.step_lazy(&mut plain_rates, 5.0).expect("steps");
            }
            while scaled.t() < 5.0 {
                scaled.step_lazy(&mut scaled_rates, 5.0).expect("steps");
                scaled
                    .scale_tail(&mut scaled_rates, 1, 0.5)
                    .expect("scales");
                factor *= 0.5;
            }
            // [analytic] q(t) = exp(t + 1 - exp(-t)) from q(0) = 1, x(0) = 1; the scaled run
            // ends at the same value times the product of the factors (to round-off where
            // the steps are the same, to the tolerance where the error control of the stiff
            // method's difference Jacobian chose others)
            let exact = (5.0 + 1.0 - (-5.0f64).exp()).exp();
            let back = scaled.x()[1] / factor;
            assert!((back / plain.x()[1] - 1.0).abs() < 1e-8, "{method:?}");
            assert!(
                (back / exact - 1.0).abs() < 1e-7,
                "{method:?}: {back} vs {exact}"
            );
            // the scaled dense output is the scaled solution too
            let mut end = [0.0; 2];
            scaled.segment().end_state(&mut end);
            assert!((end[1] / scaled.x()[1] - 1.0).abs() < 1e-12, "{method:?}");
        }
    }
}
