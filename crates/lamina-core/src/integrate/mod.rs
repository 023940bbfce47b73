//! Adaptive explicit Runge–Kutta integrators (Dormand–Prince 5(4) and DOP853) as steppers:
//! each call to [`Integrator::step`] takes one accepted step and leaves its dense output
//! in [`Integrator::segment`].

/// One stage state in a single pass over the states:
/// `combine!(out = y + h * (a1, k1; a2, k2; ...))` writes `out[i] = y[i] + h * (a1 k1[i] + ...)`.
/// All slices are cut to the length of `y` first so the loop runs without bounds checks.
macro_rules! combine {
    ($out:ident = $y:ident + $h:ident * ($a0:expr, $k0:ident $(; $a:expr, $k:ident)* $(;)?)) => {{
        let n = $y.len();
        let out: &mut [f64] = &mut $out[..n];
        let y: &[f64] = &$y[..n];
        let $k0: &[f64] = &$k0[..n];
        $(let $k: &[f64] = &$k[..n];)*
        for i in 0..n {
            out[i] = y[i] + $h * ($a0 * $k0[i] $(+ $a * $k[i])*);
        }
    }};
}

mod controller;
pub mod dense;
mod dop853;
mod dop853_tableau;
mod dp5;
mod integrator;
mod stepper;

pub use dense::DenseSegment;
pub use integrator::Integrator;

use std::sync::atomic::{AtomicBool, Ordering};

/// The right-hand side of an ODE system `x' = f(t, x)`.
///
/// Takes `&mut self` so that an implementation may keep scratch space (the compiled
/// expression program does) without allocating per call.
pub trait Rates {
    /// Number of states.
    fn dim(&self) -> usize;
    /// Writes `f(t, x)` into `dx`. `x` and `dx` have length [`Rates::dim`].
    fn rates(&mut self, t: f64, x: &[f64], dx: &mut [f64]);
}

/// A hand-written right-hand side as a closure, for tests and benchmarks.
pub struct FnRates<F> {
    dim: usize,
    f: F,
}

impl<F: FnMut(f64, &[f64], &mut [f64])> FnRates<F> {
    /// Wraps `f` as the right-hand side of a system of `dim` states.
    pub fn new(dim: usize, f: F) -> Self {
        Self { dim, f }
    }
}

impl<F: FnMut(f64, &[f64], &mut [f64])> Rates for FnRates<F> {
    fn dim(&self) -> usize {
        self.dim
    }
    #[inline]
    fn rates(&mut self, t: f64, x: &[f64], dx: &mut [f64]) {
        (self.f)(t, x, dx)
    }
}

/// Which Runge–Kutta pair to use.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Method {
    /// Dormand–Prince 5(4) with its fourth-order dense output.
    Dp5,
    /// Dormand–Prince 8(5,3) (Hairer's DOP853) with its seventh-order dense output.
    Dp853,
}

/// Step-size control settings.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct StepControl {
    /// Relative tolerance (> 0).
    pub rtol: f64,
    /// Absolute tolerance (> 0).
    pub atol: f64,
    /// Largest step allowed, if any.
    pub max_step: Option<f64>,
    /// First step to try; chosen automatically when `None`.
    pub initial_step: Option<f64>,
}

impl Default for StepControl {
    fn default() -> Self {
        Self {
            rtol: 1e-9,
            atol: 1e-12,
            max_step: None,
            initial_step: None,
        }
    }
}

/// Why a step could not be taken.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
pub enum StepError {
    /// The right-hand side or the state became NaN or infinite near time `t`.
    #[error("a value became non-finite (NaN or infinite) at t = {t}")]
    NotFinite {
        /// Time of the last good state.
        t: f64,
    },
    /// The step size fell below what the floating-point resolution of `t` allows.
    #[error("the step size collapsed to {h:e} at t = {t}")]
    StepTooSmall {
        /// Time of the last good state.
        t: f64,
        /// The step size that was too small.
        h: f64,
    },
}

/// Counters of work done by an integrator.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Stats {
    /// Right-hand-side evaluations.
    pub n_rates: u64,
    /// Accepted steps.
    pub n_accepted: u64,
    /// Rejected step attempts.
    pub n_rejected: u64,
}

/// A cooperative cancel flag, checked by drivers once per step.
#[derive(Debug, Default)]
pub struct Interrupt(AtomicBool);

impl Interrupt {
    /// A flag that is not raised.
    pub fn new() -> Self {
        Self(AtomicBool::new(false))
    }
    /// Asks the run to stop at its next step.
    pub fn raise(&self) {
        self.0.store(true, Ordering::Relaxed);
    }
    /// Whether a stop was asked for.
    pub fn is_raised(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }
}
