//! The sweep worker: runs a parameter sweep on a background thread (the values themselves in
//! parallel on rayon's pool when restarting) and streams each finished value to the UI.

use std::ops::ControlFlow;
use std::sync::Arc;
use std::sync::mpsc::{Receiver, Sender, channel};
use std::thread::JoinHandle;

use lamina_core::Interrupt;
use lamina_core::model::Model;
use lamina_core::run::{Cut, RunSpec, Strobe, StrobeSpec};
use lamina_core::sweep::{SweepColumn, SweepSpec, sweep_follow, sweep_restart};

/// What the sweep worker reports.
pub enum SweepEvent {
    /// One value is done.
    Column(SweepColumn),
    /// The sweep ended (all values, stopped, or refused with a message).
    Finished {
        /// Why it could not run, if it could not.
        error: Option<String>,
    },
}

/// Everything a sweep needs, moved to the worker.
pub struct SweepJob {
    /// The model at the scenario's values.
    pub model: Model,
    /// Integrator and limits.
    pub run: RunSpec,
    /// The cut, if any.
    pub cut: Option<Cut>,
    /// The strobe as typed (compiled again per value: its period may use the parameter).
    pub strobe: Option<StrobeSpec>,
    /// The sweep.
    pub spec: SweepSpec,
}

/// Runs one sweep at a time.
pub struct SweepWorker {
    tx: Sender<SweepEvent>,
    rx: Receiver<SweepEvent>,
    current: Option<(Arc<Interrupt>, JoinHandle<()>)>,
}

impl Default for SweepWorker {
    fn default() -> Self {
        let (tx, rx) = channel();
        Self {
            tx,
            rx,
            current: None,
        }
    }
}

impl SweepWorker {
    /// Whether a sweep is going.
    pub fn is_running(&self) -> bool {
        self.current.as_ref().is_some_and(|(_, h)| !h.is_finished())
    }

    /// Starts `job`; refused (false) while one runs.
    pub fn start(&mut self, job: SweepJob, repaint: impl Fn() + Send + Sync + 'static) -> bool {
        if self.is_running() {
            return false;
        }
        let interrupt = Arc::new(Interrupt::new());
        let flag = Arc::clone(&interrupt);
        let tx = self.tx.clone();
        let handle = std::thread::Builder::new()
            .name("lamina-sweep".into())
            .spawn(move || {
                let SweepJob {
                    model,
                    run,
                    cut,
                    strobe,
                    spec,
                } = job;
                let strobe_for =
                    move |m: &Model| strobe.as_ref().and_then(|s| Strobe::compile(s, m).ok());
                let indices: Vec<usize> = (0..spec.n_values()).collect();
                let result = if spec.follow {
                    sweep_follow(
                        &model,
                        &run,
                        cut.as_ref(),
                        &strobe_for,
                        &spec,
                        &indices,
                        &flag,
                        &mut |c| {
                            let _ = tx.send(SweepEvent::Column(c.clone()));
                            repaint();
                            ControlFlow::Continue(())
                        },
                    )
                } else {
                    let sender = std::sync::Mutex::new(tx.clone());
                    sweep_restart(
                        &model,
                        &run,
                        cut.as_ref(),
                        &strobe_for,
                        &spec,
                        &indices,
                        &flag,
                        &|c| {
                            if let Ok(s) = sender.lock() {
                                let _ = s.send(SweepEvent::Column(c.clone()));
                            }
                            repaint();
                        },
                    )
                    .map(|_| ())
                };
                let _ = tx.send(SweepEvent::Finished {
                    error: result.err().map(|e| e.to_string()),
                });
                repaint();
            });
        match handle {
            Ok(h) => {
                self.current = Some((interrupt, h));
                true
            }
            Err(_) => false,
        }
    }

    /// Asks the sweep to stop.
    pub fn stop(&self) {
        if let Some((flag, _)) = &self.current {
            flag.raise();
        }
    }

    /// Every event that arrived.
    pub fn drain(&mut self) -> Vec<SweepEvent> {
        self.rx.try_iter().collect()
    }
}
