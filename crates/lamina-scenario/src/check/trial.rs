//! Trial runs for the time-resolution check: the first steps of the scenario's own run, and of
//! the same run moved to start at `t = 0` or at the far end of its window. A run that
//! collapses where the time is far from 0 but steps on from 0 has lost its steps to the
//! time's rounding, not to its model.
//!
//! A trial is the run itself (same model, settings, cut and strobe) stopped at its first
//! progress report, which the core makes every few hundred accepted steps: its first steps are
//! exactly those of the real run.

use lamina_core::Interrupt;
use lamina_core::run::{Cut as CoreCut, Run, RunSpec, Sink, StopReason};

use super::Checker;

/// Trials are made only for models of at most this many states (a stiff step of a larger
/// one costs too much for a check).
pub(super) const MAX_TRIAL_STATES: usize = 200;

/// How a trial went.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum Trial {
    /// It took its steps (or finished): their mean size.
    Stepped { mean_step: f64 },
    /// Its step size collapsed at `t`.
    Collapsed { t: f64 },
    /// It stopped for another reason (escape, not a number, chattering).
    Other,
}

/// Stops a run at its first progress report.
struct FirstSteps<'a> {
    interrupt: &'a Interrupt,
}

impl Sink for FirstSteps<'_> {
    fn progress(&mut self, _t: f64, _fraction: f64) {
        self.interrupt.raise();
    }
}

/// Whether a run that stopped for `reason` stopped because its steps collapsed: trouble that
/// is not an escape, a value that is not a number or chattering (so a core that names a
/// collapse lost to the time's resolution on its own counts too).
fn collapsed(reason: StopReason) -> bool {
    reason.is_trouble()
        && !matches!(
            reason,
            StopReason::Escaped { .. }
                | StopReason::NotFinite { .. }
                | StopReason::Chattering { .. }
        )
}

impl Checker<'_> {
    /// The first steps of the scenario's run started at `t_start` instead of its own start
    /// (the strobe's first sample moved with it); `None` when the model or the cut does not
    /// compile.
    pub(super) fn trial(&self, t_start: f64) -> Option<Trial> {
        if !self.rates_compiled {
            return None;
        }
        let model = self.model.clone()?;
        let shift = t_start - self.scenario.time.start;
        let spec = RunSpec {
            t_start,
            ..self.scenario.run_spec()
        };
        let cut = match self.scenario.cut_spec() {
            Some(cut_spec) => Some(CoreCut::compile(&cut_spec, &model).ok()?),
            None => None,
        };
        let strobe = self.strobe.map(|mut strobe| {
            strobe.first_at += shift;
            strobe
        });
        let interrupt = Interrupt::new();
        let mut sink = FirstSteps {
            interrupt: &interrupt,
        };
        let mut run = Run::new(model, spec, cut, strobe, false);
        let outcome = run.execute(&mut sink, &interrupt);
        if collapsed(outcome.reason) {
            return Some(Trial::Collapsed {
                t: outcome.t_reached,
            });
        }
        let n_steps = outcome.stats.n_accepted;
        match outcome.reason {
            StopReason::Finished | StopReason::Cancelled { .. } if n_steps > 0 => {
                let mean_step = (outcome.t_reached - t_start) / n_steps as f64;
                Some(Trial::Stepped { mean_step })
            }
            _ => Some(Trial::Other),
        }
    }
}
