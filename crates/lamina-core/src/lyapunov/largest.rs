//! The largest Lyapunov exponent from one tangent vector that a run carries along with the
//! model over its recorded window ([`crate::run::Run::carry_tangent`]): the running estimate
//! and its spread as [`super::spectrum`] gives them for one vector, with the vector rescaled
//! (the one-vector QR) when it has grown or shrunk past the growth limit.

use super::ExponentSettings;
use super::qr::orthonormalise;
use super::sampling::SampledTrace;
use super::tangent::tilted_axes;

/// The largest exponent estimated from one tangent vector over a run's recorded window.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LargestExponent {
    /// The estimate at the time reached, in 1 / time units (not a number before any step).
    pub value: f64,
    /// The largest minus the smallest running estimate over the last
    /// [`ExponentSettings::tail_fraction`] of the averaging time (not a number when too few
    /// samples lie there), as [`super::Spectrum::spread`].
    pub spread: f64,
    /// The averaging time: from the start of the recorded window to the time reached.
    pub time: f64,
    /// How often the vector was rescaled to unit length.
    pub n_rescales: u64,
}

/// The running estimate of one tangent vector.
#[derive(Clone, Debug)]
pub(crate) struct OneVector {
    n: usize,
    growth_limit: f64,
    tail_fraction: f64,
    /// Start of the averaging.
    t_from: f64,
    /// End of the span (where a last sample is due).
    t_end: f64,
    /// Sum of the logarithms of the rescaling factors' inverses (the vector's lengths).
    log_sum: f64,
    /// The vector's length at the latest step (after its rescaling, if any).
    length: f64,
    /// Time of the latest step.
    t: f64,
    samples: SampledTrace,
    n_rescales: u64,
}

impl OneVector {
    /// An estimate for `n` states averaged from `t_from` over `span`, with the growth limit,
    /// trace samples and tail fraction of `settings`.
    pub(crate) fn new(n: usize, t_from: f64, span: f64, settings: &ExponentSettings) -> Self {
        Self {
            n,
            growth_limit: settings.growth_limit,
            tail_fraction: settings.tail_fraction,
            t_from,
            t_end: t_from + span,
            log_sum: 0.0,
            length: 1.0,
            t: t_from,
            samples: SampledTrace::new(1, t_from, span, settings.trace_samples),
            n_rescales: 0,
        }
    }

    /// Writes the starting vector into `out` (`n` values): the first tilted axis of
    /// [`super::spectrum`], at unit length.
    pub(crate) fn start(&self, out: &mut [f64]) {
        tilted_axes(self.n, 1, out);
        // a tilted axis is never zero
        let _ = orthonormalise(out, self.n, &mut [0.0]);
    }

    /// Takes the vector `q` at the end of a step at `t` (sampling the running estimate when a
    /// sample is due) and returns the factor to scale the vector by when it has grown or
    /// shrunk past the growth limit (its length is then added to the sum). `None` in the
    /// factor's place when no rescaling is due; `Err(())` when the vector is not finite or has
    /// vanished.
    pub(crate) fn observe(&mut self, t: f64, q: &[f64]) -> Result<Option<f64>, ()> {
        let length = q.iter().map(|v| v * v).sum::<f64>().sqrt();
        if !(length.is_finite() && length > 0.0) {
            return Err(());
        }
        self.t = t;
        self.length = length;
        // the logarithm only where the estimate is read: at samples and rescalings
        if self.samples.is_due(t, self.t_end) {
            let estimate = self.estimate();
            self.samples.push(t, &[estimate]);
        }
        let stretched = length > self.growth_limit || length * self.growth_limit < 1.0;
        if !stretched {
            return Ok(None);
        }
        self.log_sum += length.ln();
        self.length = 1.0;
        self.n_rescales += 1;
        Ok(Some(1.0 / length))
    }

    /// The running estimate at the latest step: the logarithm of the vector's growth since
    /// the start over the time since the start (not a number before any step).
    fn estimate(&self) -> f64 {
        (self.log_sum + self.length.ln()) / (self.t - self.t_from)
    }

    /// The estimate at the latest step, with its spread.
    pub(crate) fn result(&self) -> LargestExponent {
        let estimate = if self.t > self.t_from {
            self.estimate()
        } else {
            f64::NAN
        };
        let mut samples = self.samples.clone();
        samples.close(self.t, &[estimate]);
        LargestExponent {
            value: estimate,
            spread: samples.spread(self.tail_fraction)[0],
            time: self.t - self.t_from,
            n_rescales: self.n_rescales,
        }
    }
}
