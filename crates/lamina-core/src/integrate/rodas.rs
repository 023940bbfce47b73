//! Rodas4, the stiffly accurate, L-stable Rosenbrock method of order 4(3): E. Hairer &
//! G. Wanner, Solving Ordinary Differential Equations II (2nd ed., 1996), sec. IV.7 and VI.4,
//! as in their code RODAS. Six stages, one Jacobian and one LU decomposition of
//! `I / (h gamma) - J` per step, five rate evaluations per attempt and one for `f`
//! at the accepted state. For variational equations the matrices are the model's own `n x n`
//! ones (see `rodas_matrix.rs`).
//!
//! The dense output has the nested form of [`super::DenseSegment`] with five terms
//! `y0, y1 - y0, q2, q3, q4`: a quartic through both ends of the step (a stepper paired with
//! DOP853, method `Automatic`, pads them with zero terms to DOP853's eight). In a step that is not
//! stiff (`h |J| <= 1`) it is the third-order interpolant of RODAS, built from the stage
//! solutions (`q4 = 0`). That interpolant follows a stiff component badly: on
//! `y' = -k (y - g(t))` with `h k >> 1` its error grows like `h^3` times the third derivative
//! of `g`, whatever the tolerance (the stage solutions of a Rosenbrock method are only
//! first-order accurate there), which put strobe samples of a stiffly forced model hundreds of
//! tolerances off. In a stiff step the quartic instead goes through the ends and through
//! three more Rodas4 solutions from the start of the step, of sizes `h / 4`, `h / 2` and
//! `3 h / 4`. Each is as accurate as a step end (the method is stiffly accurate and L-stable,
//! and in the stiff limit reproduces such a forced response exactly up to degree four), so the
//! interpolant is about as good as the steps in stiff and non-stiff components alike. (A cubic
//! through four such points was not: the error control lets the steps of a stiffly forced
//! model grow until the interpolation error, `h^4 / 24` times the fourth derivative, is what
//! is left.) The extra solutions reuse the step's Jacobian and cost three more
//! factorisations and fifteen evaluations, only in steps whose dense output is wanted.

use super::Stats;
use super::rodas_matrix::IterationMatrix;
use super::rodas_tableau::*;
use super::{ErrorScale, Rates};

/// Number of coefficient vectors of the interpolant.
pub(super) const N_TERMS: usize = 5;
/// Classical order, used by the automatic initial step.
pub(super) const ORDER: i32 = 4;
/// Right-hand-side evaluations of one step attempt (stages 2 to 6).
pub(super) const EVALS_PER_ATTEMPT: u64 = 5;
/// Vectors of the system's length that the stepper holds besides its interpolant (the fields
/// below: `f0`, `f_t`, six stages, the stage state and rates, the new state and its rates),
/// for estimates of a run's memory.
pub(super) const VECTORS: usize = 12;
/// A step with `h |J|` above this is stiff: its dense output comes from three extra solutions.
const STIFF_STEP: f64 = 1.0;

/// Stage vectors, Jacobian and factors of the Rodas4 stepper; the vectors are allocated
/// once, the matrices on the first Jacobian (their size depends on the rates).
#[derive(Clone, Debug)]
pub(super) struct Rodas {
    /// `f(t, x)` at the current state.
    f0: Vec<f64>,
    /// `d f / d t` at the start of the step.
    f_t: Vec<f64>,
    /// Whether the Jacobian and `f_t` belong to the current state.
    jacobian_current: bool,
    /// The Jacobian at the start of the step and the factorised iteration matrix.
    matrix: IterationMatrix,
    /// The stage solutions `U1..U6` of the last attempt (or of the last extra solution of a
    /// stiff dense output).
    u: [Vec<f64>; 6],
    /// State at which a stage is evaluated (ends as the embedded solution).
    y_stage: Vec<f64>,
    /// Rates at a stage.
    f_stage: Vec<f64>,
    /// Solution at `t + h` of the last attempt.
    x_new: Vec<f64>,
    /// `f` at `x_new` once the step is accepted; trades places with `f0`.
    f_new: Vec<f64>,
    /// Interpolant coefficients of the last accepted attempt, `n_terms * dim`.
    dense: Vec<f64>,
    /// Estimated spectral radius of the Jacobian of the last accepted step.
    spectral_radius: f64,
    /// The tolerances of the last attempt, `(rtol, atol)`.
    tolerance: (f64, f64),
    /// Error estimate of the last interpolant built, in tolerances (0 for a step that is not
    /// stiff): the error of the cubic through four of its five points, `|q4| / 64`.
    dense_error: f64,
}

/// Where `f` at the start of the step whose dense output is built is kept.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum StartRates {
    /// In `f0` (the step is being finished).
    Current,
    /// In `f_new` (the step was finished; `f0` already holds `f` at its end).
    Previous,
}

impl Rodas {
    /// Buffers for `dim` states, writing `n_terms >= 4` interpolation terms per step.
    pub(super) fn new(dim: usize, n_terms: usize) -> Self {
        let n_terms = n_terms.max(N_TERMS);
        Self {
            f0: vec![0.0; dim],
            f_t: vec![0.0; dim],
            jacobian_current: false,
            matrix: IterationMatrix::new(),
            u: std::array::from_fn(|_| vec![0.0; dim]),
            y_stage: vec![0.0; dim],
            f_stage: vec![0.0; dim],
            x_new: vec![0.0; dim],
            f_new: vec![0.0; dim],
            dense: vec![0.0; n_terms * dim],
            spectral_radius: 0.0,
            tolerance: (1e-6, 1e-6),
            dense_error: 0.0,
        }
    }

    /// Bytes of the matrices for a system of `dim` states whose matrices are
    /// `matrix_size x matrix_size`.
    pub(super) fn matrix_bytes(dim: usize, matrix_size: usize) -> u64 {
        IterationMatrix::bytes(dim, matrix_size)
    }

    pub(super) fn f0(&self) -> &[f64] {
        &self.f0
    }

    pub(super) fn f0_mut(&mut self) -> &mut [f64] {
        self.jacobian_current = false;
        &mut self.f0
    }

    pub(super) fn f0_and_scratch(&mut self) -> (&[f64], &mut [f64], &mut [f64]) {
        (&self.f0, &mut self.y_stage, &mut self.f_stage)
    }

    pub(super) fn x_new(&self) -> &[f64] {
        &self.x_new
    }

    pub(super) fn dense_mut(&mut self) -> &mut Vec<f64> {
        &mut self.dense
    }

    /// The estimated spectral radius of the Jacobian at the start of the last accepted step.
    pub(super) fn spectral_radius(&self) -> f64 {
        self.spectral_radius
    }

    /// The error estimate of the last interpolant built, in tolerances (see
    /// [`Rodas::finish`]); 0 when the step was not stiff.
    pub(super) fn dense_error(&self) -> f64 {
        self.dense_error
    }

    /// Forgets the Jacobian (the rates changed, for example on another branch).
    pub(super) fn invalidate_jacobian(&mut self) {
        self.jacobian_current = false;
    }

    /// Goes back to the start of the step completed last: its `f` and Jacobian become
    /// current again.
    pub(super) fn rewind(&mut self) {
        std::mem::swap(&mut self.f0, &mut self.f_new);
        self.jacobian_current = true;
    }

    /// Attempts a step of size `h` from `(t, x)`; `f0` must hold `f(t, x)`. Leaves the new
    /// state in `x_new` and returns the scaled error norm of the last stage solution (the
    /// difference of the solution and the embedded one; `<= 1` means acceptable), or NaN
    /// when something is not finite or the iteration matrix is singular.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn attempt<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        scale: ErrorScale,
        stats: &mut Stats,
    ) -> f64 {
        let n = x.len();
        self.tolerance = (scale.rtol, scale.atol);
        if !self.jacobian_current {
            self.evaluate_jacobian(rates, t, x, stats);
        }
        let mut work = Stages {
            matrix: &mut self.matrix,
            f_t: &self.f_t,
            u: &mut self.u,
            y_stage: &mut self.y_stage,
            f_stage: &mut self.f_stage,
        };
        if !work.solve(rates, t, x, h, &self.f0, stats) {
            return f64::NAN;
        }
        let (ys, u6) = (&self.y_stage, &self.u[5]);
        let (rtol, atol, controlled) = (scale.rtol, scale.atol, scale.controlled.min(n));
        let mut err_sq = 0.0;
        let mut finite = true;
        for i in 0..n {
            let xn = ys[i] + u6[i];
            self.x_new[i] = xn;
            finite &= xn.is_finite();
            if i < controlled {
                let sk = atol + rtol * x[i].abs().max(xn.abs());
                err_sq += (u6[i] / sk).powi(2);
            }
        }
        if !finite {
            return f64::NAN;
        }
        (err_sq / controlled.max(1) as f64).sqrt()
    }

    /// The Jacobian and the time derivative at `(t, x)`: exact from `rates` when it has
    /// them, else by forward differences.
    fn evaluate_jacobian<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        stats: &mut Stats,
    ) {
        self.matrix.evaluate(
            rates,
            t,
            x,
            &self.f0,
            &mut self.y_stage,
            &mut self.f_stage,
            stats,
        );
        if !rates.exact_time_derivative(t, x, &mut self.f_t) {
            let floor = super::rodas_matrix::DIFFERENCE_FLOOR;
            let t1 = t + (f64::EPSILON * t.abs().max(floor)).sqrt();
            rates.rates(t1, x, &mut self.f_stage);
            stats.n_rate_evaluations += 1;
            let delta = t1 - t;
            for ((d, f1), f0) in self.f_t.iter_mut().zip(&self.f_stage).zip(&self.f0) {
                *d = (f1 - f0) / delta;
            }
        }
        self.jacobian_current = true;
    }

    /// Completes an accepted attempt of size `h` from `(t, x)`: evaluates `f` at the new
    /// state, estimates the spectral radius of the Jacobian, with `dense` builds the
    /// interpolant (into [`Rodas::dense_mut`]), and makes `f` at the new state the current
    /// one. Returns whether everything is finite (if not, nothing of the current step has
    /// changed).
    pub(super) fn finish<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        stats: &mut Stats,
        dense: bool,
    ) -> bool {
        rates.rates(t + h, &self.x_new, &mut self.f_new);
        stats.n_rate_evaluations += 1;
        if !self.f_new.iter().all(|v| v.is_finite()) {
            return false;
        }
        if dense {
            let mut coeffs = std::mem::take(&mut self.dense);
            let finite = self.interpolant(rates, t, x, h, StartRates::Current, &mut coeffs, stats);
            self.dense = coeffs;
            if !finite {
                return false;
            }
        }
        self.spectral_radius = self.matrix.spectral_radius();
        std::mem::swap(&mut self.f0, &mut self.f_new);
        self.jacobian_current = false;
        true
    }

    /// The interpolant of the step completed last (from `t`, of size `h`, which started from
    /// `start`) into `coeffs` (`n_terms * dim`, the terms after the fifth set to zero);
    /// false if not finite.
    pub(super) fn build_dense<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        start: &[f64],
        h: f64,
        stats: &mut Stats,
        coeffs: &mut [f64],
    ) -> bool {
        self.interpolant(rates, t, start, h, StartRates::Previous, coeffs, stats)
    }

    /// The interpolant of the step from `(t, start)` of size `h` ending at `x_new`: RODAS's
    /// own in a step that is not stiff, else the quartic through the ends and three extra
    /// solutions (see the module documentation).
    #[allow(clippy::too_many_arguments)]
    fn interpolant<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        start: &[f64],
        h: f64,
        start_rates: StartRates,
        coeffs: &mut [f64],
        stats: &mut Stats,
    ) -> bool {
        let n = start.len();
        let (c0, rest) = coeffs.split_at_mut(n);
        let (c1, rest) = rest.split_at_mut(n);
        let (c2, rest) = rest.split_at_mut(n);
        let (c3, rest) = rest.split_at_mut(n);
        let (c4, padding) = rest.split_at_mut(n);
        padding.fill(0.0);
        c0.copy_from_slice(start);
        for ((c, &x1), &x0) in c1.iter_mut().zip(&self.x_new).zip(start) {
            *c = x1 - x0;
        }
        if h * self.matrix.norm() <= STIFF_STEP {
            c4.fill(0.0);
            self.dense_error = 0.0;
            return self.stage_interpolant(c2, c3);
        }
        let f_start = match start_rates {
            StartRates::Current => &self.f0,
            StartRates::Previous => &self.f_new,
        };
        let mut work = Stages {
            matrix: &mut self.matrix,
            f_t: &self.f_t,
            u: &mut self.u,
            y_stage: &mut self.y_stage,
            f_stage: &mut self.f_stage,
        };
        // y(s) = y0 + s d + s r w(s) with d = y1 - y0, r = 1 - s and the quadratic
        // w(s) = q2 + s (q3 + r q4); w is known at s = 1/4, 1/2, 3/4 from the extra solutions
        for (s, w) in [(0.25, &mut *c2), (0.5, &mut *c3), (0.75, &mut *c4)] {
            if !work.solve(rates, t, start, s * h, f_start, stats) {
                return false;
            }
            let (ys, u6) = (&work.y_stage, &work.u[5]);
            let weight = 1.0 / (s * (1.0 - s));
            for i in 0..n {
                w[i] = weight * (ys[i] + u6[i] - start[i] - s * c1[i]);
            }
        }
        // [analytic] w(1/4) = q2 + q3/4 + 3 q4/16, w(1/2) = q2 + q3/2 + q4/4 and
        // w(3/4) = q2 + 3 q3/4 + 3 q4/16, solved for q2, q3, q4. The fourth difference of the
        // five points is 3 q4 / 32, and the cubic through the other four misses the middle
        // one by a sixth of it, |q4| / 64: the error estimate (of the cubic, so an upper
        // bound of the quartic's where the step resolves the solution)
        let (rtol, atol) = self.tolerance;
        let mut error_sq = 0.0;
        let mut finite = true;
        for i in 0..n {
            let (wa, wb, wc) = (c2[i], c3[i], c4[i]);
            let q3 = 2.0 * (wc - wa);
            let q4 = 8.0 * (2.0 * wb - wa - wc);
            let q2 = wb - 0.5 * q3 - 0.25 * q4;
            c2[i] = q2;
            c3[i] = q3;
            c4[i] = q4;
            finite &= (q2 + q3 + q4).is_finite();
            let scale = atol + rtol * start[i].abs().max((start[i] + c1[i]).abs());
            error_sq += (q4 / (64.0 * scale)).powi(2);
        }
        self.dense_error = (error_sq / n.max(1) as f64).sqrt();
        finite
    }

    /// RODAS's interpolant terms `q2, q3` from the stage solutions of the last attempt;
    /// false if not finite.
    fn stage_interpolant(&self, c2: &mut [f64], c3: &mut [f64]) -> bool {
        let [u1, u2, u3, u4, u5, _] = &self.u;
        let mut finite = true;
        for i in 0..c2.len() {
            c2[i] = D21 * u1[i] + D22 * u2[i] + D23 * u3[i] + D24 * u4[i] + D25 * u5[i];
            c3[i] = D31 * u1[i] + D32 * u2[i] + D33 * u3[i] + D34 * u4[i] + D35 * u5[i];
            finite &= (c2[i] + c3[i]).is_finite();
        }
        finite
    }
}

/// The parts of the stepper one Rodas4 solution works with.
struct Stages<'a> {
    matrix: &'a mut IterationMatrix,
    f_t: &'a [f64],
    u: &'a mut [Vec<f64>; 6],
    y_stage: &'a mut Vec<f64>,
    f_stage: &'a mut Vec<f64>,
}

impl Stages<'_> {
    /// The six stages of a step of size `h` from `(t, x)` with `f0 = f(t, x)` and the
    /// Jacobian already evaluated there: afterwards `y_stage` holds the embedded solution
    /// and `u[5]` the last stage, whose sum is the solution. False when the iteration matrix
    /// is singular or not finite.
    fn solve<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        f0: &[f64],
        stats: &mut Stats,
    ) -> bool {
        if !self.matrix.factorise(1.0 / (h * GAMMA), stats) {
            return false;
        }
        let inv_h = 1.0 / h;
        let one = 1.0;
        let matrix = &mut *self.matrix;
        let [u1, u2, u3, u4, u5, u6] = &mut *self.u;
        let (ys, fs, f_t) = (&mut *self.y_stage, &mut *self.f_stage, self.f_t);
        stage_rhs(u1, f0, h * D1, f_t, inv_h, &[]);
        matrix.solve(rates, t, x, u1, stats);
        combine!(ys = x + one * (A21, u1));
        rates.rates(t + C2 * h, ys, fs);
        stage_rhs(u2, fs, h * D2, f_t, inv_h, &[(C21, &u1[..])]);
        matrix.solve(rates, t, x, u2, stats);
        combine!(ys = x + one * (A31, u1; A32, u2));
        rates.rates(t + C3 * h, ys, fs);
        stage_rhs(
            u3,
            fs,
            h * D3,
            f_t,
            inv_h,
            &[(C31, &u1[..]), (C32, &u2[..])],
        );
        matrix.solve(rates, t, x, u3, stats);
        combine!(ys = x + one * (A41, u1; A42, u2; A43, u3));
        rates.rates(t + C4 * h, ys, fs);
        stage_rhs(
            u4,
            fs,
            h * D4,
            f_t,
            inv_h,
            &[(C41, &u1[..]), (C42, &u2[..]), (C43, &u3[..])],
        );
        matrix.solve(rates, t, x, u4, stats);
        combine!(ys = x + one * (A51, u1; A52, u2; A53, u3; A54, u4));
        let t_end = t + h;
        rates.rates(t_end, ys, fs);
        let earlier = [
            (C51, &u1[..]),
            (C52, &u2[..]),
            (C53, &u3[..]),
            (C54, &u4[..]),
        ];
        stage_rhs(u5, fs, 0.0, f_t, inv_h, &earlier);
        matrix.solve(rates, t, x, u5, stats);
        // the embedded solution, from which the last stage starts
        for (y, d) in ys.iter_mut().zip(u5.iter()) {
            *y += d;
        }
        rates.rates(t_end, ys, fs);
        let earlier = [
            (C61, &u1[..]),
            (C62, &u2[..]),
            (C63, &u3[..]),
            (C64, &u4[..]),
            (C65, &u5[..]),
        ];
        stage_rhs(u6, fs, 0.0, f_t, inv_h, &earlier);
        matrix.solve(rates, t, x, u6, stats);
        stats.n_rate_evaluations += EVALS_PER_ATTEMPT;
        true
    }
}

/// The right-hand side of a stage's linear system:
/// `out = f + hd * f_t + (sum_j c_j u_j) / h`.
#[inline]
fn stage_rhs(
    out: &mut [f64],
    f: &[f64],
    hd: f64,
    f_t: &[f64],
    inv_h: f64,
    earlier: &[(f64, &[f64])],
) {
    for (i, o) in out.iter_mut().enumerate() {
        let coupling: f64 = earlier.iter().map(|(c, u)| c * u[i]).sum();
        *o = f[i] + hd * f_t[i] + inv_h * coupling;
    }
}
