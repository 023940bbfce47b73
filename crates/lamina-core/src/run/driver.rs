//! The run driver: steps the integrator over the time window and reports to a sink.

use std::ops::ControlFlow;

use super::{CutPoint, StrobeSample};
use crate::integrate::Stats;

/// Receives what a run finds. Returning `ControlFlow::Break` stops the run at once.
pub trait Sink {
    /// A recorded cut point.
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        let _ = point;
        ControlFlow::Continue(())
    }
    /// A recorded strobe sample.
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        let _ = sample;
        ControlFlow::Continue(())
    }
    /// Progress: the current time and the fraction of the whole run done.
    fn progress(&mut self, t: f64, fraction: f64) {
        let _ = (t, fraction);
    }
}

/// Why a run ended.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum StopReason {
    /// Reached the end of the time window.
    Finished,
    /// The interrupt flag was raised.
    Cancelled {
        /// Time reached.
        t: f64,
    },
    /// A state's magnitude exceeded the bound.
    Escaped {
        /// Time of the escape.
        t: f64,
    },
    /// A value became NaN or infinite.
    NotFinite {
        /// Time of the last good state.
        t: f64,
    },
    /// The step size collapsed.
    StepTooSmall {
        /// Time where it happened.
        t: f64,
    },
    /// The point limit was reached.
    PointLimit {
        /// Time of the last point.
        t: f64,
    },
    /// The sink asked to stop (for example after `--count` points).
    SinkStopped {
        /// Time of the last point.
        t: f64,
    },
}

/// What a run did.
#[derive(Clone, Debug, PartialEq)]
pub struct RunOutcome {
    /// Why it ended.
    pub reason: StopReason,
    /// Integrator work.
    pub stats: Stats,
    /// Time reached.
    pub t_reached: f64,
    /// State at `t_reached`.
    pub final_state: Vec<f64>,
    /// Cut points recorded.
    pub n_cut_points: usize,
    /// Strobe samples recorded.
    pub n_strobe_samples: usize,
}

/// A run in progress or done (filled in with the driver).
pub struct Run {}

/// Placeholder for the run entry point (filled in with the driver).
pub fn run() {}
