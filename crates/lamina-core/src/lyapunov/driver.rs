//! The exponent run: settle without tangent vectors, then integrate the variational
//! equations over the span, re-orthonormalising the tangent vectors (QR) as they stretch and
//! averaging the logarithms of the diagonal of R (Benettin's method).

use std::ops::ControlFlow;

use super::chatter::ChatterWatch;
use super::qr::{longest_column, orthonormalise};
use super::result::{ExponentSink, Spectrum};
use super::sampling::SampledTrace;
use super::summary::{Verdict, classify, kaplan_yorke, settled_spectrum, unless_moving};
use super::tangent::{Tangent, tilted_axes};
use super::{ExponentError, ExponentSettings};
use crate::integrate::{Integrator, Interrupt, Method, Rates, Stats, StepControl, TangentLayout};
use crate::memory;
use crate::model::Model;
use crate::run::{RunSpec, StopReason, check_time_resolution, stop_reason};
use crate::switching::{SwitchedStepError, SwitchedTangent, Switching};

/// How often progress is reported, in accepted steps.
const PROGRESS_EVERY_STEPS: u64 = 256;

/// Computes Lyapunov exponents of `model` over `run`'s window: the full spectrum, or the
/// largest ones as `settings.count` says.
///
/// The settle time is integrated without tangent vectors. Over the span, `x' = f(t, x)` is
/// integrated together with `m` tangent vectors `q' = J q` (Benettin et al. 1980; Shimada &
/// Nagashima 1979), starting from fixed tilted coordinate axes made orthonormal. After each
/// step the vectors are orthonormalised on the side (modified Gram–Schmidt); the running
/// estimate of exponent `i` is the sum of `ln R_ii` over the QRs so far plus that of the side
/// QR, divided by the time since the settle. When a vector has grown or shrunk by more than
/// `settings.growth_limit` the side QR is made the state (the QR re-orthonormalisation) and
/// the integrator restarts from it, keeping its step size.
///
/// For a model that uses `t`, the `n` exponents of the states are computed; the time
/// direction's zero is not listed (`time_direction_omitted`). Rates that jump with the
/// state (`sign`, `step`, `floor`, ...) are integrated with their switches held and located
/// (as in runs), and at every switch the tangent vectors jump by the saltation matrix
/// (Müller 1995; see [`SwitchedTangent`]). A switch that the flow does not cross
/// transversally has no saltation matrix: the exponents then leave out the stretching there,
/// and the result says so (`rates_jump`, `n_not_transversal`), as for a jump that is not a
/// switch (`%`).
///
/// Cancellation: `interrupt` is checked once per step. Numerical trouble (a state beyond
/// `run.escape`, a value not finite, a collapsing step) ends the run with its reason and
/// time; the estimates up to the last good step are returned.
///
/// # Errors
/// [`ExponentError`] when the count, the window or the settings cannot be used.
pub fn spectrum(
    model: Model,
    run: &RunSpec,
    settings: &ExponentSettings,
    sink: &mut dyn ExponentSink,
    interrupt: &Interrupt,
) -> Result<Spectrum, ExponentError> {
    let n = model.dim();
    let m = settings.count.unwrap_or(n);
    check(n, m, run, settings)?;
    let bytes = workspace_bytes(n, m, run.method);
    if !memory::can_allocate(bytes) {
        return Err(ExponentError::TooLarge {
            bytes,
            n_states: n,
            n_exponents: m,
        });
    }
    let mut work = Work::new(model, m, run, settings);
    let reason = work
        .settle(sink, interrupt)
        .unwrap_or_else(|| work.average(sink, interrupt));
    Ok(work.finish(reason, settings))
}

/// Bytes of working memory an exponent run of `n_states` states with `n_exponents` tangent
/// vectors needs with `method`: the integrator of the variational equations
/// (`n + n m` values per vector; the stiff method's matrices are the model's `n x n`), the
/// state and its orthonormalised copy, and the model's Jacobian. The settle time's integrator
/// of the model alone is freed before.
pub fn workspace_bytes(n_states: usize, n_exponents: usize, method: Method) -> u64 {
    let (n, m) = (n_states as u64, n_exponents as u64);
    let dim = n_states.saturating_add(n_states.saturating_mul(n_exponents));
    let integrator = Integrator::workspace_bytes(method, dim, n_states);
    let vectors = (n + 2 * n * m) * 8;
    let jacobian = n * n * 8;
    integrator.saturating_add(vectors).saturating_add(jacobian)
}

/// Refuses settings that cannot run.
fn check(
    n: usize,
    m: usize,
    run: &RunSpec,
    settings: &ExponentSettings,
) -> Result<(), ExponentError> {
    if m == 0 || m > n {
        return Err(ExponentError::Count {
            requested: m,
            n_states: n,
        });
    }
    let window_ok = run.t_start.is_finite()
        && run.settle.is_finite()
        && run.settle >= 0.0
        && run.span.is_finite()
        && run.span > 0.0
        && run.t_end().is_finite();
    if !window_ok {
        return Err(ExponentError::Window {
            t_start: run.t_start,
            settle: run.settle,
            span: run.span,
        });
    }
    check_time_resolution(run, None).map_err(ExponentError::TimeTooCoarse)?;
    if !(settings.growth_limit.is_finite() && settings.growth_limit > 1.0) {
        return Err(ExponentError::GrowthLimit(settings.growth_limit));
    }
    if !(settings.tail_fraction > 0.0 && settings.tail_fraction <= 1.0) {
        return Err(ExponentError::TailFraction(settings.tail_fraction));
    }
    Ok(())
}

/// The state of one exponent run.
struct Work {
    tangent: Tangent,
    n: usize,
    m: usize,
    run: RunSpec,
    growth_limit: f64,
    /// State at the end of the settle time (then the state of the latest good step).
    x: Vec<f64>,
    /// Time of `x`.
    t: f64,
    /// Sum of `ln R_ii` over the QRs made.
    log_sums: Vec<f64>,
    /// Running estimates at the latest good step.
    estimates: Vec<f64>,
    samples: SampledTrace,
    stats: Stats,
    n_steps: u64,
    n_qr: u64,
    /// The model's switches, watched for a sliding mode (`None` without switches).
    chatter: Option<ChatterWatch>,
    /// Over the span, the held rates of a model with switches and the tangent vectors,
    /// carried through the switches with the saltation matrix.
    switched: Option<SwitchedTangent>,
    /// Start of the tail of the span, the state's path since then, and the largest state
    /// magnitude over the span (a moving state is never read as at rest).
    tail_start: f64,
    tail_path: f64,
    size: f64,
}

impl Work {
    fn new(model: Model, m: usize, run: &RunSpec, settings: &ExponentSettings) -> Self {
        let n = model.dim();
        let x = model.start().to_vec();
        let chatter = ChatterWatch::new(&model);
        Self {
            chatter,
            tangent: Tangent::new(model, m),
            n,
            m,
            run: run.clone(),
            growth_limit: settings.growth_limit,
            x,
            t: run.t_start,
            log_sums: vec![0.0; m],
            estimates: vec![f64::NAN; m],
            samples: SampledTrace::new(m, run.t_record(), run.span, settings.trace_samples),
            stats: Stats::default(),
            n_steps: 0,
            n_qr: 0,
            switched: None,
            tail_start: run.t_record() + (1.0 - settings.tail_fraction) * run.span,
            tail_path: 0.0,
            size: 0.0,
        }
    }

    /// Fraction of the whole run done at `t`.
    fn fraction(&self, t: f64) -> f64 {
        fraction_done(&self.run, t)
    }

    /// Integrates the settle time without tangent vectors; a reason if the run ends in it.
    fn settle(&mut self, sink: &mut dyn ExponentSink, interrupt: &Interrupt) -> Option<StopReason> {
        if let Some(reason) = check_state(self.run.escape, self.t, &self.x) {
            return Some(reason);
        }
        let t_record = self.run.t_record();
        if self.t >= t_record {
            return None;
        }
        let escape = self.run.escape;
        let model = self.tangent.model_mut();
        let mut integrator = Integrator::new(self.run.method, self.run.control, self.n);
        integrator.reset(model, self.t, &self.x);
        let reason = loop {
            let t = integrator.t();
            if t >= t_record {
                break None;
            }
            if interrupt.is_raised() {
                break Some(StopReason::Cancelled { t });
            }
            if let Err(err) = integrator.step_lazy(model, t_record) {
                break Some(stop_reason(&self.run, err));
            }
            self.n_steps += 1;
            let t1 = integrator.t();
            if let Some(reason) = check_state(escape, t1, integrator.x()) {
                break Some(reason);
            }
            if let Some(t) = self
                .chatter
                .as_mut()
                .and_then(|watch| watch.observe(model, &self.run, t1, integrator.x()))
            {
                break Some(StopReason::Chattering { t });
            }
            if self.n_steps.is_multiple_of(PROGRESS_EVERY_STEPS) {
                sink.progress(t1, fraction_done(&self.run, t1));
            }
        };
        self.t = integrator.t();
        self.x.copy_from_slice(integrator.x());
        add_stats(&mut self.stats, integrator.stats());
        reason
    }

    /// Integrates the span with the tangent vectors; the reason the run ended.
    fn average(&mut self, sink: &mut dyn ExponentSink, interrupt: &Interrupt) -> StopReason {
        let (n, m) = (self.n, self.m);
        let (t_record, t_end) = (self.run.t_record(), self.run.t_end());
        let mut y = vec![0.0; n + n * m];
        y[..n].copy_from_slice(&self.x);
        tilted_axes(n, m, &mut y[n..]);
        let mut diagonal = vec![0.0; m];
        if !orthonormalise(&mut y[n..], n, &mut diagonal) {
            return StopReason::NotFinite { t: self.t };
        }
        let mut side = y[n..].to_vec();
        let mut integrator = Integrator::new(self.run.method, self.run.control, y.len());
        self.switched = Switching::new(self.tangent.model(), t_record, &self.x)
            .map(|switching| SwitchedTangent::new(switching, TangentLayout::vectors(n, m)));
        match &mut self.switched {
            Some(switched) => integrator.reset(switched, t_record, &y),
            None => integrator.reset(&mut self.tangent, t_record, &y),
        }
        let reason = loop {
            let t = integrator.t();
            if t >= t_end {
                break StopReason::Finished;
            }
            if interrupt.is_raised() {
                break StopReason::Cancelled { t };
            }
            // the estimates use the step ends only: no dense output (but at switches)
            let stepped = match &mut self.switched {
                Some(switched) => switched.step(&mut integrator, t_end).map(|_| ()),
                None => integrator
                    .step_lazy(&mut self.tangent, t_end)
                    .map_err(SwitchedStepError::Step),
            };
            match stepped {
                Ok(()) => {}
                Err(SwitchedStepError::Step(err)) => break stop_reason(&self.run, err),
                Err(SwitchedStepError::Chattering(chattering)) => {
                    break StopReason::Chattering { t: chattering.t };
                }
            }
            self.n_steps += 1;
            let t1 = integrator.t();
            let (x, vectors) = integrator.x().split_at(n);
            if let Some(reason) = check_state(self.run.escape, t1, x) {
                break reason;
            }
            // (held switches report chattering themselves)
            let model = self.tangent.model();
            let watch = self.chatter.as_mut().filter(|_| self.switched.is_none());
            if let Some(t) = watch.and_then(|watch| watch.observe(model, &self.run, t1, x)) {
                break StopReason::Chattering { t };
            }
            side.copy_from_slice(vectors);
            let longest = longest_column(&side, n);
            if !orthonormalise(&mut side, n, &mut diagonal) {
                break StopReason::NotFinite { t: t1 };
            }
            if t1 > self.tail_start {
                let step: f64 = x.iter().zip(&self.x).map(|(a, b)| (a - b) * (a - b)).sum();
                self.tail_path += step.sqrt();
            }
            let magnitude = x.iter().map(|v| v * v).sum::<f64>().sqrt();
            self.size = self.size.max(magnitude);
            self.t = t1;
            self.x.copy_from_slice(x);
            let elapsed = t1 - t_record;
            for ((estimate, sum), r) in self.estimates.iter_mut().zip(&self.log_sums).zip(&diagonal)
            {
                *estimate = (sum + r.ln()) / elapsed;
            }
            if self.samples.is_due(t1, t_end) && self.sample(sink, t1).is_break() {
                break StopReason::SinkStopped { t: t1 };
            }
            let stretched = longest > self.growth_limit
                || diagonal.iter().any(|&r| r * self.growth_limit < 1.0);
            if stretched {
                for (sum, r) in self.log_sums.iter_mut().zip(&diagonal) {
                    *sum += r.ln();
                }
                y[..n].copy_from_slice(&self.x);
                y[n..].copy_from_slice(&side);
                integrator = self.restart(integrator, &y);
                self.n_qr += 1;
            }
            if self.n_steps.is_multiple_of(PROGRESS_EVERY_STEPS) {
                sink.progress(t1, self.fraction(t1));
            }
        };
        add_stats(&mut self.stats, integrator.stats());
        if reason == StopReason::Finished {
            sink.progress(t_end, 1.0);
        }
        reason
    }

    /// Records a trace sample at `t` and passes it to the sink.
    fn sample(&mut self, sink: &mut dyn ExponentSink, t: f64) -> ControlFlow<()> {
        self.samples.push(t, &self.estimates);
        sink.estimate(t, &self.estimates)
    }

    /// A fresh integrator at the re-orthonormalised state `y`, starting with the step size
    /// the old one proposed (the controller's history is lost, the step size kept).
    fn restart(&mut self, old: Integrator, y: &[f64]) -> Integrator {
        add_stats(&mut self.stats, old.stats());
        let h = old.h_next();
        // freed before the new one is made: the two together would double the memory
        drop(old);
        let control = StepControl {
            initial_step: (h > 0.0 && h.is_finite()).then_some(h),
            ..self.run.control
        };
        let mut integrator = Integrator::new(self.run.method, control, y.len());
        match &mut self.switched {
            Some(switched) => integrator.reset(switched, self.t, y),
            None => integrator.reset(&mut self.tangent, self.t, y),
        }
        integrator
    }

    /// The result, with a last trace sample at the time reached when the run stopped early.
    fn finish(mut self, reason: StopReason, settings: &ExponentSettings) -> Spectrum {
        let t_record = self.run.t_record();
        let averaged = self.t > t_record;
        self.samples.close(self.t, &self.estimates);
        let spread = self.samples.spread(settings.tail_fraction);
        let model = self.tangent.model_mut();
        let omitted = model.uses_time();
        let (n_saltations, n_not_transversal) = self
            .switched
            .as_ref()
            .map_or((0, 0), |s| (s.n_saltations(), s.n_not_transversal()));
        // the jumps are left out where no saltation matrix carried the tangent vectors
        let rates_jump = model.program().jumps_with_states()
            && (self.switched.is_none() || n_not_transversal > 0);
        let n_states = self.n;
        // only a run that finished its span is read: one that escaped grew without bound,
        // any other that ended early is undecided (its estimates are kept, unread)
        let finished = reason == StopReason::Finished;
        let verdict = match reason {
            StopReason::Finished => unless_moving(
                classify(&self.estimates, &spread, n_states, omitted),
                self.tail_path,
                self.size,
            ),
            StopReason::Escaped { .. } => Verdict::Unbounded,
            _ => Verdict::Undecided,
        };
        let complete = self.m == n_states;
        // an undecided verdict gives no dimension either: its exponents are not resolved
        let kaplan_yorke = if averaged && finished && verdict != Verdict::Undecided {
            let settled = settled_spectrum(&self.estimates, &spread, omitted);
            match kaplan_yorke(&settled) {
                None if complete && settled.iter().all(|l| l.is_finite()) => {
                    Some(settled.len() as f64)
                }
                other => other,
            }
        } else {
            None
        };
        Spectrum {
            exponents: self.estimates,
            spread,
            time: (self.t - t_record).max(0.0),
            t_end: self.t,
            n_states,
            time_direction_omitted: omitted,
            rates_jump,
            n_saltations,
            n_not_transversal,
            kaplan_yorke,
            verdict,
            trace: self.samples.into_trace(),
            reason,
            stats: self.stats,
            n_reorthonormalisations: self.n_qr,
        }
    }
}

/// Fraction of the whole run (settle and span) done at `t`.
fn fraction_done(run: &RunSpec, t: f64) -> f64 {
    ((t - run.t_start) / (run.t_end() - run.t_start)).clamp(0.0, 1.0)
}

/// Escape and non-finite checks of the model's state `x` at `t`.
fn check_state(escape: f64, t: f64, x: &[f64]) -> Option<StopReason> {
    if x.iter().any(|v| !v.is_finite()) {
        return Some(StopReason::NotFinite { t });
    }
    if x.iter().any(|v| v.abs() > escape) {
        return Some(StopReason::Escaped { t, escape });
    }
    None
}

/// Adds the work counters of `more` to `total`.
fn add_stats(total: &mut Stats, more: Stats) {
    total.n_rate_evaluations += more.n_rate_evaluations;
    total.n_accepted += more.n_accepted;
    total.n_rejected += more.n_rejected;
}
