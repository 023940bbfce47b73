//! What an exponent run reports: running estimates and progress to an [`ExponentSink`]
//! while it runs, a [`Spectrum`] when it ends.

use std::ops::ControlFlow;

use super::summary::{Trace, Verdict};
use crate::integrate::Stats;
use crate::run::StopReason;

/// Receives the running estimates and progress of an exponent run.
pub trait ExponentSink {
    /// A new sample of the running estimates (largest first) at time `t`; at most
    /// [`ExponentSettings::trace_samples`] + 1 per run, the last at the end of the run.
    /// Returning `ControlFlow::Break` stops the run at once.
    fn estimate(&mut self, t: f64, exponents: &[f64]) -> ControlFlow<()> {
        let _ = (t, exponents);
        ControlFlow::Continue(())
    }
    /// Progress: the current time and the fraction of the whole run (settle and span) done.
    fn progress(&mut self, t: f64, fraction: f64) {
        let _ = (t, fraction);
    }
}

/// A sink that ignores everything.
impl ExponentSink for () {}

/// The result of an exponent run.
#[derive(Clone, Debug, PartialEq)]
pub struct Spectrum {
    /// The exponents, largest first (in the order of the QR, which sorts them once they have
    /// converged), in 1 / time units; not a number when nothing was averaged (`time` 0).
    pub exponents: Vec<f64>,
    /// For each exponent, the largest minus the smallest running estimate over the last
    /// [`ExponentSettings::tail_fraction`] of the averaging time: an indication of its error
    /// (not a number when too few samples lie there).
    pub spread: Vec<f64>,
    /// The averaging time: from the end of the settle time to `t_end`.
    pub time: f64,
    /// The time reached (the end of the window unless the run stopped early).
    pub t_end: f64,
    /// States of the model.
    pub n_states: usize,
    /// The model uses `t` (it is forced): its flow has one more direction, time, whose zero
    /// exponent is not listed in `exponents`.
    pub time_direction_omitted: bool,
    /// The rates jump as the states change and some jumps were not carried by a saltation
    /// matrix: a `%` of a state-dependent value (not a located switch), or a switch (`sign`,
    /// `step`, `floor`, `ceil`) that the flow did not cross transversally (sliding or
    /// grazing). The stretching there is left out, so the exponents and the verdict may be
    /// wrong. Switches crossed transversally are exact (`n_saltations`); kinks (`abs`,
    /// `min`, `max`) are fine.
    pub rates_jump: bool,
    /// Switches at which the tangent vectors jumped by the saltation matrix.
    pub n_saltations: u64,
    /// Switches the flow did not cross transversally (no saltation matrix there).
    pub n_not_transversal: u64,
    /// The Kaplan–Yorke dimension of the attractor in the state space (with time, for a
    /// forced model), read from the exponents with those zero within their error set to 0;
    /// `None` when too few exponents were computed to determine it, when nothing was averaged
    /// or when the run did not finish its span.
    pub kaplan_yorke: Option<f64>,
    /// What the exponents say the steady state is (`Unbounded` for a run that escaped,
    /// `Undecided` for one that ended early otherwise).
    pub verdict: Verdict,
    /// The running estimates, thinned (for a convergence plot).
    pub trace: Trace,
    /// Why the run ended.
    pub reason: StopReason,
    /// Integrator work, settle and span together.
    pub stats: Stats,
    /// How many QR re-orthonormalisations were made.
    pub n_reorthonormalisations: u64,
}

impl Spectrum {
    /// The largest exponent.
    pub fn largest(&self) -> f64 {
        self.exponents.first().copied().unwrap_or(f64::NAN)
    }

    /// The sum of the computed exponents (for the full spectrum of an autonomous model, the
    /// time average of the Jacobian's trace: the rate of volume change).
    pub fn sum(&self) -> f64 {
        self.exponents.iter().sum()
    }
}
