//! Adaptive integrators as steppers: the explicit Runge–Kutta pairs Dormand–Prince 5(4) and
//! DOP853, the Rosenbrock method Rodas4 for stiff models, and the automatic choice between
//! DOP853 and Rodas4. Each call to [`Integrator::step`] takes one accepted step and leaves
//! its dense output in [`Integrator::segment`].

/// One stage state in a single pass over the states:
/// `combine!(out = y + h * (a1, k1; a2, k2; ...; an, kn))` writes
/// `out[i] = (y[i] + h * (a1 k1[i] + ...)) + (h an) kn[i]`.
///
/// The last stage listed should be the one evaluated last: the rest of the sum is formed
/// while its rates are still being computed, so that stage waits for one multiplication and
/// one addition only. In a small model's step the stages wait on each other in one long
/// chain, and this chain is what bounds the step's time.
/// All slices are cut to the length of `y` first so the loop runs without bounds checks.
macro_rules! combine {
    ($out:ident = $y:ident + $h:ident * ($($a:expr, $k:ident);+ $(;)?)) => {
        combine!([false] $out = $y + $h * ($($a, $k);+))
    };
    ([$fused:expr] $out:ident = $y:ident + $h:ident * ($($a:expr, $k:ident);+ $(;)?)) => {
        combine!(@split $fused, $out, $y, $h, [] $($a, $k);+)
    };
    (@split $fused:expr, $out:ident, $y:ident, $h:ident, [$($da:expr, $dk:ident);*] $a:expr, $k:ident; $($rest:tt)+) => {
        combine!(@split $fused, $out, $y, $h, [$($da, $dk;)* $a, $k] $($rest)+)
    };
    (@split $fused:expr, $out:ident, $y:ident, $h:ident, [] $al:expr, $kl:ident) => {{
        let n = $y.len();
        let out: &mut [f64] = &mut $out[..n];
        let y: &[f64] = &$y[..n];
        let $kl: &[f64] = &$kl[..n];
        let h_last = $h * $al;
        for i in 0..n {
            out[i] = $crate::integrate::add_product::<{ $fused }>(y[i], h_last, $kl[i]);
        }
    }};
    (@split $fused:expr, $out:ident, $y:ident, $h:ident, [$a0:expr, $k0:ident $(; $a:expr, $k:ident)*] $al:expr, $kl:ident) => {{
        let n = $y.len();
        let out: &mut [f64] = &mut $out[..n];
        let y: &[f64] = &$y[..n];
        let $k0: &[f64] = &$k0[..n];
        $(let $k: &[f64] = &$k[..n];)*
        let $kl: &[f64] = &$kl[..n];
        let h_last = $h * $al;
        for i in 0..n {
            let older = y[i] + $h * ($a0 * $k0[i] $(+ $a * $k[i])*);
            out[i] = $crate::integrate::add_product::<{ $fused }>(older, h_last, $kl[i]);
        }
    }};
}

/// Copies `src` into `dst` (of the same length). The states of a small model are copied on
/// every step; a length of at most four is copied in place, without the library call that
/// `copy_from_slice` of a length unknown at compile time makes.
#[inline(always)]
pub(crate) fn copy_values(dst: &mut [f64], src: &[f64]) {
    match (dst, src) {
        ([d0], [s0]) => *d0 = *s0,
        ([d0, d1], [s0, s1]) => (*d0, *d1) = (*s0, *s1),
        ([d0, d1, d2], [s0, s1, s2]) => (*d0, *d1, *d2) = (*s0, *s1, *s2),
        ([d0, d1, d2, d3], [s0, s1, s2, s3]) => (*d0, *d1, *d2, *d3) = (*s0, *s1, *s2, *s3),
        (dst, src) => dst.copy_from_slice(src),
    }
}

/// `base + a b`, with one fused multiply-add when `FUSED` (only inside code compiled for a
/// processor that has the instruction: elsewhere it would be a slow library call).
#[inline(always)]
pub(crate) fn add_product<const FUSED: bool>(base: f64, a: f64, b: f64) -> f64 {
    if FUSED {
        a.mul_add(b, base)
    } else {
        base + a * b
    }
}

/// What a step attempt measures its error against: `atol + rtol |x_i|` for each of the first
/// `controlled` values (all of them, unless values that only ride along are left out: see
/// [`Integrator::control_error_of_first`]).
#[derive(Clone, Copy, Debug)]
pub(crate) struct ErrorScale {
    pub(crate) rtol: f64,
    pub(crate) atol: f64,
    pub(crate) controlled: usize,
}

mod auto;
mod controller;
pub mod dense;
mod dop853;
mod dop853_tableau;
mod dp5;
mod fixed_power;
mod integrator;
mod linear;
mod rescale;
mod rodas;
mod rodas_matrix;
mod rodas_tableau;
mod stepper;
mod stiffness;

pub use dense::DenseSegment;
pub use integrator::Integrator;
pub(crate) use integrator::min_step as min_step_at;
pub use stiffness::{ChangeReason, MethodChange};

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

    /// Writes the Jacobian `d f / d x` at `(t, x)` into `jacobian` (row-major,
    /// `jacobian[i * dim + j] = d f_i / d x_j`) and returns true; or returns false when the
    /// implementation has no exact Jacobian, and the stiff method then differences the rates.
    fn exact_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) -> bool {
        let _ = (t, x, jacobian);
        false
    }

    /// Writes `d f / d t` at `(t, x)` into `out` and returns true; or returns false when the
    /// implementation has no exact time derivative, and the stiff method then differences the
    /// rates in time.
    fn exact_time_derivative(&mut self, t: f64, x: &[f64], out: &mut [f64]) -> bool {
        let _ = (t, x, out);
        false
    }

    /// For variational equations (a model `x' = f(t, x)` carried together with tangent
    /// vectors `q' = J(t, x) q`): where the model's state and the tangent vectors lie in the
    /// state of the whole system. The stiff method then works with the model's `n x n`
    /// Jacobian ([`Rates::model_jacobian`]) instead of one matrix of the whole system, whose
    /// size would grow as the fourth power of `n`. `None` (the default) for any other system.
    fn tangent_layout(&self) -> Option<TangentLayout> {
        None
    }

    /// For a system with a [`Rates::tangent_layout`]: writes the model's Jacobian
    /// `d f / d x` (`n x n`, row-major) at `(t, x)`, where `x` holds the model's `n` states
    /// only. Not called for other systems.
    fn model_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) {
        let _ = (t, x);
        jacobian.fill(0.0);
    }

    /// The rates as one call of machine code, when [`Rates::rates`] is exactly that call
    /// (a model's machine code with its parameter values): a stepper then makes its stage
    /// evaluations through it directly, to the same results. `None` (the default) otherwise.
    fn machine_call(&self) -> Option<crate::expr::MachineCall<'_>> {
        None
    }

    /// Whether [`Rates::rates_small`] takes `D` states in registers (machine code of a model
    /// with at most four states, see [`crate::expr::MachineCall::eval_small`]): a stepper
    /// then gives a small model's stage states by value. False (the default) otherwise.
    fn takes_states_in_registers<const D: usize>(&self) -> bool {
        false
    }

    /// [`Rates::rates`] of `D` states given by value (see
    /// [`Rates::takes_states_in_registers`]).
    #[inline(always)]
    fn rates_small<const D: usize>(&mut self, t: f64, x: [f64; D], dx: &mut [f64]) {
        self.rates(t, &x, dx);
    }
}

/// Rates made by one [`crate::expr::MachineCall`], for the stepper's stages.
pub(crate) struct DirectRates<'a> {
    call: crate::expr::MachineCall<'a>,
    dim: usize,
}

impl<'a> DirectRates<'a> {
    /// The rates of `call` for states like `x`.
    pub(crate) fn new(call: crate::expr::MachineCall<'a>, x: &[f64]) -> Self {
        Self { call, dim: x.len() }
    }
}

impl Rates for DirectRates<'_> {
    fn dim(&self) -> usize {
        self.dim
    }

    #[inline(always)]
    fn rates(&mut self, t: f64, x: &[f64], dx: &mut [f64]) {
        self.call.eval(t, x, dx);
    }

    fn takes_states_in_registers<const D: usize>(&self) -> bool {
        self.call.takes_states_in_registers::<D>()
    }

    #[inline(always)]
    fn rates_small<const D: usize>(&mut self, t: f64, x: [f64; D], dx: &mut [f64]) {
        self.call.eval_small(t, x, dx);
    }
}

/// Where a system of variational equations keeps its parts: the model's `n` states first,
/// then `m` tangent vectors of `n` entries each, entry `i` of vector `k` at
/// `n + k * vector_stride + i * entry_stride`. Vectors one after another have
/// `vector_stride = n, entry_stride = 1`; the columns of a row-major `n x m` matrix have
/// `vector_stride = 1, entry_stride = m`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TangentLayout {
    /// States of the model.
    pub n: usize,
    /// Tangent vectors.
    pub m: usize,
    /// Distance between the first entries of two neighbouring vectors.
    pub vector_stride: usize,
    /// Distance between two neighbouring entries of one vector.
    pub entry_stride: usize,
}

impl TangentLayout {
    /// Tangent vectors stored one after another.
    pub fn vectors(n: usize, m: usize) -> Self {
        Self {
            n,
            m,
            vector_stride: n,
            entry_stride: 1,
        }
    }

    /// Tangent vectors as the columns of a row-major `n x m` matrix.
    pub fn matrix_columns(n: usize, m: usize) -> Self {
        Self {
            n,
            m,
            vector_stride: 1,
            entry_stride: m,
        }
    }

    /// Length of the whole system's state: `n + n m`.
    pub fn dim(&self) -> usize {
        self.n + self.n * self.m
    }

    /// Index of entry `i` of tangent vector `k` in the whole state.
    #[inline]
    pub fn index(&self, k: usize, i: usize) -> usize {
        self.n + k * self.vector_stride + i * self.entry_stride
    }
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

/// Which integration method to use.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Method {
    /// Dormand–Prince 5(4) with its fourth-order dense output.
    Dp5,
    /// Dormand–Prince 8(5,3) (Hairer's DOP853) with its seventh-order dense output.
    Dp853,
    /// The Rosenbrock method Rodas4 of Hairer & Wanner (order 4, embedded order 3, L-stable,
    /// third-order dense output), for stiff models. Uses the Jacobian of the rates
    /// ([`Rates::exact_jacobian`], else finite differences).
    Rodas4,
    /// Starts with DOP853, changes to Rodas4 when the step size is held down by stability
    /// (Hairer's stiffness test) and back when it no longer is; see
    /// [`Integrator::take_method_change`].
    Automatic,
}

impl Method {
    /// A short name for messages.
    pub fn name(self) -> &'static str {
        match self {
            Self::Dp5 => "Dormand–Prince 5(4)",
            Self::Dp853 => "DOP853",
            Self::Rodas4 => "Rodas4",
            Self::Automatic => "automatic (DOP853 / Rodas4)",
        }
    }
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
    /// Rate evaluations (of the right-hand side `f(t, x)`).
    pub n_rate_evaluations: u64,
    /// Accepted steps.
    pub n_accepted: u64,
    /// Rejected step attempts.
    pub n_rejected: u64,
    /// Jacobian evaluations (stiff method; each exact one or one set of differences).
    pub n_jacobians: u64,
    /// LU decompositions of the stiff method's iteration matrix.
    pub n_decompositions: u64,
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
