//! The adaptive stepper: one accepted step per call, with its dense output.

use super::controller::{StepRule, initial_step};
use super::stepper::Stepper;
use super::stiffness::{MethodChange, StiffnessWatch};
use super::{DenseSegment, ErrorScale, Method, Rates, Stats, StepControl, StepError, copy_values};

/// Smallest step allowed regardless of `t` (a step below the floating-point resolution of `t`
/// is refused separately).
const ABSOLUTE_MIN_STEP: f64 = 1e-300;
/// How often in a row a step may be shrunk because of non-finite values before giving up.
const MAX_NON_FINITE_RETRIES: u32 = 12;
/// Step reduction after an attempt that produced non-finite values.
const NON_FINITE_SHRINK: f64 = 0.25;

/// An adaptive integrator of any [`Method`], stepping one accepted step at a time.
///
/// With [`Method::Automatic`] it holds both DOP853 and Rodas4, starts with DOP853 and changes
/// between them after accepted steps (see [`Integrator::take_method_change`]); every step's
/// dense output then has DOP853's eight terms.
///
/// Time runs forward only. After every successful [`Integrator::step`] or
/// [`Integrator::step_fixed`], [`Integrator::segment`] holds the dense output of that step.
/// [`Integrator::step_lazy`] takes the same step without building the dense output (for
/// DOP853 that saves three of its fifteen rate evaluations per step);
/// [`Integrator::ensure_dense`] builds it afterwards, for that step, when it is wanted.
/// All vectors are allocated in [`Integrator::new`] (and again in [`Integrator::reset`] only
/// if the state length changes); the stiff method's matrices are allocated at its first
/// Jacobian (their size depends on the rates: see [`Rates::tangent_layout`]); stepping
/// allocates nothing else.
#[derive(Clone, Debug)]
pub struct Integrator {
    pub(super) method: Method,
    pub(super) control: StepControl,
    pub(super) t: f64,
    pub(super) x: Vec<f64>,
    /// State at the start of the last step.
    pub(super) x_start: Vec<f64>,
    /// Whether `segment` holds the complete dense output of the last step.
    pub(super) dense_ready: bool,
    /// Proposed size of the next step; meaningful when `h_chosen`.
    pub(super) h: f64,
    pub(super) h_chosen: bool,
    /// Whether the stepper's first stage holds `f(t, x)`.
    pub(super) f0_valid: bool,
    /// Whether `x` and `f(t, x)` are known to be finite: true after an accepted step (every
    /// stepper's attempt and completion check the new state and its rates) or a check by
    /// [`Integrator::ensure_f0`]; false after anything else changes either.
    pub(super) finite_known: bool,
    /// The stepper of the method in use.
    pub(super) stepper: Stepper,
    /// With `Automatic`, the stepper of the other method.
    pub(super) spare: Option<Stepper>,
    pub(super) controller: StepRule,
    /// With `Automatic`, the counters that decide a change of method.
    pub(super) watch: StiffnessWatch,
    /// A change of method decided on the last step, made before the next one.
    pub(super) pending: Option<MethodChange>,
    /// The last change of method, until taken by [`Integrator::take_method_change`].
    pub(super) change: Option<MethodChange>,
    pub(super) segment: DenseSegment,
    pub(super) stats: Stats,
    /// How many leading values the error control measures (`None`: all).
    pub(super) error_states: Option<usize>,
}

impl Integrator {
    /// An integrator of `method` for `dim` states, at `t = 0` with a zero state until
    /// [`Integrator::reset`] is called.
    pub fn new(method: Method, control: StepControl, dim: usize) -> Self {
        Self {
            method,
            control,
            t: 0.0,
            x: vec![0.0; dim],
            x_start: vec![0.0; dim],
            dense_ready: true,
            h: 0.0,
            h_chosen: false,
            f0_valid: false,
            finite_known: false,
            stepper: Stepper::new(method, dim),
            spare: (method == Method::Automatic).then(|| Stepper::stiff_partner(dim)),
            controller: StepRule::for_method(method),
            watch: StiffnessWatch::default(),
            pending: None,
            change: None,
            segment: Self::empty_segment(method, 0.0, dim),
            stats: Stats::default(),
            error_states: None,
        }
    }

    /// Bytes of working memory an integrator of `method` needs for a system of `dim` states,
    /// whose stiff method works with `matrix_size x matrix_size` matrices: `dim` for most
    /// systems, the model's `n` for variational equations ([`Rates::tangent_layout`]). For
    /// refusing a run that cannot fit before it allocates.
    pub fn workspace_bytes(method: Method, dim: usize, matrix_size: usize) -> u64 {
        let own = (2 + Stepper::n_terms(method)) as u64 * dim as u64 * 8;
        own + Stepper::bytes(method, dim, matrix_size)
    }

    /// A zero-length segment at `t0` (coefficients all zero, sized for `dim` states).
    fn empty_segment(method: Method, t0: f64, dim: usize) -> DenseSegment {
        DenseSegment {
            t0,
            h: 0.0,
            dim,
            coeffs: vec![0.0; Stepper::n_terms(method) * dim],
        }
    }

    /// The method the integrator was made with.
    pub fn method(&self) -> Method {
        self.method
    }

    /// The method taking the steps now: the one it was made with, or under `Automatic` DOP853 or
    /// Rodas4.
    pub fn active_method(&self) -> Method {
        self.stepper.method()
    }

    /// The step-size control settings.
    pub fn control(&self) -> &StepControl {
        &self.control
    }

    /// Sets time and state; the next step chooses its initial size (Hairer's automatic
    /// initial step, or `control.initial_step`).
    ///
    /// An `initial_step` that is not positive and finite is ignored (chosen automatically).
    ///
    /// Evaluates the rates once at the new state. The step history of the controller is
    /// forgotten; the work counters keep counting. A state of a different length than before
    /// re-sizes the integrator to it. The segment becomes a zero-length one at `t0` whose
    /// start state is `x0`. `Automatic` starts again with DOP853.
    pub fn reset<R: Rates + ?Sized>(&mut self, rates: &mut R, t0: f64, x0: &[f64]) {
        let dim = x0.len();
        if dim != self.x.len() {
            self.x = vec![0.0; dim];
            self.x_start = vec![0.0; dim];
            self.stepper = Stepper::new(self.method, dim);
            self.spare = (self.method == Method::Automatic).then(|| Stepper::stiff_partner(dim));
        }
        self.restore_starting_method();
        self.dense_ready = true;
        self.x.copy_from_slice(x0);
        self.t = t0;
        let segment = &mut self.segment;
        segment.t0 = t0;
        segment.h = 0.0;
        segment.dim = dim;
        segment
            .coeffs
            .resize(Stepper::n_terms(self.method) * dim, 0.0);
        segment.coeffs.fill(0.0);
        segment.coeffs[..dim].copy_from_slice(x0);
        self.controller.reset();
        self.stepper.rates_changed();
        match self.control.initial_step {
            Some(h0) if h0 > 0.0 && h0.is_finite() => {
                self.h = h0;
                self.h_chosen = true;
            }
            _ => {
                self.h = 0.0;
                self.h_chosen = false;
            }
        }
        rates.rates(t0, &self.x, self.stepper.f0_mut());
        self.stats.n_rate_evaluations += 1;
        self.f0_valid = true;
        self.finite_known = false;
    }

    /// One accepted step, never beyond `t_limit` (> t); on `Ok` the dense output of that step
    /// is in [`Integrator::segment`]. Rejected attempts are retried internally.
    ///
    /// A step that would end within 1 % of `t_limit` is stretched to end exactly there (and
    /// then `t()` equals `t_limit`). `t_limit` may be infinite.
    ///
    /// # Errors
    /// [`StepError::NotFinite`] when the state or its rates are not finite, or a step keeps
    /// producing non-finite values however much it is shrunk; [`StepError::StepTooSmall`]
    /// when error control drives the step below the resolution of `t` (or `t_limit` is not
    /// after `t`). On error nothing of the state or the segment has changed.
    pub fn step<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t_limit: f64,
    ) -> Result<(), StepError> {
        self.advance(rates, t_limit, true)
    }

    /// The step of [`Integrator::step`] without its dense output: afterwards
    /// [`Integrator::segment`] has the step's times and its start and end states (the first
    /// two coefficient vectors) but the other coefficients only after
    /// [`Integrator::ensure_dense`]. The steps, and so the states and times, are exactly
    /// those of [`Integrator::step`] (unless the dense output would not be finite: `step`
    /// then takes a smaller step, `ensure_dense` reports the error).
    ///
    /// # Errors
    /// As [`Integrator::step`].
    pub fn step_lazy<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t_limit: f64,
    ) -> Result<(), StepError> {
        self.advance(rates, t_limit, false)
    }

    /// Builds the dense output of the last step if [`Integrator::step_lazy`] left it out
    /// (three rate evaluations for DOP853, none for Dormand–Prince 5(4)).
    ///
    /// # Errors
    /// [`StepError::NotFinite`] (at the step's start time) when the dense output is not
    /// finite; the segment then keeps only its start and end states.
    pub fn ensure_dense<R: Rates + ?Sized>(&mut self, rates: &mut R) -> Result<(), StepError> {
        if self.dense_ready {
            return Ok(());
        }
        let segment = &mut self.segment;
        let finite = self.stepper.build_dense(
            rates,
            segment.t0,
            &self.x_start,
            segment.h,
            &mut self.stats,
            &mut segment.coeffs,
        );
        if !finite {
            return Err(StepError::NotFinite { t: segment.t0 });
        }
        self.dense_ready = true;
        Ok(())
    }

    /// The dense output of the last step, built first if needed
    /// ([`Integrator::ensure_dense`]).
    ///
    /// # Errors
    /// As [`Integrator::ensure_dense`].
    pub fn segment_dense<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
    ) -> Result<&DenseSegment, StepError> {
        self.ensure_dense(rates)?;
        Ok(&self.segment)
    }

    /// Whether [`Integrator::segment`] holds the complete dense output of the last step.
    pub fn has_dense(&self) -> bool {
        self.dense_ready
    }

    /// The change of method that `Automatic` made after the last step, if any; each change is
    /// returned once.
    pub fn take_method_change(&mut self) -> Option<MethodChange> {
        self.change.take()
    }

    /// One accepted step; with `dense` its dense output too.
    fn advance<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t_limit: f64,
        dense: bool,
    ) -> Result<(), StepError> {
        let t = self.t;
        if t_limit.is_nan() || t_limit <= t {
            return Err(StepError::StepTooSmall { t, h: t_limit - t });
        }
        self.make_pending_change();
        self.ensure_f0(rates)?;
        let h_max = self.control.max_step.unwrap_or(f64::INFINITY);
        if !self.h_chosen {
            self.h = self.automatic_initial_step(rates, h_max.min(t_limit - t));
            self.h_chosen = true;
        }
        let mut n_non_finite = 0;
        let mut any_rejection = false;
        loop {
            let h_wanted = self.h.min(h_max);
            if h_wanted.is_nan() || h_wanted <= min_step(t) {
                return Err(if n_non_finite > 0 {
                    StepError::NotFinite { t }
                } else {
                    StepError::StepTooSmall { t, h: h_wanted }
                });
            }
            let remaining = t_limit - t;
            let clipped = 1.01 * h_wanted >= remaining;
            let h = if clipped { remaining } else { h_wanted };

            let err =
                self.stepper
                    .attempt(rates, t, &self.x, h, self.error_scale(), &mut self.stats);
            let stats = &mut self.stats;
            let finite = err.is_finite()
                && (err > 1.0 || self.stepper.finish(rates, t, &self.x, h, stats, dense));
            if !finite {
                self.stats.n_rejected += 1;
                n_non_finite += 1;
                if n_non_finite >= MAX_NON_FINITE_RETRIES {
                    return Err(StepError::NotFinite { t });
                }
                self.controller.failed();
                any_rejection = true;
                self.h = h * NON_FINITE_SHRINK;
                continue;
            }
            if err > 1.0 {
                self.stats.n_rejected += 1;
                any_rejection = true;
                self.h = self.controller.rejected(h, err);
                continue;
            }

            let mut h_next = self.controller.accepted(h, err);
            if clipped && !any_rejection {
                // the shortened step says little about the step size; keep the earlier proposal
                h_next = h_next.max(h_wanted);
            }
            self.h = h_next.min(h_max);
            let t_end = if clipped { t_limit } else { t + h };
            if dense {
                self.commit(h, t_end);
            } else {
                self.commit_lazy(h, t_end);
            }
            if self.method == Method::Automatic {
                self.watch_stiffness(h);
            }
            return Ok(());
        }
    }

    /// One step of exactly size `h` with no error control (for order checks in tests and
    /// verification). The proposed next step size is left as it was.
    ///
    /// # Errors
    /// [`StepError::StepTooSmall`] for a step that is not positive and finite or below the
    /// resolution of `t`; [`StepError::NotFinite`] when a value becomes non-finite (the step
    /// is not retried; nothing has changed).
    pub fn step_fixed<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        h: f64,
    ) -> Result<(), StepError> {
        let t = self.t;
        if !h.is_finite() || h <= min_step(t) {
            return Err(StepError::StepTooSmall { t, h });
        }
        self.ensure_f0(rates)?;
        let err = self
            .stepper
            .attempt(rates, t, &self.x, h, self.error_scale(), &mut self.stats);
        let stats = &mut self.stats;
        if !(err.is_finite() && self.stepper.finish(rates, t, &self.x, h, stats, true)) {
            return Err(StepError::NotFinite { t });
        }
        self.commit(h, t + h);
        Ok(())
    }

    /// Makes the error control measure only the first `n` values of the state (`None`: all
    /// of them, the default), kept through [`Integrator::reset`]. For values that ride along
    /// with the model's states on the same steps, as tangent vectors do: they follow the
    /// linearised flow of the states, whose time scales the states' control already
    /// resolves, so their own control would only shorten the steps.
    pub fn control_error_of_first(&mut self, n: Option<usize>) {
        self.error_states = n;
    }

    /// What the error control measures against: the tolerances over the leading values it
    /// covers (see [`Integrator::control_error_of_first`]).
    fn error_scale(&self) -> ErrorScale {
        ErrorScale {
            rtol: self.control.rtol,
            atol: self.control.atol,
            controlled: self.error_states.unwrap_or(usize::MAX).min(self.x.len()),
        }
    }

    /// Current time.
    pub fn t(&self) -> f64 {
        self.t
    }

    /// Current state.
    pub fn x(&self) -> &[f64] {
        &self.x
    }

    /// The rates at the current state, with which the next step starts: after a step its
    /// last stage (first same as last: no evaluation), after [`Integrator::restart`] one
    /// evaluation of `rates`, which the next step then uses.
    ///
    /// # Errors
    /// [`StepError::NotFinite`] when the state or its rates are not finite.
    pub fn rates_here<R: Rates + ?Sized>(&mut self, rates: &mut R) -> Result<&[f64], StepError> {
        self.ensure_f0(rates)?;
        Ok(self.stepper.f0())
    }

    /// The rates at the current state when the integrator holds them (after a step: its
    /// last stage), without evaluating or checking anything; `None` after
    /// [`Integrator::restart`] (see [`Integrator::rates_here`]).
    #[inline]
    pub fn end_rates(&self) -> Option<&[f64]> {
        self.f0_valid.then(|| self.stepper.f0())
    }

    /// Proposed size of the next step (0 before the first step when it is chosen
    /// automatically).
    pub fn h_next(&self) -> f64 {
        self.h
    }

    /// Dense output of the last accepted step (after [`Integrator::step_lazy`] complete only
    /// once [`Integrator::ensure_dense`] has run; see [`Integrator::has_dense`]).
    pub fn segment(&self) -> &DenseSegment {
        &self.segment
    }

    /// Work done since [`Integrator::new`].
    pub fn stats(&self) -> Stats {
        self.stats
    }

    /// Evaluates `f(t, x)` if not done yet and checks that state and rates are finite.
    fn ensure_f0<R: Rates + ?Sized>(&mut self, rates: &mut R) -> Result<(), StepError> {
        if !self.f0_valid {
            rates.rates(self.t, &self.x, self.stepper.f0_mut());
            self.stats.n_rate_evaluations += 1;
            self.f0_valid = true;
            self.finite_known = false;
        }
        // after a step both were checked already (most calls)
        if self.finite_known {
            return Ok(());
        }
        let finite = |v: &[f64]| v.iter().all(|z| z.is_finite());
        if finite(&self.x) && finite(self.stepper.f0()) {
            self.finite_known = true;
            Ok(())
        } else {
            Err(StepError::NotFinite { t: self.t })
        }
    }

    /// Hairer's initial step guess (one evaluation), limited to `h_max`.
    fn automatic_initial_step<R: Rates + ?Sized>(&mut self, rates: &mut R, h_max: f64) -> f64 {
        let order = self.stepper.order();
        let scale = self.error_scale();
        let (f0, y1, f1) = self.stepper.f0_and_scratch();
        self.stats.n_rate_evaluations += 1;
        initial_step(rates, self.t, &self.x, f0, y1, f1, order, h_max, scale)
    }

    /// Makes the last attempt (of size `h`, ending at `t_end`) the current state.
    fn commit(&mut self, h: f64, t_end: f64) {
        self.segment.t0 = self.t;
        self.segment.h = h;
        self.segment.dim = self.x.len();
        std::mem::swap(&mut self.segment.coeffs, self.stepper.dense_mut());
        copy_values(&mut self.x_start, &self.x);
        copy_values(&mut self.x, self.stepper.x_new());
        self.t = t_end;
        self.stats.n_accepted += 1;
        self.dense_ready = true;
        self.finite_known = true;
    }

    /// As [`Integrator::commit`] for a step without dense output: the segment gets the
    /// times and the start and end states (first two coefficient vectors) only.
    fn commit_lazy(&mut self, h: f64, t_end: f64) {
        let n = self.x.len();
        let segment = &mut self.segment;
        segment.t0 = self.t;
        segment.h = h;
        segment.dim = n;
        std::mem::swap(&mut self.x, &mut self.x_start);
        copy_values(&mut self.x, self.stepper.x_new());
        let (start, rest) = segment.coeffs.split_at_mut(n);
        copy_values(start, &self.x_start);
        for ((c1, &x1), &x0) in rest.iter_mut().zip(&self.x).zip(&self.x_start) {
            *c1 = x1 - x0;
        }
        self.t = t_end;
        self.stats.n_accepted += 1;
        self.dense_ready = false;
        self.finite_known = true;
    }
}

/// Smallest step size distinguishable at time `t`.
#[inline]
pub(crate) fn min_step(t: f64) -> f64 {
    (10.0 * f64::EPSILON * t.abs()).max(ABSOLUTE_MIN_STEP)
}
