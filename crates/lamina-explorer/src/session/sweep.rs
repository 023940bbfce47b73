//! The sweep job: runs a parameter sweep in the background (the values themselves in
//! parallel on rayon's pool when restarting), streams each finished value to the session,
//! and keeps the orbit diagram's values with the indices of the sweep they came from.

use std::ops::ControlFlow;

use lamina_core::model::Model;
use lamina_core::recurrence::{RecurrenceKind, RecurrenceSettings};
use lamina_core::run::Strobe;
use lamina_core::sweep::{
    SweepColumn, SweepError, column_recurrence, describe, sweep_follow, sweep_restart,
};

use super::Session;
use crate::jobs::{Job, Poll};
use crate::vocabulary::JobKind;

/// The running sweep.
type SweepJob = Job<SweepColumn, Result<(), SweepError>>;

/// The sweep's job and what it has produced.
#[derive(Default)]
pub struct SweepState {
    job: Option<SweepJob>,
    /// Finished values with their label from the recurrence detector, in parameter order.
    pub columns: Vec<(SweepColumn, RecurrenceKind)>,
    /// The recurrence detector's settings for the running or last sweep (its integrator
    /// tolerances).
    pub recurrence: RecurrenceSettings,
    /// Number of values of the running or last sweep.
    pub total: usize,
    /// Parameter and coordinate of the running or last sweep (indices into this document's
    /// scenario; `None` before the first sweep).
    pub axes: Option<(usize, usize)>,
    /// The settings of the running or last sweep (range, settle, keep), for its captions.
    pub spec: Option<lamina_core::sweep::SweepSpec>,
}

impl SweepState {
    /// Whether a sweep is going.
    pub fn is_running(&self) -> bool {
        self.job.is_some()
    }

    /// Whether there is neither a sweep going nor a value of one.
    pub fn is_empty(&self) -> bool {
        self.job.is_none() && self.columns.is_empty() && self.axes.is_none()
    }

    /// Asks the sweep to stop; whether one was going.
    pub fn cancel(&self) -> bool {
        self.job.as_ref().inspect(|j| j.cancel()).is_some()
    }
}

impl Session {
    /// Parameter and coordinate of the orbit diagram: those of the sweep that made it, else
    /// the scenario's.
    pub fn sweep_axes(&self) -> Option<(usize, usize)> {
        self.sweep.axes.or_else(|| {
            Some((
                self.doc.scenario.sweep_parameter_index()?,
                self.doc.scenario.sweep_coordinate_index()?,
            ))
        })
    }

    /// Name of the parameter of the orbit diagram.
    pub fn swept_parameter_name(&self) -> String {
        self.sweep_axes()
            .and_then(|(p, _)| self.doc.scenario.parameters.get(p))
            .map(|p| p.name.clone())
            .unwrap_or_default()
    }

    /// The swept parameter's name with its unit, for axes.
    pub fn swept_parameter_label(&self) -> String {
        self.sweep_axes()
            .map(|(p, _)| self.doc.scenario.parameter_label(p))
            .unwrap_or_default()
    }

    /// Starts the scenario's sweep.
    pub(crate) fn start_sweep(&mut self) {
        if self.sweep.is_running() {
            self.note("a sweep is already going: stop it first");
            return;
        }
        if let Some(problem) = self.doc.first_error() {
            self.note(format!("cannot sweep: {problem}"));
            return;
        }
        let compiled = match self.doc.compiled() {
            Ok(c) => c,
            Err(e) => {
                self.note(format!("cannot sweep: {e}"));
                return;
            }
        };
        let (Some(spec), Some(coordinate)) = (
            compiled.sweep.clone(),
            self.doc.scenario.sweep_coordinate_index(),
        ) else {
            self.note("no sweep: switch it on in the model panel");
            return;
        };
        let model = compiled.model.clone();
        let run = compiled.run.clone();
        let cut = compiled.cut.clone();
        let strobe = compiled.strobe_spec.clone();
        let total = spec.n_values();
        let recurrence = RecurrenceSettings::for_control(&run.control);
        let axes = (spec.parameter, coordinate);
        let spec_kept = spec.clone();
        let spawned = Job::spawn(
            JobKind::Sweep,
            self.revision,
            self.waker.clone(),
            move |reporter, interrupt| {
                // the strobe is compiled again per value: its period may use the parameter
                let strobe_for =
                    move |m: &Model| strobe.as_ref().and_then(|s| Strobe::compile(s, m).ok());
                let indices: Vec<usize> = (0..spec.n_values()).collect();
                if spec.follow {
                    sweep_follow(
                        &model,
                        &run,
                        cut.as_ref(),
                        &strobe_for,
                        &spec,
                        &indices,
                        &interrupt,
                        &mut |c| {
                            reporter.send(c.clone());
                            ControlFlow::Continue(())
                        },
                    )
                } else {
                    sweep_restart(
                        &model,
                        &run,
                        cut.as_ref(),
                        &strobe_for,
                        &spec,
                        &indices,
                        &interrupt,
                        &|c| reporter.send(c.clone()),
                    )
                    .map(|_| ())
                }
            },
        );
        match spawned {
            Ok(job) => {
                self.sweep.job = Some(job);
                self.sweep.columns.clear();
                self.sweep.recurrence = recurrence;
                self.sweep.total = total;
                self.sweep.axes = Some(axes);
                self.sweep.spec = Some(spec_kept);
                self.note(format!("sweep started: {total} values"));
            }
            Err(e) => self.note(e.to_string()),
        }
    }

    /// Takes the sweep job's values, and its end.
    pub(crate) fn drain_sweep(&mut self) {
        let Some(job) = &self.sweep.job else {
            return;
        };
        let end = job.poll();
        for column in job.progress() {
            let kind = column_recurrence(&column, &self.sweep.recurrence).kind();
            let at = self
                .sweep
                .columns
                .partition_point(|(c, _)| c.index < column.index);
            self.sweep.columns.insert(at, (column, kind));
        }
        match end {
            Poll::Running => {}
            Poll::Lost => {
                let label = job.label();
                self.sweep.job = None;
                self.note(format!(
                    "the {label} stopped without a result (an internal error; please report it)"
                ));
            }
            Poll::Done(Err(e)) => {
                self.sweep.job = None;
                self.note(format!("the sweep could not run: {e}"));
            }
            Poll::Done(Ok(())) => {
                self.sweep.job = None;
                let labels: Vec<(f64, RecurrenceKind)> = self
                    .sweep
                    .columns
                    .iter()
                    .map(|(c, k)| (c.value, *k))
                    .collect();
                self.note(format!(
                    "sweep done: {} of {} values, {} change(s) of behaviour",
                    self.sweep.columns.len(),
                    self.sweep.total,
                    lamina_core::sweep::changes(&labels).len()
                ));
                let name = self.swept_parameter_name();
                for line in describe(&name, &labels).into_iter().take(14) {
                    self.note(format!("  {line}"));
                }
            }
        }
    }
}
