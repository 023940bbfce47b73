//! Recognising a sliding mode in an exponent run. The exponent run integrates through the
//! model's switches without holding their branches (the tangent vectors follow the Jacobian
//! of whichever branch a stage lands on), so on a sliding surface (`x' = -sign(x)`) its steps
//! shrink to the tolerance and it would crawl on for hours. The switching values are watched
//! at the step ends: when a switch keeps changing branch every few steps, a short run of the
//! model from there, which holds the branches and locates the switches, decides: if it
//! reports chattering, so does the exponent run (the same test as cut and strobe runs make).

use crate::Interrupt;
use crate::expr::{Branch, Program, Scratch, Switch};
use crate::model::Model;
use crate::run::{Collect, Run, RunSpec, StopReason};

/// Branch changes in a row, each within a few steps of the one before, that make a sliding
/// mode suspect (as many as a run's switch handling counts).
const SUSPECT_COUNT: u32 = 8;
/// A change within this many accepted steps after the one before counts towards it.
const CLOSE_STEPS: u64 = 4;
/// The deciding run covers this fraction of the exponent run's length.
const CONFIRM_FRACTION: f64 = 1e-3;

/// The switching values of a model, watched at step ends.
#[derive(Debug)]
pub(super) struct ChatterWatch {
    switches: Vec<Switch>,
    values: Program,
    parameters: Vec<f64>,
    scratch: Scratch,
    out: Vec<f64>,
    branches: Vec<Branch>,
    /// Steps observed, the step of the last change of branch, and how many changes in a row
    /// came within a few steps of the one before.
    n_steps: u64,
    last_change: Option<u64>,
    n_close: u32,
}

impl ChatterWatch {
    /// A watch of `model`'s switches; `None` for a model without switches.
    pub(super) fn new(model: &Model) -> Option<Self> {
        let program = model.program();
        let switches = program.switches();
        if switches.is_empty() {
            return None;
        }
        let values = program.switching_values(&switches, None);
        Some(Self {
            scratch: values.scratch(),
            out: vec![0.0; switches.len()],
            branches: Vec::new(),
            parameters: model.parameters().to_vec(),
            values,
            switches,
            n_steps: 0,
            last_change: None,
            n_close: 0,
        })
    }

    /// Looks at the model's state `x` at the end of a step at `t`; when the switches have
    /// kept changing branch every few steps, runs `model` from there for a short while with
    /// its branches held (`run` gives the integrator settings and the length of the exponent
    /// run) and returns the time of the chattering that run reports, if it does.
    pub(super) fn observe(
        &mut self,
        model: &Model,
        run: &RunSpec,
        t: f64,
        x: &[f64],
    ) -> Option<f64> {
        self.n_steps += 1;
        self.values
            .eval(&mut self.scratch, t, x, &self.parameters, &mut self.out);
        let branches = self
            .switches
            .iter()
            .zip(&self.out)
            .map(|(s, &v)| s.branch_of(v));
        if self.branches.is_empty() {
            self.branches.extend(branches);
            return None;
        }
        let mut changed = false;
        for (old, new) in self.branches.iter_mut().zip(branches) {
            changed |= *old != new;
            *old = new;
        }
        if !changed {
            return None;
        }
        let close = self
            .last_change
            .is_some_and(|last| self.n_steps - last <= CLOSE_STEPS);
        self.n_close = if close { self.n_close + 1 } else { 0 };
        self.last_change = Some(self.n_steps);
        if self.n_close + 1 < SUSPECT_COUNT {
            return None;
        }
        self.n_close = 0;
        confirm(model, run, t, x)
    }
}

/// Runs `model` from `(t, x)` over a short part of `run`'s length with its switches held;
/// the time of the chattering it reports, if any.
fn confirm(model: &Model, run: &RunSpec, t: f64, x: &[f64]) -> Option<f64> {
    let length = (run.t_end() - run.t_start) * CONFIRM_FRACTION;
    let span = length.min(run.t_end() - t);
    if span.is_nan() || span <= 0.0 {
        return None;
    }
    let mut from_here = model.clone();
    from_here.set_start(x);
    let spec = RunSpec {
        t_start: t,
        settle: 0.0,
        span,
        ..run.clone()
    };
    let outcome = Run::new(from_here, spec, None, None, false)
        .execute(&mut Collect::default(), &Interrupt::new());
    match outcome.reason {
        StopReason::Chattering { t } => Some(t),
        _ => None,
    }
}
