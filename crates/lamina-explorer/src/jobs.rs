//! The one way the window runs background work. Every job (a run, a sweep, an orbit search,
//! the exponents, a PNG export, a file dialog) is a named thread with an id, the document
//! revision it was started for, a stop flag (the core's [`Interrupt`]), a channel for
//! progress and one for its result. Dropping a job raises its stop flag; a job whose thread
//! ends without a result (it panicked) polls as [`Poll::Lost`], never as running for ever.
//!
//! This module knows nothing of egui: the caller hands in a [`Waker`] that asks for a frame.

use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::mpsc::{Receiver, Sender, TryRecvError, channel};

use lamina_core::Interrupt;

use crate::vocabulary::JobKind;

/// Asks the window for a new frame; called by a job whenever it sends something and when its
/// thread ends (also by a panic).
pub type Waker = Arc<dyn Fn() + Send + Sync>;

/// A waker that does nothing (before the window has a context, and in tests of the session).
pub fn no_waker() -> Waker {
    Arc::new(|| {})
}

/// A job's number, unique in the process.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct JobId(pub u64);

static NEXT_ID: AtomicU64 = AtomicU64::new(1);

/// Why a job did not start.
#[derive(Debug, thiserror::Error)]
#[error("cannot start the {kind}: {source}")]
pub struct StartError {
    /// The job.
    pub kind: JobKind,
    /// What the operating system said.
    pub source: std::io::Error,
}

/// What a job's thread uses to send progress (each send asks for a frame).
pub struct Reporter<P> {
    tx: Sender<P>,
    waker: Waker,
}

impl<P> Reporter<P> {
    /// Sends `progress` to the window; ignored once the window has let the job go.
    pub fn send(&self, progress: P) {
        let _ = self.tx.send(progress);
        (self.waker)();
    }
}

/// Calls the waker when the thread ends, by return or by panic.
struct WakeOnExit(Waker);

impl Drop for WakeOnExit {
    fn drop(&mut self) {
        (self.0)();
    }
}

/// Where a job stands.
#[derive(Debug)]
pub enum Poll<T> {
    /// Still working.
    Running,
    /// Done, with its result.
    Done(T),
    /// The thread ended without a result (it panicked).
    Lost,
}

/// A background job with progress of type `P` and a result of type `T`.
pub struct Job<P, T> {
    /// Its number.
    pub id: JobId,
    /// What it does.
    pub kind: JobKind,
    /// The document revision it was started for.
    pub revision: u64,
    interrupt: Arc<Interrupt>,
    progress: Receiver<P>,
    result: Receiver<T>,
}

impl<P: Send + 'static, T: Send + 'static> Job<P, T> {
    /// Starts `work` on a thread named after `kind`. `work` gets the reporter for progress
    /// and the stop flag, and returns the result.
    pub fn spawn(
        kind: JobKind,
        revision: u64,
        waker: Waker,
        work: impl FnOnce(&Reporter<P>, Arc<Interrupt>) -> T + Send + 'static,
    ) -> Result<Self, StartError> {
        let id = JobId(NEXT_ID.fetch_add(1, Ordering::Relaxed));
        let interrupt = Arc::new(Interrupt::new());
        let (progress_tx, progress) = channel();
        let (result_tx, result) = channel();
        let flag = Arc::clone(&interrupt);
        std::thread::Builder::new()
            .name(format!("lamina-{}-{}", kind.thread_name(), id.0))
            .spawn(move || {
                let _wake = WakeOnExit(Arc::clone(&waker));
                let reporter = Reporter {
                    tx: progress_tx,
                    waker,
                };
                let value = work(&reporter, flag);
                let _ = result_tx.send(value);
            })
            .map_err(|source| StartError { kind, source })?;
        Ok(Self {
            id,
            kind,
            revision,
            interrupt,
            progress,
            result,
        })
    }
}

impl<P, T> Job<P, T> {
    /// Asks the job to stop; it does so at its next check of the flag.
    pub fn cancel(&self) {
        self.interrupt.raise();
    }

    /// Its name and number for messages: `orbit search #4`.
    pub fn label(&self) -> String {
        format!("{} #{}", self.kind, self.id.0)
    }

    /// Every progress message that has arrived.
    pub fn progress(&self) -> Vec<P> {
        self.progress.try_iter().collect()
    }

    /// The result, if it has arrived; [`Poll::Lost`] if the thread ended without one.
    pub fn poll(&self) -> Poll<T> {
        match self.result.try_recv() {
            Ok(value) => Poll::Done(value),
            Err(TryRecvError::Empty) => Poll::Running,
            Err(TryRecvError::Disconnected) => Poll::Lost,
        }
    }
}

impl<P, T> Drop for Job<P, T> {
    /// A job the window lets go of is stopped.
    fn drop(&mut self) {
        self.interrupt.raise();
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn wait<T>(job: &Job<u32, T>) -> Poll<T> {
        // up to a minute: a panicking thread prints its backtrace first, which takes seconds
        // in a debug build on a busy machine
        for _ in 0..30_000 {
            match job.poll() {
                Poll::Running => std::thread::sleep(std::time::Duration::from_millis(2)),
                other => return other,
            }
        }
        Poll::Running
    }

    #[test]
    fn a_job_reports_progress_then_its_result() {
        let job = Job::spawn(JobKind::Run, 3, no_waker(), |r: &Reporter<u32>, _| {
            r.send(1);
            r.send(2);
            7
        })
        .expect("a thread");
        assert!(matches!(wait(&job), Poll::Done(7)));
        assert_eq!(job.progress(), [1, 2]);
        assert_eq!(job.revision, 3);
    }

    #[test]
    fn a_cancelled_job_sees_its_flag() {
        let job = Job::spawn(
            JobKind::OrbitSearch,
            0,
            no_waker(),
            |_: &Reporter<u32>, flag| {
                while !flag.is_raised() {
                    std::thread::sleep(std::time::Duration::from_millis(1));
                }
                "stopped"
            },
        )
        .expect("a thread");
        job.cancel();
        assert!(matches!(wait(&job), Poll::Done("stopped")));
    }

    #[test]
    fn a_job_that_panics_is_lost_not_running() {
        let job = Job::spawn(
            JobKind::Exponents,
            0,
            no_waker(),
            |_: &Reporter<u32>, _| -> u32 { panic!("a deliberate panic in a test job") },
        )
        .expect("a thread");
        assert!(matches!(wait(&job), Poll::Lost));
    }
}
