//! The automatic method and going back inside a step: `Automatic` changes between DOP853 and
//! Rodas4 after accepted steps; [`Integrator::shorten_last_step`],
//! [`Integrator::undo_last_step`] and [`Integrator::restart`] let a driver end a step at a
//! switching time of the model and go on with other rates from there;
//! [`Integrator::ensure_accurate_dense`] shortens a stiff step whose interpolant is too coarse.

use super::controller::StepRule;
use super::integrator::min_step;
use super::stiffness::MethodChange;
use super::{Integrator, Method, Rates, StepError};

/// How often [`Integrator::ensure_accurate_dense`] shortens one step at most (each time by
/// a factor of 2 to 10).
const MAX_DENSE_SHORTENINGS: usize = 8;

impl Integrator {
    /// Under `Automatic`, feeds the stiffness measure of the step of size `h` just accepted to the
    /// counters, and schedules a change of method when they say so.
    pub(super) fn watch_stiffness(&mut self, h: f64) {
        let measure = self.stepper.stiffness_measure();
        let (to, reason) = match self.stepper.method() {
            Method::Rodas4 => {
                // the step the stiff method proposes, not the one it took (which a limit or
                // a switching time may have shortened)
                let h_rho = self.h.max(h) * measure;
                (Method::Dp853, self.watch.stiff_step(h_rho))
            }
            _ => (Method::Rodas4, self.watch.explicit_step(measure)),
        };
        if let Some(reason) = reason {
            let change = MethodChange {
                t: self.t,
                to,
                reason,
            };
            self.pending = Some(change);
            self.change = Some(change);
        }
    }

    /// Makes the change of method scheduled after the last step (the stepper of the last
    /// step is kept until then, for its dense output).
    pub(super) fn make_pending_change(&mut self) {
        if self.pending.take().is_some() {
            self.swap_steppers();
        }
    }

    /// Under `Automatic`, goes back to DOP853 if Rodas4 is in use, and clears the counters.
    pub(super) fn restore_starting_method(&mut self) {
        self.pending = None;
        self.change = None;
        self.watch.reset();
        if self.method == Method::Automatic && self.stepper.method() != Method::Dp853 {
            self.swap_steppers();
        }
    }

    /// Exchanges the active and the spare stepper, handing over `f(t, x)`; the step size
    /// proposed so far is kept, the step-size history is not.
    fn swap_steppers(&mut self) {
        let Some(spare) = self.spare.as_mut() else {
            return;
        };
        std::mem::swap(&mut self.stepper, spare);
        if self.f0_valid {
            let f0 = spare.f0().to_vec();
            self.stepper.f0_mut().copy_from_slice(&f0);
        }
        self.stepper.rates_changed();
        self.controller = StepRule::for_method(self.stepper.method());
        self.finite_known = false;
    }

    /// Goes back to the start of the last accepted step: time, state and `f` there; the
    /// proposed step size is kept, the step no longer counts as accepted. The segment becomes
    /// a zero-length one at that time.
    fn rewind(&mut self) {
        let t0 = self.segment.t0;
        if self.segment.h == 0.0 {
            return; // no step taken since the last reset or rewind
        }
        self.stepper.rewind();
        self.stats.n_accepted = self.stats.n_accepted.saturating_sub(1);
        std::mem::swap(&mut self.x, &mut self.x_start);
        self.t = t0;
        let dim = self.x.len();
        let segment = &mut self.segment;
        segment.h = 0.0;
        segment.coeffs.fill(0.0);
        segment.coeffs[..dim].copy_from_slice(&self.x);
        self.dense_ready = true;
        self.finite_known = false;
    }

    /// Takes back the last accepted step: the integrator stands again at its start, with
    /// its rates there. For a driver that finds the model switching right at the start of
    /// the step.
    pub fn undo_last_step(&mut self) {
        self.rewind();
    }

    /// Replaces the last accepted step by one of size `h` from the same start, with the same
    /// method and the same rates, and with its dense output; the proposed size of the next
    /// step is kept. For a driver that ends the step where the model switches. The
    /// shortened step is not error-controlled: it is shorter than an accepted step, so its
    /// error is smaller.
    ///
    /// # Errors
    /// As [`Integrator::step_fixed`] (then the integrator stands at the start of the step).
    pub fn shorten_last_step<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        h: f64,
    ) -> Result<(), StepError> {
        self.rewind();
        self.step_fixed(rates, h)
    }

    /// Builds the dense output of the last step ([`Integrator::ensure_dense`]) and makes sure
    /// it resolves the solution: where the stiff method's interpolant of a long stiff step
    /// is not accurate to the tolerance (the error control of a stiffly forced model lets the
    /// steps grow far beyond what any polynomial over the step can follow, because the step
    /// ends stay accurate), the step is taken again shorter until it is, and the next steps
    /// are kept that short. Returns whether the step was shortened (its time, state and
    /// segment are then those of the shorter step). For a driver that samples the dense
    /// output (strobe samples, cut crossings, stored steps).
    ///
    /// # Errors
    /// As [`Integrator::ensure_dense`] and [`Integrator::shorten_last_step`].
    pub fn ensure_accurate_dense<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
    ) -> Result<bool, StepError> {
        self.ensure_dense(rates)?;
        let mut shortened = false;
        for _ in 0..MAX_DENSE_SHORTENINGS {
            let error = self.stepper.dense_error();
            if error.is_nan() || error <= 1.0 {
                break;
            }
            // the estimate falls with the fourth power of the step
            let factor = (0.8 * error.powf(-0.25)).clamp(0.1, 0.5);
            let h = self.segment.h * factor;
            self.shorten_last_step(rates, h)?;
            self.limit_next_step(h);
            shortened = true;
        }
        Ok(shortened)
    }

    /// Limits the proposed size of the next step to `h` (a driver that ended a step early
    /// keeps the proposal from growing past the step it replaced).
    pub fn limit_next_step(&mut self, h: f64) {
        if h > 0.0 {
            self.h = self.h.min(h);
        }
    }

    /// Replaces the current state (the time stays), as when tangent vectors jump at a
    /// switch; the next step starts afresh, as after [`Integrator::restart`].
    pub fn replace_state(&mut self, x: &[f64]) {
        self.x.copy_from_slice(x);
        self.restart();
    }

    /// Continues from the current state with rates that have changed (a switch of the
    /// model's branches): `f(t, x)` and the Jacobian are evaluated again before the next
    /// step and the step-size history is forgotten; the proposed step size is kept.
    pub fn restart(&mut self) {
        self.f0_valid = false;
        self.finite_known = false;
        self.stepper.rates_changed();
        self.controller.reset();
    }

    /// Smallest step size that the floating-point resolution allows at the current time.
    pub fn min_step(&self) -> f64 {
        min_step(self.t)
    }
}
