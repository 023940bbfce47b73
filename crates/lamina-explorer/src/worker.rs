//! The run worker: integrates on a background thread, streams batches of points to the UI
//! over a channel, and hands the finished run back. The UI drains the channel at the top of
//! each frame; the worker asks for a repaint whenever it sends.

use std::ops::ControlFlow;
use std::sync::Arc;
use std::sync::mpsc::{Receiver, Sender, channel};
use std::thread::JoinHandle;
use std::time::{Duration, Instant};

use lamina_core::Interrupt;
use lamina_core::run::{CutPoint, Run, RunOutcome, Sink, StrobeSample};

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

/// What the worker reports. Every event carries the job it belongs to.
pub enum WorkerEvent {
    /// Progress of the run.
    Progress {
        /// Job number.
        job: u64,
        /// Simulated time reached.
        t: f64,
        /// Fraction of the window done.
        fraction: f64,
        /// Accepted steps so far.
        n_steps: u64,
    },
    /// New points.
    Partial {
        /// Job number.
        job: u64,
        /// The points.
        batch: Batch,
    },
    /// The run ended; here it is back, with its stored steps.
    Finished {
        /// Job number.
        job: u64,
        /// The run, to re-slice or run on.
        run: Box<Run>,
        /// How it ended.
        outcome: RunOutcome,
        /// Wall-clock time of this stretch.
        elapsed: Duration,
    },
}

impl WorkerEvent {
    /// The job the event belongs to.
    pub fn job(&self) -> u64 {
        match self {
            Self::Progress { job, .. } | Self::Partial { job, .. } | Self::Finished { job, .. } => {
                *job
            }
        }
    }
}

/// How often batches are sent while running.
const BATCH_INTERVAL: Duration = Duration::from_millis(40);

/// Sends batches of points, at most every [`BATCH_INTERVAL`].
struct ChannelSink {
    job: u64,
    tx: Sender<WorkerEvent>,
    repaint: Box<dyn Fn() + Send>,
    batch: Batch,
    last_sent: Instant,
    n_steps: u64,
    calls: u32,
}

impl ChannelSink {
    fn maybe_send(&mut self) {
        self.calls += 1;
        if self.calls.is_multiple_of(32) && self.last_sent.elapsed() >= BATCH_INTERVAL {
            self.flush();
        }
    }

    fn flush(&mut self) {
        if !self.batch.is_empty() {
            let batch = std::mem::take(&mut self.batch);
            let _ = self.tx.send(WorkerEvent::Partial {
                job: self.job,
                batch,
            });
            (self.repaint)();
        }
        self.last_sent = Instant::now();
    }
}

impl Sink for ChannelSink {
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
        let _ = self.tx.send(WorkerEvent::Progress {
            job: self.job,
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

/// Why a job did not start.
pub enum StartError {
    /// A job is already running; here is the run back.
    Busy(Box<Run>),
    /// The operating system refused a thread.
    Thread(String),
}

struct Job {
    id: u64,
    interrupt: Arc<Interrupt>,
    handle: JoinHandle<()>,
}

/// Runs one job at a time on a background thread.
pub struct RunWorker {
    tx: Sender<WorkerEvent>,
    rx: Receiver<WorkerEvent>,
    current: Option<Job>,
    next_id: u64,
}

impl Default for RunWorker {
    fn default() -> Self {
        let (tx, rx) = channel();
        Self {
            tx,
            rx,
            current: None,
            next_id: 1,
        }
    }
}

impl RunWorker {
    /// Whether a job is running.
    pub fn is_running(&self) -> bool {
        self.current
            .as_ref()
            .is_some_and(|job| !job.handle.is_finished())
    }

    /// The running job's number.
    pub fn current_job(&self) -> Option<u64> {
        self.current.as_ref().map(|j| j.id)
    }

    /// Starts integrating `run` (from where it stands); refused while a job runs.
    /// `repaint` is called whenever events are sent.
    pub fn start(
        &mut self,
        mut run: Box<Run>,
        repaint: impl Fn() + Send + 'static,
    ) -> Result<u64, StartError> {
        if self.is_running() {
            return Err(StartError::Busy(run));
        }
        let id = self.next_id;
        self.next_id += 1;
        let interrupt = Arc::new(Interrupt::new());
        let tx = self.tx.clone();
        let flag = Arc::clone(&interrupt);
        let handle = std::thread::Builder::new()
            .name(format!("lamina-run-{id}"))
            .spawn(move || {
                let started = Instant::now();
                let mut sink = ChannelSink {
                    job: id,
                    tx: tx.clone(),
                    repaint: Box::new(repaint),
                    batch: Batch::default(),
                    last_sent: Instant::now(),
                    n_steps: run.stats().n_accepted,
                    calls: 0,
                };
                let outcome = run.execute(&mut sink, &flag);
                sink.flush();
                let _ = tx.send(WorkerEvent::Finished {
                    job: id,
                    run,
                    outcome,
                    elapsed: started.elapsed(),
                });
                (sink.repaint)();
            });
        match handle {
            Ok(handle) => {
                self.current = Some(Job {
                    id,
                    interrupt,
                    handle,
                });
                Ok(id)
            }
            Err(err) => Err(StartError::Thread(err.to_string())),
        }
    }

    /// Asks the running job to stop; it does so within a step.
    pub fn stop(&self) {
        if let Some(job) = &self.current {
            job.interrupt.raise();
        }
    }

    /// Every event that has arrived.
    pub fn drain(&mut self) -> Vec<WorkerEvent> {
        let events: Vec<WorkerEvent> = self.rx.try_iter().collect();
        if events.iter().any(
            |e| matches!(e, WorkerEvent::Finished { job, .. } if Some(*job) == self.current_job()),
        ) {
            self.current = None;
        }
        events
    }
}
