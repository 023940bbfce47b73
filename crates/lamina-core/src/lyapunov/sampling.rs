//! The samples of the running estimates kept over an exponent run: evenly spread over the
//! span plus the last one, from which the spread (the error indication) is taken. Shared by
//! the spectrum run and the one tangent vector a run carries.

use super::summary::Trace;

/// The trace of running estimates with its sampling schedule.
#[derive(Clone, Debug)]
pub(crate) struct SampledTrace {
    trace: Trace,
    /// Start of the averaging.
    t_from: f64,
    /// Time between samples.
    every: f64,
    /// Time of the next sample.
    next: f64,
}

impl SampledTrace {
    /// A trace of `m` estimates averaged from `t_from` over `span`, sampled `samples` times
    /// (at least once).
    pub(crate) fn new(m: usize, t_from: f64, span: f64, samples: usize) -> Self {
        let every = span / samples.max(1) as f64;
        Self {
            trace: Trace::new(m),
            t_from,
            every,
            next: t_from + every,
        }
    }

    /// Whether the estimates at `t` are to be sampled: a sample time has been reached, or
    /// `t` is the end of the span `t_end`.
    pub(crate) fn is_due(&self, t: f64, t_end: f64) -> bool {
        t >= self.next || t >= t_end
    }

    /// Records the estimates at `t` and moves the next sample time past it.
    pub(crate) fn push(&mut self, t: f64, estimates: &[f64]) {
        self.trace.push(t, estimates);
        while self.next <= t {
            self.next += self.every;
        }
    }

    /// Records a last sample at `t` (the time reached) unless the trace already ends there;
    /// nothing when no time was averaged.
    pub(crate) fn close(&mut self, t: f64, estimates: &[f64]) {
        if t > self.t_from && self.trace.t.last().is_none_or(|&last| last < t) {
            self.trace.push(t, estimates);
        }
    }

    /// The spread of each estimate over the last `tail_fraction` of the averaging time
    /// ([`Trace::spread`]).
    pub(crate) fn spread(&self, tail_fraction: f64) -> Vec<f64> {
        self.trace.spread(self.t_from, tail_fraction)
    }

    /// The samples.
    pub(crate) fn into_trace(self) -> Trace {
        self.trace
    }
}
