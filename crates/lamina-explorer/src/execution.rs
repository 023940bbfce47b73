//! Starting, stopping and running on; applying the worker's events; re-slicing the
//! stored run when the cut moves and re-sampling it when the strobe changes; the debounced
//! re-run after a parameter slider rests.

use std::time::{Duration, Instant};

use lamina_core::model::Model;
use lamina_core::run::{Cut, Run, StopReason, Strobe};

use crate::app::ExplorerApp;
use crate::model_panel::PanelChanges;
use crate::results::{Results, RunState};
use crate::worker::{RunWorker, StartError, WorkerEvent};

/// How long a slider must rest before the model runs again.
const SLIDER_REST: Duration = Duration::from_millis(250);

/// Run bookkeeping of the window.
#[derive(Default)]
pub struct Execution {
    /// The background worker.
    pub worker: RunWorker,
    /// Runs started since the window opened.
    pub n_started: u64,
    /// A re-run is due at this time (a slider moved).
    rerun_at: Option<Instant>,
    /// A slider is held: keep postponing.
    slider_held: bool,
    /// Start a run as soon as the worker is free.
    start_when_free: bool,
    /// The cut changed while running: re-slice when the run comes back.
    reslice_when_back: bool,
    /// The strobe changed while running: re-sample when the run comes back.
    resample_when_back: bool,
    /// The model was edited since the results were computed.
    pub stale: bool,
    /// When the current stretch started.
    started_at: Option<Instant>,
}

impl ExplorerApp {
    /// Applies the worker's events to the results.
    pub(crate) fn drain_worker(&mut self, ctx: &egui::Context) {
        let current = self.execution.worker.current_job();
        for event in self.execution.worker.drain() {
            if Some(event.job()) != current {
                continue;
            }
            match event {
                WorkerEvent::Progress {
                    t,
                    fraction,
                    n_steps,
                    ..
                } => {
                    self.results.t_reached = t;
                    self.results.fraction = fraction;
                    self.results.n_steps = n_steps;
                }
                WorkerEvent::Partial { batch, .. } => {
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
                WorkerEvent::Finished {
                    run,
                    outcome,
                    elapsed,
                    ..
                } => {
                    self.results.elapsed += elapsed;
                    self.results.t_reached = outcome.t_reached;
                    self.results.n_steps = outcome.stats.n_accepted;
                    self.results.state = match outcome.reason {
                        StopReason::Finished => RunState::Finished,
                        StopReason::Cancelled { .. } => RunState::Stopped,
                        other => RunState::EndedEarly(other),
                    };
                    let message = format!(
                        "run {}: {} cut points, {} strobe samples, {} steps, {} rate evaluations in {:.2} s",
                        match outcome.reason {
                            StopReason::Finished => "finished".to_string(),
                            other => other.to_string(),
                        },
                        self.results.cut.len(),
                        self.results.strobe.len(),
                        outcome.stats.n_accepted,
                        outcome.stats.n_rate_evaluations,
                        elapsed.as_secs_f64()
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
                    self.execution.started_at = None;
                    self.note(message);
                    if std::mem::take(&mut self.execution.reslice_when_back) {
                        self.reslice();
                    }
                    if std::mem::take(&mut self.execution.resample_when_back) {
                        self.resample();
                    }
                }
            }
        }
        if self.execution.worker.is_running() {
            if let Some(at) = self.execution.started_at {
                self.results.elapsed = at.elapsed();
            }
            ctx.request_repaint_after(Duration::from_millis(100));
        }
    }

    /// Starts a fresh run of the current scenario (stopping a running one first).
    pub(crate) fn start_run(&mut self, ctx: &egui::Context) {
        if let Some(problem) = self.doc.first_error() {
            let message = format!("cannot run: {problem}");
            self.note(message);
            return;
        }
        if self.execution.worker.is_running() {
            self.execution.worker.stop();
            self.execution.start_when_free = true;
            return;
        }
        let scenario = &self.doc.scenario;
        let model = match Model::compile(&scenario.model_spec()) {
            Ok(m) => m,
            Err(e) => {
                self.note(format!("cannot run: {e}"));
                return;
            }
        };
        let cut = scenario
            .cut_spec()
            .and_then(|spec| Cut::compile(&spec, &model).ok());
        let strobe = scenario
            .strobe_spec()
            .and_then(|spec| Strobe::compile(&spec, &model).ok());
        let period = strobe.map(|s| s.period);
        let message = if model.runs_machine_code() {
            "run started"
        } else {
            "run started (no machine code on this computer: the rates run by the slower evaluator)"
        };
        let run = Box::new(Run::new(model, scenario.run_spec(), cut, strobe, true));
        self.results = Results::new(self.state_names());
        self.results.strobe_period = period;
        self.launch(ctx, run, message);
        self.execution.stale = false;
    }

    fn launch(&mut self, ctx: &egui::Context, run: Box<Run>, message: &str) {
        let repaint_ctx = ctx.clone();
        match self
            .execution
            .worker
            .start(run, move || repaint_ctx.request_repaint())
        {
            Ok(_) => {
                self.execution.n_started += 1;
                self.results.state = RunState::Running;
                self.execution.started_at = Some(Instant::now() - self.results.elapsed);
                self.note(message.to_string());
            }
            Err(StartError::Busy(run)) => {
                self.results.run = Some(run);
                self.note("a run is already going: stop it first (Esc)");
            }
            Err(StartError::Thread(e)) => self.note(format!("cannot start the run: {e}")),
        }
    }

    /// Asks the running job to stop.
    pub(crate) fn stop_run(&mut self) {
        self.execution.start_when_free = false;
        self.execution.rerun_at = None;
        if self.execution.worker.is_running() {
            self.execution.worker.stop();
            self.note("stopping the run");
        }
    }

    /// Runs on: integrates the finished run for another span from where it ended.
    pub(crate) fn run_on(&mut self, ctx: &egui::Context) {
        if self.execution.worker.is_running() {
            self.note("the run is still going");
            return;
        }
        if self.execution.stale {
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
        self.launch(ctx, run, "running on");
    }

    /// Acts on what the model panel changed.
    pub(crate) fn apply_changes(&mut self, ctx: &egui::Context, changes: PanelChanges) {
        if changes.slider || changes.slider_held {
            self.execution.rerun_at = Some(Instant::now() + SLIDER_REST);
            self.execution.stale = true;
        }
        self.execution.slider_held = changes.slider_held;
        if changes.model {
            self.execution.stale = true;
        }
        if changes.cut {
            self.reslice_now_or_later();
        }
        if changes.strobe {
            if self.execution.worker.is_running() {
                self.execution.resample_when_back = true;
            } else {
                self.resample();
            }
        }
        if changes.any() {
            ctx.request_repaint();
        }
    }

    /// Starts a run when a slider has rested or a queued start finds the worker free.
    pub(crate) fn execution_tick(&mut self, ctx: &egui::Context) {
        if let Some(at) = self.execution.rerun_at {
            let now = Instant::now();
            if self.execution.slider_held || now < at {
                ctx.request_repaint_after(
                    at.saturating_duration_since(now)
                        .max(Duration::from_millis(20)),
                );
            } else if self.doc.first_error().is_none() {
                self.execution.rerun_at = None;
                self.start_run(ctx);
            } else {
                self.execution.rerun_at = None;
            }
        }
        if self.execution.start_when_free && !self.execution.worker.is_running() {
            self.execution.start_when_free = false;
            self.start_run(ctx);
        }
        if self.execution.start_when_free {
            ctx.request_repaint_after(Duration::from_millis(20));
        }
    }

    /// Re-slices now, or when the running job comes back.
    pub(crate) fn reslice_now_or_later(&mut self) {
        if self.execution.worker.is_running() {
            self.execution.reslice_when_back = true;
        } else {
            self.reslice();
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
        let Ok(mut cut) = Cut::compile(&spec, run.model()) else {
            return;
        };
        let started = Instant::now();
        let points = run
            .stored()
            .reslice_points(&mut cut, run.model().parameters());
        let took = started.elapsed();
        let n_steps = run.stored().n_steps();
        run.set_cut(Some(cut));
        self.results.cut.set_cut_points(&points);
        self.note(format!(
            "re-sliced {n_steps} stored steps in {:.1} ms: {} cut points",
            took.as_secs_f64() * 1e3,
            points.len()
        ));
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
        let Ok(strobe) = Strobe::compile(&spec, run.model()) else {
            return;
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
