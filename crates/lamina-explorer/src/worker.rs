//! The run job's work: integrates on its thread and streams batches of points to the window
//! through the job's reporter, then hands the run back with its stored steps.

use std::ops::ControlFlow;
use std::time::{Duration, Instant};

use lamina_core::Interrupt;
use lamina_core::run::{CutPoint, Run, RunOutcome, Sink, StrobeSample};

use crate::jobs::Reporter;

/// Points found since the last batch.
#[derive(Default)]
pub struct Batch {
    /// New cut points.
    pub cut: Vec<CutPoint>,
    /// New strobe samples.
    pub strobe: Vec<StrobeSample>,
    /// New trajectory samples: times.
    pub trajectory_t: Vec<f64>,
    /// New trajectory samples: states, flat.
    pub trajectory: Vec<f64>,
}

impl Batch {
    fn is_empty(&self) -> bool {
        self.cut.is_empty() && self.strobe.is_empty() && self.trajectory_t.is_empty()
    }
}

/// What a run sends while it goes.
pub enum RunProgress {
    /// Where the run stands.
    Progress {
        /// Simulated time reached.
        t: f64,
        /// Fraction of the window done.
        fraction: f64,
        /// Accepted steps so far.
        n_steps: u64,
    },
    /// New points.
    Partial(Batch),
}

/// The run, back from its thread.
pub struct RunFinished {
    /// The run, to re-slice or run on.
    pub run: Box<Run>,
    /// How it ended.
    pub outcome: RunOutcome,
    /// Wall-clock time of this stretch.
    pub elapsed: Duration,
}

/// How often batches are sent while running.
const BATCH_INTERVAL: Duration = Duration::from_millis(40);

/// Sends batches of points, at most every [`BATCH_INTERVAL`].
struct ChannelSink<'r> {
    reporter: &'r Reporter<RunProgress>,
    batch: Batch,
    last_sent: Instant,
    n_steps: u64,
    calls: u32,
}

impl ChannelSink<'_> {
    fn maybe_send(&mut self) {
        self.calls += 1;
        if self.calls.is_multiple_of(32) && self.last_sent.elapsed() >= BATCH_INTERVAL {
            self.flush();
        }
    }

    fn flush(&mut self) {
        if !self.batch.is_empty() {
            let batch = std::mem::take(&mut self.batch);
            self.reporter.send(RunProgress::Partial(batch));
        }
        self.last_sent = Instant::now();
    }
}

impl Sink for ChannelSink<'_> {
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        self.batch.cut.push(point.clone());
        self.maybe_send();
        ControlFlow::Continue(())
    }
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        self.batch.strobe.push(sample.clone());
        self.maybe_send();
        ControlFlow::Continue(())
    }
    fn progress(&mut self, t: f64, fraction: f64) {
        self.reporter.send(RunProgress::Progress {
            t,
            fraction,
            n_steps: self.n_steps,
        });
        self.maybe_send();
    }
    fn step(&mut self, t: f64, state: &[f64]) {
        self.n_steps += 1;
        self.batch.trajectory_t.push(t);
        self.batch.trajectory.extend_from_slice(state);
        self.maybe_send();
    }
}

/// Integrates `run` from where it stands until its window ends or `interrupt` is raised.
pub fn integrate(
    mut run: Box<Run>,
    reporter: &Reporter<RunProgress>,
    interrupt: &Interrupt,
) -> RunFinished {
    let started = Instant::now();
    let mut sink = ChannelSink {
        reporter,
        batch: Batch::default(),
        last_sent: Instant::now(),
        n_steps: run.stats().n_accepted,
        calls: 0,
    };
    let outcome = run.execute(&mut sink, interrupt);
    sink.flush();
    RunFinished {
        run,
        outcome,
        elapsed: started.elapsed(),
    }
}
