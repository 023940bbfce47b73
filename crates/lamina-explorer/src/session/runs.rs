//! Starting, stopping and running on; applying the run job's progress to the results;
//! re-slicing the stored run when the cut moves and re-sampling it when the strobe changes;
//! the debounced re-run after a parameter slider rests.

use std::time::{Duration, Instant};

use lamina_core::run::{Cut, Run, StopReason, Strobe};

use super::Session;
use crate::jobs::{Job, Poll};
use crate::results::{Results, RunState};
use crate::vocabulary::{JobKind, PanelChanges};
use crate::worker::{RunFinished, RunProgress, integrate};

/// How long a slider must rest before the model runs again.
const SLIDER_REST: Duration = Duration::from_millis(250);

/// The run job.
type RunJob = Job<RunProgress, RunFinished>;

/// Run bookkeeping of the session.
#[derive(Default)]
pub struct RunControl {
    /// The running job.
    job: Option<RunJob>,
    /// Runs started since the window opened.
    pub n_started: u64,
    /// A re-run is due at this time (a slider moved).
    rerun_at: Option<Instant>,
    /// A slider is held: keep postponing.
    slider_held: bool,
    /// The cut changed while running: re-slice when the run comes back.
    reslice_when_back: bool,
    /// The strobe changed while running: re-sample when the run comes back.
    resample_when_back: bool,
    /// The model was edited since the results were computed.
    pub stale: bool,
    /// Parts of the shown run: 1 after Run, one more for each Run on.
    pub parts: u32,
    /// How long the last part took (the whole run's time is `Results::elapsed`).
    pub last_part: Duration,
}

impl RunControl {
    /// Whether a run is going.
    pub fn is_running(&self) -> bool {
        self.job.is_some()
    }

    /// Whether a parameter slider is held.
    pub fn slider_held(&self) -> bool {
        self.slider_held
    }

    /// A slider was taken or let go.
    pub fn hold_slider(&mut self, held: bool) {
        self.slider_held = held;
    }
}

impl Session {
    /// Applies the run job's progress to the results, and its end.
    pub(crate) fn drain_run(&mut self) {
        let Some(job) = &self.runs.job else {
            return;
        };
        // the result is sent after the last progress: look for it first, so no batch sent
        // before it is left behind
        let end = job.poll();
        let progress = job.progress();
        for event in progress {
            match event {
                RunProgress::Progress {
                    t,
                    fraction,
                    n_steps,
                } => {
                    self.results.t_reached = t;
                    self.results.fraction = fraction;
                    self.results.n_steps = n_steps;
                }
                RunProgress::Partial(batch) => {
                    for p in &batch.cut {
                        self.results.cut.push_cut(p);
                    }
                    for s in &batch.strobe {
                        self.results.strobe.push_strobe(s);
                    }
                    let dim = self.results.trajectory.dim().max(1);
                    for (k, t) in batch.trajectory_t.iter().enumerate() {
                        self.results
                            .trajectory
                            .push(*t, &batch.trajectory[k * dim..(k + 1) * dim]);
                    }
                }
            }
        }
        match end {
            Poll::Running => {}
            Poll::Done(finished) => {
                self.runs.job = None;
                self.run_finished(finished);
            }
            Poll::Lost => {
                let label = job.label();
                self.runs.job = None;
                self.results.state = RunState::Lost;
                self.note(format!(
                    "the {label} stopped without a result (an internal error; please report it)"
                ));
            }
        }
    }

    fn run_finished(&mut self, finished: RunFinished) {
        let RunFinished {
            run,
            outcome,
            elapsed,
        } = finished;
        self.results.elapsed += elapsed;
        self.runs.last_part = elapsed;
        self.results.t_reached = outcome.t_reached;
        self.results.n_steps = outcome.stats.n_accepted;
        self.results.state = match outcome.reason {
            StopReason::Finished => RunState::Finished,
            StopReason::Cancelled { .. } => RunState::Stopped,
            other => RunState::EndedEarly(other),
        };
        // the status line shows the whole run's time: a Run on says both, so they agree
        let time = if self.runs.parts > 1 {
            format!(
                "{:.2} s ({:.2} s in all, {} parts)",
                elapsed.as_secs_f64(),
                self.results.elapsed.as_secs_f64(),
                self.runs.parts
            )
        } else {
            format!("{:.2} s", elapsed.as_secs_f64())
        };
        let message = format!(
            "run {}: {} cut points, {} strobe samples, {} steps, {} rate evaluations in {time}",
            match outcome.reason {
                StopReason::Finished => "finished".to_string(),
                other => other.to_string(),
            },
            self.results.cut.len(),
            self.results.strobe.len(),
            outcome.stats.n_accepted,
            outcome.stats.n_rate_evaluations,
        );
        for change in outcome.method_changes.iter().take(20) {
            self.note(change.to_string());
        }
        if outcome.method_changes.len() > 20 {
            self.note(format!(
                "... {} changes of method in all",
                outcome.method_changes.len()
            ));
        }
        if outcome.n_switches > 0 {
            self.note(format!(
                "{} switches of the model's branches located and stepped through",
                outcome.n_switches
            ));
        }
        if let Some(t) = run.stored().truncated_at() {
            self.note(format!("the stored run reached its memory budget at t = {t}: moving the cut re-slices only up to there"));
        }
        self.results.run = Some(run);
        self.note(message);
        if std::mem::take(&mut self.runs.reslice_when_back) {
            self.reslice();
        }
        if std::mem::take(&mut self.runs.resample_when_back) {
            self.resample();
        }
    }

    /// Starts a run of the scenario, stopping a running one first.
    pub(crate) fn start_run(&mut self) {
        self.runs.rerun_at = None;
        if let Some(problem) = self.doc.first_error() {
            let message = format!("cannot run: {problem}");
            self.note(message);
            return;
        }
        // letting the old job go stops it; its events are never read
        self.runs.job = None;
        let compiled = match self.doc.compiled() {
            Ok(c) => c.clone(),
            Err(e) => {
                self.note(format!("cannot run: {e}"));
                return;
            }
        };
        let period = compiled.strobe.as_ref().map(|s| s.period);
        let message = if compiled.model.runs_machine_code() {
            "run started"
        } else {
            "run started (no machine code on this computer: the rates run by the slower evaluator)"
        };
        let run = Box::new(Run::new(
            compiled.model,
            compiled.run,
            compiled.cut,
            compiled.strobe,
            true,
        ));
        self.results = Results::new(self.state_names());
        self.results.strobe_period = period;
        self.runs.parts = 0;
        self.launch(run, message);
        self.runs.stale = false;
    }

    fn launch(&mut self, run: Box<Run>, message: &str) {
        let spawned = Job::spawn(
            JobKind::Run,
            self.revision,
            self.waker.clone(),
            move |reporter, interrupt| integrate(run, reporter, &interrupt),
        );
        match spawned {
            Ok(job) => {
                self.runs.job = Some(job);
                self.runs.n_started += 1;
                self.runs.parts += 1;
                self.results.state = RunState::Running;
                self.note(message.to_string());
            }
            Err(e) => self.note(e.to_string()),
        }
    }

    /// Asks the running job to stop (it comes back with what it found).
    pub(crate) fn stop_run(&mut self) {
        self.runs.rerun_at = None;
        if let Some(job) = &self.runs.job {
            job.cancel();
            self.note("stopping the run");
        }
    }

    /// Runs on: integrates the finished run for another span from where it ended.
    pub(crate) fn run_on(&mut self) {
        if self.runs.is_running() {
            self.note("the run is still going");
            return;
        }
        if let Some(problem) = self.doc.first_error() {
            let message = format!("cannot run on: {problem}");
            self.note(message);
            return;
        }
        if self.runs.stale {
            self.note("the model changed since this run: press Run to start again");
            return;
        }
        let Some(mut run) = self.results.run.take() else {
            self.note("nothing to run on: press Run first");
            return;
        };
        if matches!(self.results.state, RunState::EndedEarly(reason) if reason.is_trouble()) {
            self.note("this run ended early on numerical trouble; it cannot run on");
            self.results.run = Some(run);
            return;
        }
        if run.t() >= run.t_end() {
            run.extend(self.doc.scenario.time.span.max(0.0));
        }
        self.launch(run, "running on");
    }

    /// Acts on what an edit in the model panel changed.
    pub(crate) fn react_to_edit(&mut self, changes: PanelChanges) {
        if changes.slider || changes.slider_held {
            self.runs.rerun_at = Some(Instant::now() + SLIDER_REST);
            self.runs.stale = true;
        }
        self.runs.slider_held = changes.slider_held;
        if changes.model {
            self.runs.stale = true;
        }
        if changes.cut {
            self.reslice_now_or_later();
        }
        if changes.strobe {
            if self.runs.is_running() {
                self.runs.resample_when_back = true;
            } else {
                self.resample();
            }
        }
    }

    /// Starts a run when a slider has rested; how long until it looks again, if waiting.
    pub(crate) fn run_timers(&mut self) -> Option<Duration> {
        let at = self.runs.rerun_at?;
        let now = Instant::now();
        if self.runs.slider_held || now < at {
            return Some(
                at.saturating_duration_since(now)
                    .max(Duration::from_millis(20)),
            );
        }
        self.runs.rerun_at = None;
        if self.doc.first_error().is_none() {
            self.start_run();
        }
        None
    }

    /// Re-slices now, or when the running job comes back.
    pub(crate) fn reslice_now_or_later(&mut self) {
        if self.runs.is_running() {
            self.runs.reslice_when_back = true;
        } else {
            self.reslice();
        }
    }

    /// Re-slices now without a line in the log (the moves of a drag that goes on), or, while
    /// a run goes, when it is back.
    pub(crate) fn reslice_quietly_if_idle(&mut self) {
        if self.runs.is_running() {
            self.runs.reslice_when_back = true;
        } else {
            self.reslice_logged(false);
        }
    }

    /// Whether the finished run still matches the scenario's states.
    fn run_matches_model(&self) -> bool {
        self.results
            .run
            .as_ref()
            .is_some_and(|run| run.model().names().states == self.state_names())
    }

    /// Cuts the stored run again with the scenario's cut (no new integration).
    pub(crate) fn reslice(&mut self) {
        self.reslice_logged(true);
    }

    /// [`Session::reslice`], noting the result in the log if `log`.
    fn reslice_logged(&mut self, log: bool) {
        if !self.run_matches_model() {
            return;
        }
        let Some(run) = self.results.run.as_mut() else {
            return;
        };
        let Some(spec) = self.doc.scenario.cut_spec() else {
            run.set_cut(None);
            self.results.cut.clear();
            return;
        };
        let mut cut = match Cut::compile(&spec, run.model()) {
            Ok(cut) => cut,
            Err(e) => {
                self.note(format!("cannot re-slice: cut: {e}"));
                return;
            }
        };
        let started = Instant::now();
        let points = run
            .stored()
            .reslice_points(&mut cut, run.model().parameters());
        let took = started.elapsed();
        let n_steps = run.stored().n_steps();
        run.set_cut(Some(cut));
        self.results.cut.set_cut_points(&points);
        if log {
            // a drag of the cut re-slices every frame: one line for the drag, kept up to date
            self.note_in_place(
                "re-sliced ",
                format!(
                    "re-sliced {n_steps} stored steps in {:.1} ms: {} cut points",
                    took.as_secs_f64() * 1e3,
                    points.len()
                ),
            );
        }
    }

    /// Samples the stored run again with the scenario's strobe.
    pub(crate) fn resample(&mut self) {
        if !self.run_matches_model() {
            return;
        }
        let Some(run) = self.results.run.as_mut() else {
            return;
        };
        let Some(spec) = self.doc.scenario.strobe_spec() else {
            run.set_strobe(None);
            self.results.strobe.clear();
            return;
        };
        let strobe = match Strobe::compile(&spec, run.model()) {
            Ok(strobe) => strobe,
            Err(e) => {
                self.note(format!("cannot re-sample: strobe: {e}"));
                return;
            }
        };
        let samples = run.stored().strobe_samples(&strobe);
        run.set_strobe(Some(strobe));
        self.results.strobe.clear();
        for s in &samples {
            self.results.strobe.push_strobe(s);
        }
        self.note(format!(
            "re-sampled the stored run: {} strobe samples",
            samples.len()
        ));
    }
}
