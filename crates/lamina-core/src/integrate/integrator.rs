//! The adaptive stepper: one accepted step per call, with its dense output.

use super::controller::{PiController, initial_step};
use super::dop853::{self, Dop853};
use super::dp5::{self, Dp5};
use super::{DenseSegment, Method, Rates, Stats, StepControl, StepError};

/// Smallest step allowed regardless of `t` (a step below the floating-point resolution of `t`
/// is refused separately).
const ABSOLUTE_MIN_STEP: f64 = 1e-300;
/// How often in a row a step may be shrunk because of non-finite values before giving up.
const MAX_NON_FINITE_RETRIES: u32 = 12;
/// Step reduction after an attempt that produced non-finite values.
const NON_FINITE_SHRINK: f64 = 0.25;

/// The stage storage of the chosen method (enum dispatch, no allocation per step).
// one per integrator, so the size difference of the variants does not matter
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Debug)]
enum Stepper {
    Dp5(Dp5),
    Dp853(Dop853),
}

impl Stepper {
    fn new(method: Method, dim: usize) -> Self {
        match method {
            Method::Dp5 => Self::Dp5(Dp5::new(dim)),
            Method::Dp853 => Self::Dp853(Dop853::new(dim)),
        }
    }

    fn n_terms(method: Method) -> usize {
        match method {
            Method::Dp5 => dp5::N_TERMS,
            Method::Dp853 => dop853::N_TERMS,
        }
    }

    fn order(&self) -> i32 {
        match self {
            Self::Dp5(_) => dp5::ORDER,
            Self::Dp853(_) => dop853::ORDER,
        }
    }

    fn f0(&self) -> &[f64] {
        match self {
            Self::Dp5(s) => s.f0(),
            Self::Dp853(s) => s.f0(),
        }
    }

    fn f0_mut(&mut self) -> &mut [f64] {
        match self {
            Self::Dp5(s) => s.f0_mut(),
            Self::Dp853(s) => s.f0_mut(),
        }
    }

    /// `f0` with two scratch vectors, for the automatic initial step.
    fn f0_and_scratch(&mut self) -> (&[f64], &mut [f64], &mut [f64]) {
        match self {
            Self::Dp5(s) => s.f0_and_scratch(),
            Self::Dp853(s) => s.f0_and_scratch(),
        }
    }

    fn x_new(&self) -> &[f64] {
        match self {
            Self::Dp5(s) => s.x_new(),
            Self::Dp853(s) => s.x_new(),
        }
    }

    fn dense_mut(&mut self) -> &mut Vec<f64> {
        match self {
            Self::Dp5(s) => s.dense_mut(),
            Self::Dp853(s) => s.dense_mut(),
        }
    }

    /// One attempt; returns the scaled error (NaN if something is not finite).
    #[inline]
    #[allow(clippy::too_many_arguments)]
    fn attempt<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        control: &StepControl,
        n_rates: &mut u64,
    ) -> f64 {
        let (rtol, atol) = (control.rtol, control.atol);
        match self {
            Self::Dp5(s) => s.attempt(rates, t, x, h, rtol, atol, n_rates),
            Self::Dp853(s) => s.attempt(rates, t, x, h, rtol, atol, n_rates),
        }
    }

    /// Completes an accepted attempt (dense output, first-same-as-last); false if not finite.
    #[inline]
    fn finish<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        n_rates: &mut u64,
    ) -> bool {
        match self {
            Self::Dp5(s) => s.finish(x, h),
            Self::Dp853(s) => s.finish(rates, t, x, h, n_rates),
        }
    }
}

/// An adaptive integrator of either method, stepping one accepted step at a time.
///
/// Time runs forward only. After every successful [`Integrator::step`] or
/// [`Integrator::step_fixed`], [`Integrator::segment`] holds the dense output of that step.
/// All storage is allocated in [`Integrator::new`] (and again in [`Integrator::reset`] only if
/// the state length changes); stepping allocates nothing.
#[derive(Clone, Debug)]
pub struct Integrator {
    method: Method,
    control: StepControl,
    t: f64,
    x: Vec<f64>,
    /// Proposed size of the next step; meaningful when `h_chosen`.
    h: f64,
    h_chosen: bool,
    /// Whether the stepper's first stage holds `f(t, x)`.
    f0_valid: bool,
    stepper: Stepper,
    controller: PiController,
    segment: DenseSegment,
    stats: Stats,
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
            h: 0.0,
            h_chosen: false,
            f0_valid: false,
            stepper: Stepper::new(method, dim),
            controller: PiController::for_method(method),
            segment: Self::empty_segment(method, 0.0, dim),
            stats: Stats::default(),
        }
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

    /// The Runge–Kutta pair in use.
    pub fn method(&self) -> Method {
        self.method
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
    /// start state is `x0`.
    pub fn reset<R: Rates + ?Sized>(&mut self, rates: &mut R, t0: f64, x0: &[f64]) {
        let dim = x0.len();
        if dim != self.x.len() {
            self.x = vec![0.0; dim];
            self.stepper = Stepper::new(self.method, dim);
        }
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
        self.stats.n_rates += 1;
        self.f0_valid = true;
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
        let t = self.t;
        if t_limit.is_nan() || t_limit <= t {
            return Err(StepError::StepTooSmall { t, h: t_limit - t });
        }
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

            let n_rates = &mut self.stats.n_rates;
            let err = self
                .stepper
                .attempt(rates, t, &self.x, h, &self.control, n_rates);
            let finite = err.is_finite()
                && (err > 1.0 || self.stepper.finish(rates, t, &self.x, h, n_rates));
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
            self.commit(h, if clipped { t_limit } else { t + h });
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
        let n_rates = &mut self.stats.n_rates;
        let err = self
            .stepper
            .attempt(rates, t, &self.x, h, &self.control, n_rates);
        if !(err.is_finite() && self.stepper.finish(rates, t, &self.x, h, n_rates)) {
            return Err(StepError::NotFinite { t });
        }
        self.commit(h, t + h);
        Ok(())
    }

    /// Current time.
    pub fn t(&self) -> f64 {
        self.t
    }

    /// Current state.
    pub fn x(&self) -> &[f64] {
        &self.x
    }

    /// Proposed size of the next step (0 before the first step when it is chosen
    /// automatically).
    pub fn h_next(&self) -> f64 {
        self.h
    }

    /// Dense output of the last accepted step.
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
            self.stats.n_rates += 1;
            self.f0_valid = true;
        }
        let finite = |v: &[f64]| v.iter().all(|z| z.is_finite());
        if finite(&self.x) && finite(self.stepper.f0()) {
            Ok(())
        } else {
            Err(StepError::NotFinite { t: self.t })
        }
    }

    /// Hairer's initial step guess (one evaluation), limited to `h_max`.
    fn automatic_initial_step<R: Rates + ?Sized>(&mut self, rates: &mut R, h_max: f64) -> f64 {
        let order = self.stepper.order();
        let (f0, y1, f1) = self.stepper.f0_and_scratch();
        let (rtol, atol) = (self.control.rtol, self.control.atol);
        self.stats.n_rates += 1;
        initial_step(rates, self.t, &self.x, f0, y1, f1, order, h_max, rtol, atol)
    }

    /// Makes the last attempt (of size `h`, ending at `t_end`) the current state.
    fn commit(&mut self, h: f64, t_end: f64) {
        self.segment.t0 = self.t;
        self.segment.h = h;
        self.segment.dim = self.x.len();
        std::mem::swap(&mut self.segment.coeffs, self.stepper.dense_mut());
        self.x.copy_from_slice(self.stepper.x_new());
        self.t = t_end;
        self.stats.n_accepted += 1;
    }
}

/// Smallest step size distinguishable at time `t`.
#[inline]
fn min_step(t: f64) -> f64 {
    (10.0 * f64::EPSILON * t.abs()).max(ABSOLUTE_MIN_STEP)
}
