//! Checks of the integrator block: tolerances that can mean something, and a step limit the
//! runs can keep where their times lie.

use super::Checker;
use super::time_window::{smallest_step_at, time_spacing};
use crate::number::{About, Short};

/// Past this relative tolerance each step may be off by more than a tenth of the values.
const ROUGH_RTOL: f64 = 0.1;
/// A step limit that makes one run take more steps than this is probably a slip.
const MANY_STEPS: f64 = 1e8;

impl Checker<'_> {
    pub(super) fn integrator(&mut self) {
        let integrator = &self.scenario.integrator;
        self.rtol(integrator.rtol);
        self.atol(integrator.atol);
        if let Some(max_step) = integrator.max_step
            && self.positive("integrator.max_step", max_step)
        {
            self.max_step(max_step);
        }
    }

    /// A relative tolerance is a fraction of each value: positive, and below 1.
    fn rtol(&mut self, rtol: f64) {
        let field = "integrator.rtol";
        if !self.positive(field, rtol) {
            return;
        }
        if rtol >= 1.0 {
            let message = format!(
                "rtol {} allows errors as large as the values themselves, so no result would \
                 mean anything; a relative tolerance must be below 1 (1e-6 asks for about six \
                 correct digits)",
                Short(rtol)
            );
            self.error(field, message);
        } else if rtol > ROUGH_RTOL {
            let message = format!(
                "rtol {} lets each step be off by more than a tenth of the values; results will \
                 be rough (1e-6 asks for about six correct digits)",
                Short(rtol)
            );
            self.warning(field, message);
        } else if rtol < 100.0 * f64::EPSILON {
            // [common practice] relative accuracy below about 100 machine epsilons cannot be
            // met in double precision; the step size collapses instead.
            let message = format!(
                "rtol {} is below what double precision can deliver (about {}); the step size may collapse",
                Short(rtol),
                About(100.0 * f64::EPSILON)
            );
            self.warning(field, message);
        }
    }

    /// An absolute tolerance is an error in the states' own units: positive, finite, and
    /// below the escape size (an error that large could not tell a run from an escape).
    fn atol(&mut self, atol: f64) {
        let field = "integrator.atol";
        if !self.positive(field, atol) {
            return;
        }
        let escape = self.scenario.limits.escape;
        if escape > 0.0 && atol >= escape {
            let message = format!(
                "atol {} is not below the escape size {} (limits.escape): errors that large \
                 would let a run wander anywhere before it counted as escaped",
                Short(atol),
                Short(escape)
            );
            self.error(field, message);
        }
    }

    /// A step limit must leave steps that change the time wherever the runs go, and should
    /// not ask for an endless number of steps.
    fn max_step(&mut self, max_step: f64) {
        let field = "integrator.max_step";
        let Some((t_far, length)) = self.time_extent() else {
            return;
        };
        let smallest = smallest_step_at(t_far);
        if max_step < smallest {
            let message = format!(
                "max_step {} is below {}, the smallest step that changes the time at t = {} \
                 (floating-point times there are {} apart): the run would stop there with its \
                 step size collapsed",
                Short(max_step),
                About(smallest),
                About(t_far),
                Short(time_spacing(t_far))
            );
            self.error(field, message);
        } else if length / max_step > MANY_STEPS {
            let message = format!(
                "max_step {} makes a run of length {} take at least {} steps; is it meant to be \
                 this small?",
                Short(max_step),
                Short(length),
                About(length / max_step)
            );
            self.warning(field, message);
        }
    }
}
