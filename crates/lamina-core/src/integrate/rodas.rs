//! Rodas4, the stiffly accurate, L-stable Rosenbrock method of order 4(3) with third-order
//! dense output: E. Hairer & G. Wanner, Solving Ordinary Differential Equations II (2nd ed.,
//! 1996), sec. IV.7 and VI.4, as in their code RODAS. Six stages, one Jacobian and one LU
//! decomposition of `I / (h gamma) - J` per step, five rate evaluations per
//! attempt and one for `f` at the accepted state.
//!
//! The dense output `y(s) = (1 - s) y0 + s (y1 + (1 - s) (q2 + s q3))` is the nested form of
//! [`super::DenseSegment`] with terms `y0, y1 - y0, q2, q3`; a stepper paired with DOP853
//! (method `Automatic`) pads them with zero terms to DOP853's eight.

use super::Stats;
use super::linear::Lu;
use super::rodas_tableau::*;
use super::{Rates, StepControl};

/// Number of coefficient vectors of the interpolant.
pub(super) const N_TERMS: usize = 4;
/// Classical order, used by the automatic initial step.
pub(super) const ORDER: i32 = 4;
/// Rate evaluations of one step attempt (stages 2 to 6).
pub(super) const EVALS_PER_ATTEMPT: u64 = 5;

/// Smallest increment scale of the difference Jacobian (Hairer's `MAX(1D-5, |y|)`).
const DIFFERENCE_FLOOR: f64 = 1e-5;

/// Stage vectors, Jacobian and factors of the Rodas4 stepper, allocated once.
#[derive(Clone, Debug)]
pub(super) struct Rodas {
    /// `f(t, x)` at the current state.
    f0: Vec<f64>,
    /// `d f / d x` at the start of the step, row-major.
    jacobian: Vec<f64>,
    /// `d f / d t` at the start of the step.
    f_t: Vec<f64>,
    /// Whether `jacobian` and `f_t` belong to the current state.
    jacobian_current: bool,
    /// `I / (h gamma) - J`, factorised.
    lu: Lu,
    /// The stage solutions `U1..U6` of the last attempt.
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
    /// Power-iteration vector for the spectral-radius estimate.
    probe: Vec<f64>,
    probe_next: Vec<f64>,
    /// Estimated spectral radius of the Jacobian of the last accepted step.
    spectral_radius: f64,
}

impl Rodas {
    /// Buffers for `dim` states, writing `n_terms >= 4` interpolation terms per step.
    pub(super) fn new(dim: usize, n_terms: usize) -> Self {
        let n_terms = n_terms.max(N_TERMS);
        Self {
            f0: vec![0.0; dim],
            jacobian: vec![0.0; dim * dim],
            f_t: vec![0.0; dim],
            jacobian_current: false,
            lu: Lu::new(dim),
            u: std::array::from_fn(|_| vec![0.0; dim]),
            y_stage: vec![0.0; dim],
            f_stage: vec![0.0; dim],
            x_new: vec![0.0; dim],
            f_new: vec![0.0; dim],
            dense: vec![0.0; n_terms * dim],
            probe: probe_start(dim),
            probe_next: vec![0.0; dim],
            spectral_radius: 0.0,
        }
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
        control: &StepControl,
        stats: &mut Stats,
    ) -> f64 {
        let n = x.len();
        if !self.jacobian_current {
            self.evaluate_jacobian(rates, t, x, stats);
        }
        // the iteration matrix I / (h gamma) - J
        let diagonal = 1.0 / (h * GAMMA);
        let matrix = self.lu.matrix_mut();
        for (m, j) in matrix.iter_mut().zip(&self.jacobian) {
            *m = -j;
        }
        for i in 0..n {
            matrix[i * n + i] += diagonal;
        }
        stats.n_decompositions += 1;
        if !self.lu.factorise() {
            return f64::NAN;
        }
        let inv_h = 1.0 / h;
        let one = 1.0;
        let [u1, u2, u3, u4, u5, u6] = &mut self.u;
        let (ys, fs, f_t, lu) = (&mut self.y_stage, &mut self.f_stage, &self.f_t, &self.lu);
        stage_rhs(u1, &self.f0, h * D1, f_t, inv_h, &[]);
        lu.solve(u1);
        combine!(ys = x + one * (A21, u1));
        rates.rates(t + C2 * h, ys, fs);
        stage_rhs(u2, fs, h * D2, f_t, inv_h, &[(C21, &u1[..])]);
        lu.solve(u2);
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
        lu.solve(u3);
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
        lu.solve(u4);
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
        lu.solve(u5);
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
        lu.solve(u6);
        stats.n_rate_evaluations += EVALS_PER_ATTEMPT;

        let (rtol, atol) = (control.rtol, control.atol);
        let mut err_sq = 0.0;
        let mut finite = true;
        for i in 0..n {
            let xn = ys[i] + u6[i];
            self.x_new[i] = xn;
            finite &= xn.is_finite();
            let sk = atol + rtol * x[i].abs().max(xn.abs());
            err_sq += (u6[i] / sk).powi(2);
        }
        if !finite {
            return f64::NAN;
        }
        (err_sq / n.max(1) as f64).sqrt()
    }

    /// The Jacobian and the time derivative at `(t, x)`: exact from `rates` when it has
    /// them, else by forward differences with Hairer's increments
    /// `sqrt(eps * max(1e-5, |x_j|))`.
    fn evaluate_jacobian<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        stats: &mut Stats,
    ) {
        let n = x.len();
        stats.n_jacobians += 1;
        if !rates.exact_jacobian(t, x, &mut self.jacobian) {
            self.y_stage.copy_from_slice(x);
            for (j, &xj) in x.iter().enumerate() {
                self.y_stage[j] = xj + (f64::EPSILON * xj.abs().max(DIFFERENCE_FLOOR)).sqrt();
                let delta = self.y_stage[j] - xj;
                rates.rates(t, &self.y_stage, &mut self.f_stage);
                for i in 0..n {
                    self.jacobian[i * n + j] = (self.f_stage[i] - self.f0[i]) / delta;
                }
                self.y_stage[j] = xj;
            }
            stats.n_rate_evaluations += n as u64;
        }
        if !rates.exact_time_derivative(t, x, &mut self.f_t) {
            let t1 = t + (f64::EPSILON * t.abs().max(DIFFERENCE_FLOOR)).sqrt();
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
        n_rate_evaluations: &mut u64,
        dense: bool,
    ) -> bool {
        rates.rates(t + h, &self.x_new, &mut self.f_new);
        *n_rate_evaluations += 1;
        if !self.f_new.iter().all(|v| v.is_finite()) {
            return false;
        }
        if dense {
            let mut coeffs = std::mem::take(&mut self.dense);
            let finite = self.build_dense(x, &mut coeffs);
            self.dense = coeffs;
            if !finite {
                return false;
            }
        }
        self.estimate_spectral_radius();
        std::mem::swap(&mut self.f0, &mut self.f_new);
        self.jacobian_current = false;
        true
    }

    /// The interpolant of the step completed last, which started from `start`, into
    /// `coeffs` (`n_terms * dim`, the terms after the fourth set to zero); false if not
    /// finite.
    pub(super) fn build_dense(&self, start: &[f64], coeffs: &mut [f64]) -> bool {
        let n = start.len();
        let (c0, rest) = coeffs.split_at_mut(n);
        let (c1, rest) = rest.split_at_mut(n);
        let (c2, rest) = rest.split_at_mut(n);
        let (c3, padding) = rest.split_at_mut(n);
        padding.fill(0.0);
        let [u1, u2, u3, u4, u5, _] = &self.u;
        let mut finite = true;
        for i in 0..n {
            c0[i] = start[i];
            c1[i] = self.x_new[i] - start[i];
            c2[i] = D21 * u1[i] + D22 * u2[i] + D23 * u3[i] + D24 * u4[i] + D25 * u5[i];
            c3[i] = D31 * u1[i] + D32 * u2[i] + D33 * u3[i] + D34 * u4[i] + D35 * u5[i];
            finite &= (c2[i] + c3[i]).is_finite();
        }
        finite
    }

    /// Two steps of the power method on the Jacobian, continued from step to step:
    /// `rho ~ sqrt(|J^2 v| / |v|)` (the square root of two products also settles on a
    /// complex pair, where one product alternates).
    fn estimate_spectral_radius(&mut self) {
        let n = self.probe.len();
        let norm = |v: &[f64]| v.iter().map(|z| z * z).sum::<f64>().sqrt();
        let mut v_norm = norm(&self.probe);
        if !(v_norm > 0.0 && v_norm.is_finite()) {
            self.probe = probe_start(n);
            v_norm = norm(&self.probe);
        }
        let jac = &self.jacobian;
        let product = |v: &[f64], out: &mut [f64]| {
            for (i, o) in out.iter_mut().enumerate() {
                *o = jac[i * n..(i + 1) * n]
                    .iter()
                    .zip(v)
                    .map(|(a, b)| a * b)
                    .sum();
            }
        };
        product(&self.probe, &mut self.probe_next);
        product(&self.probe_next, &mut self.probe);
        let z_norm = norm(&self.probe);
        if z_norm > 0.0 && z_norm.is_finite() && v_norm > 0.0 {
            self.spectral_radius = (z_norm / v_norm).sqrt();
            for v in &mut self.probe {
                *v /= z_norm;
            }
        } else {
            self.spectral_radius = 0.0;
            self.probe = probe_start(n);
        }
    }
}

/// A start vector for the power method with no structure a model's Jacobian is likely to
/// share (a vector of ones is an eigenvector of every symmetric coupling of equal states):
/// `1 + frac(0.618... i)`.
fn probe_start(dim: usize) -> Vec<f64> {
    const GOLDEN_FRACTION: f64 = 0.618_033_988_749_894_9;
    (0..dim)
        .map(|i| 1.0 + (i as f64 * GOLDEN_FRACTION).fract())
        .collect()
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
