//! Dormand–Prince 8(5,3), Hairer's DOP853: 12 stages per attempt, the combined 5th/3rd-order
//! error estimate, and three more stages for the seventh-order dense output of an accepted
//! step, evaluated only when that output is wanted.

use super::dop853_tableau::*;
use super::{ErrorScale, Rates};

/// Number of coefficient vectors of the interpolant.
pub(super) const N_TERMS: usize = 8;
/// Classical order, used by the automatic initial step.
pub(super) const ORDER: i32 = 8;
/// Rate evaluations of one step attempt (stages 2 to 12).
pub(super) const EVALS_PER_ATTEMPT: u64 = 11;
/// Further evaluations for the dense output of an accepted step (stages 14–16); stage 13,
/// `f` at the new state, is needed anyway as the first stage of the next step.
pub(super) const EVALS_FOR_DENSE: u64 = 3;

/// Vectors of the system's length that the stepper holds besides its interpolant (the fields
/// below: 16 stages, the stage state and the new state), for estimates of a run's memory.
pub(super) const VECTORS: usize = 18;

/// Stage vectors and scratch of the DOP853 stepper, allocated once.
#[derive(Clone, Debug)]
pub(super) struct Dop853 {
    /// `k[0]` is `f(t, x)` at the current state, `k[j]` stage `j + 1`.
    k: [Vec<f64>; 16],
    /// State at which a stage is evaluated.
    y_stage: Vec<f64>,
    /// Eighth-order solution at `t + h` of the last attempt.
    x_new: Vec<f64>,
    /// Interpolant coefficients of the last accepted attempt, `N_TERMS * dim`.
    dense: Vec<f64>,
    /// Whether accepted steps measure `h lambda` for the stiffness test.
    measure_stiffness: bool,
    /// `h lambda` of the last accepted step (see [`Dop853::finish`]).
    h_lambda: f64,
}

impl Dop853 {
    /// Buffers for `dim` states.
    pub(super) fn new(dim: usize) -> Self {
        Self {
            k: std::array::from_fn(|_| vec![0.0; dim]),
            y_stage: vec![0.0; dim],
            x_new: vec![0.0; dim],
            dense: vec![0.0; N_TERMS * dim],
            measure_stiffness: false,
            h_lambda: 0.0,
        }
    }

    /// Makes accepted steps measure `h lambda` for Hairer's stiffness test.
    pub(super) fn measure_stiffness(&mut self) {
        self.measure_stiffness = true;
    }

    /// `h lambda` of the last accepted step: `h |f(x1) - f(y12)| / |x1 - y12|`, the step size
    /// times an estimate of the Jacobian's dominant eigenvalue from the last two evaluations
    /// at `t + h` (Hairer's stiffness test in DOP853, Hairer & Wanner, Solving ODEs II,
    /// sec. IV.2). Zero unless [`Dop853::measure_stiffness`] was called.
    pub(super) fn h_lambda(&self) -> f64 {
        self.h_lambda
    }

    /// `f(t, x)` at the current state.
    pub(super) fn f0(&self) -> &[f64] {
        &self.k[0]
    }

    /// Place for `f(t, x)` at the current state.
    pub(super) fn f0_mut(&mut self) -> &mut [f64] {
        &mut self.k[0]
    }

    /// `f(t, x)` at the current state with two scratch vectors (free between steps).
    pub(super) fn f0_and_scratch(&mut self) -> (&[f64], &mut [f64], &mut [f64]) {
        let [k1, k2, ..] = &mut self.k;
        (k1, &mut self.y_stage, k2)
    }

    /// Solution at the end of the last attempt.
    pub(super) fn x_new(&self) -> &[f64] {
        &self.x_new
    }

    /// Goes back to the start of the step completed last: its first stage (`f` there)
    /// becomes current again.
    pub(super) fn rewind(&mut self) {
        self.k.swap(0, 12);
    }

    /// Interpolant coefficients of the last completed step (swapped out by the integrator).
    pub(super) fn dense_mut(&mut self) -> &mut Vec<f64> {
        &mut self.dense
    }

    /// Attempts a step of size `h` from `(t, x)`; `f0` must hold `f(t, x)`.
    ///
    /// Leaves the new state in `x_new` and returns DOP853's scaled error
    /// `err5^2 / sqrt(err5^2 + 0.01 err3^2)` (`<= 1` means acceptable). Returns NaN when a
    /// stage or the new state is not finite.
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub(super) fn attempt<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        scale: ErrorScale,
        n_rate_evaluations: &mut u64,
    ) -> f64 {
        // fused multiply-adds shorten the chain of stages each step waits on
        #[cfg(target_arch = "x86_64")]
        if std::arch::is_x86_feature_detected!("fma") {
            // SAFETY: the processor has the instructions the function is compiled for
            #[allow(unsafe_code)]
            return unsafe { self.attempt_fused(rates, t, x, h, scale, n_rate_evaluations) };
        }
        self.attempt_any_size::<R, false>(rates, t, x, h, scale, n_rate_evaluations)
    }

    /// [`Dop853::attempt`] compiled with fused multiply-adds.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "fma")]
    #[allow(clippy::too_many_arguments)]
    fn attempt_fused<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        scale: ErrorScale,
        n_rate_evaluations: &mut u64,
    ) -> f64 {
        self.attempt_any_size::<R, true>(rates, t, x, h, scale, n_rate_evaluations)
    }

    /// [`Dop853::attempt`] through the stage loops compiled for the number of states.
    #[inline(always)]
    #[allow(clippy::too_many_arguments)]
    fn attempt_any_size<R: Rates + ?Sized, const FUSED: bool>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        scale: ErrorScale,
        n_rate_evaluations: &mut u64,
    ) -> f64 {
        let e = n_rate_evaluations;
        // the stage loops compiled for the common small sizes run fully unrolled, with the
        // states in registers (about a fifth less time per step for three states)
        match x.len() {
            1 => self.attempt_sized::<R, 1, FUSED>(rates, t, x, h, scale, e),
            2 => self.attempt_sized::<R, 2, FUSED>(rates, t, x, h, scale, e),
            3 => self.attempt_sized::<R, 3, FUSED>(rates, t, x, h, scale, e),
            4 => self.attempt_sized::<R, 4, FUSED>(rates, t, x, h, scale, e),
            _ => self.attempt_sized::<R, 0, FUSED>(rates, t, x, h, scale, e),
        }
    }

    /// [`Dop853::attempt`] for `D` states (`D = 0`: any number, given by `x`).
    #[inline(always)]
    #[allow(clippy::too_many_arguments)]
    fn attempt_sized<R: Rates + ?Sized, const D: usize, const FUSED: bool>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        scale: ErrorScale,
        n_rate_evaluations: &mut u64,
    ) -> f64 {
        let x = if D == 0 { x } else { &x[..D] };
        let [k1, k2, k3, k4, k5, k6, k7, k8, k9, k10, k11, k12, ..] = &mut self.k;
        let ys = &mut self.y_stage;
        // a small model's stage states go to its machine code in registers, where it can
        let small = rates.takes_states_in_registers::<D>();
        combine!([FUSED] ys = x + h * (A21, k1));
        stage::<R, D>(rates, small, t + C2 * h, ys, k2);
        combine!([FUSED] ys = x + h * (A31, k1; A32, k2));
        stage::<R, D>(rates, small, t + C3 * h, ys, k3);
        combine!([FUSED] ys = x + h * (A41, k1; A43, k3));
        stage::<R, D>(rates, small, t + C4 * h, ys, k4);
        combine!([FUSED] ys = x + h * (A51, k1; A53, k3; A54, k4));
        stage::<R, D>(rates, small, t + C5 * h, ys, k5);
        combine!([FUSED] ys = x + h * (A61, k1; A64, k4; A65, k5));
        stage::<R, D>(rates, small, t + C6 * h, ys, k6);
        combine!([FUSED] ys = x + h * (A71, k1; A74, k4; A75, k5; A76, k6));
        stage::<R, D>(rates, small, t + C7 * h, ys, k7);
        combine!([FUSED] ys = x + h * (A81, k1; A84, k4; A85, k5; A86, k6; A87, k7));
        stage::<R, D>(rates, small, t + C8 * h, ys, k8);
        combine!([FUSED] ys = x + h * (A91, k1; A94, k4; A95, k5; A96, k6; A97, k7; A98, k8));
        stage::<R, D>(rates, small, t + C9 * h, ys, k9);
        combine!([FUSED] ys = x + h * (A101, k1; A104, k4; A105, k5; A106, k6; A107, k7; A108, k8; A109, k9));
        stage::<R, D>(rates, small, t + C10 * h, ys, k10);
        combine!([FUSED] ys = x + h * (A111, k1; A114, k4; A115, k5; A116, k6; A117, k7; A118, k8; A119, k9;
            A1110, k10));
        stage::<R, D>(rates, small, t + C11 * h, ys, k11);
        combine!([FUSED] ys = x + h * (A121, k1; A124, k4; A125, k5; A126, k6; A127, k7; A128, k8; A129, k9;
            A1210, k10; A1211, k11));
        stage::<R, D>(rates, small, t + h, ys, k12);
        *n_rate_evaluations += EVALS_PER_ATTEMPT;

        let n = x.len();
        let x = &x[..n];
        let x_new = &mut self.x_new[..n];
        let (k1, k6, k7, k8, k9) = (&k1[..n], &k6[..n], &k7[..n], &k8[..n], &k9[..n]);
        let (k10, k11, k12) = (&k10[..n], &k11[..n], &k12[..n]);
        let ErrorScale {
            rtol,
            atol,
            controlled,
        } = scale;
        let controlled = controlled.min(n);
        let mut err5_sq = 0.0;
        let mut err3_sq = 0.0;
        let mut finite = true;
        for i in 0..n {
            let slope = B1 * k1[i]
                + B6 * k6[i]
                + B7 * k7[i]
                + B8 * k8[i]
                + B9 * k9[i]
                + B10 * k10[i]
                + B11 * k11[i]
                + B12 * k12[i];
            let xn = super::add_product::<FUSED>(x[i], h, slope);
            x_new[i] = xn;
            finite &= xn.is_finite();
            let sk = atol + rtol * x[i].abs().max(xn.abs());
            let e3 = (slope - BHH1 * k1[i] - BHH2 * k9[i] - BHH3 * k12[i]) / sk;
            let e5 = (ER1 * k1[i]
                + ER6 * k6[i]
                + ER7 * k7[i]
                + ER8 * k8[i]
                + ER9 * k9[i]
                + ER10 * k10[i]
                + ER11 * k11[i]
                + ER12 * k12[i])
                / sk;
            if i < controlled {
                err3_sq += e3 * e3;
                err5_sq += e5 * e5;
            }
        }
        if !finite {
            return f64::NAN;
        }
        let mut denominator = err5_sq + 0.01 * err3_sq;
        if denominator <= 0.0 {
            denominator = 1.0;
        }
        h.abs() * err5_sq * (1.0 / (controlled.max(1) as f64 * denominator)).sqrt()
    }

    /// Completes an accepted attempt of size `h` from `(t, x)`: evaluates stage 13 (`f` at
    /// the new state), with `dense` also stages 14–16 and the interpolant (into
    /// [`Dop853::dense_mut`]), and makes stage 13 the first stage of the next step. Returns
    /// whether everything is finite (if not, the current step's first stage is unchanged).
    ///
    /// Without `dense`, [`Dop853::build_dense`] builds the interpolant later, as long as no
    /// other attempt has been made since.
    #[inline]
    pub(super) fn finish<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        n_rate_evaluations: &mut u64,
        dense: bool,
    ) -> bool {
        rates.rates(t + h, &self.x_new, &mut self.k[12]);
        *n_rate_evaluations += 1;
        if !self.k[12].iter().all(|v| v.is_finite()) {
            return false;
        }
        if self.measure_stiffness {
            // stage 12 was evaluated at t + h too, at the state left in `y_stage`
            let (f12, f13) = (&self.k[11], &self.k[12]);
            let mut numerator = 0.0;
            let mut denominator = 0.0;
            for i in 0..x.len() {
                numerator += (f13[i] - f12[i]).powi(2);
                denominator += (self.x_new[i] - self.y_stage[i]).powi(2);
            }
            self.h_lambda = if denominator > 0.0 {
                h.abs() * (numerator / denominator).sqrt()
            } else {
                0.0
            };
        }
        if dense {
            let mut coeffs = std::mem::take(&mut self.dense);
            let finite = self.interpolant(
                rates,
                t,
                x,
                h,
                n_rate_evaluations,
                Order::BeforeSwap,
                &mut coeffs,
            );
            self.dense = coeffs;
            if !finite {
                return false;
            }
        }
        self.k.swap(0, 12);
        true
    }

    /// Builds the interpolant of the step just completed by [`Dop853::finish`] without
    /// `dense` (from `t` with size `h`; `start` is the state it started from) into `coeffs`
    /// (`N_TERMS * dim`). Evaluates stages 14–16; returns whether everything is finite.
    pub(super) fn build_dense<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        start: &[f64],
        h: f64,
        n_rate_evaluations: &mut u64,
        coeffs: &mut [f64],
    ) -> bool {
        self.interpolant(
            rates,
            t,
            start,
            h,
            n_rate_evaluations,
            Order::AfterSwap,
            coeffs,
        )
    }

    /// Stages 14–16 and the interpolant coefficients. Stage 1 and stage 13 trade places when
    /// a step completes, so `order` says where they are.
    #[allow(clippy::too_many_arguments)]
    fn interpolant<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        n_rate_evaluations: &mut u64,
        order: Order,
        coeffs: &mut [f64],
    ) -> bool {
        let [
            first,
            _,
            _,
            _,
            _,
            k6,
            k7,
            k8,
            k9,
            k10,
            k11,
            k12,
            last,
            k14,
            k15,
            k16,
        ] = &mut self.k;
        let (k1, k13) = match order {
            Order::BeforeSwap => (&*first, &*last),
            Order::AfterSwap => (&*last, &*first),
        };
        let ys = &mut self.y_stage;
        combine!(ys = x + h * (A141, k1; A147, k7; A148, k8; A149, k9; A1410, k10; A1411, k11;
            A1412, k12; A1413, k13));
        rates.rates(t + C14 * h, ys, k14);
        combine!(ys = x + h * (A151, k1; A156, k6; A157, k7; A158, k8; A1511, k11; A1512, k12;
            A1513, k13; A1514, k14));
        rates.rates(t + C15 * h, ys, k15);
        combine!(ys = x + h * (A161, k1; A166, k6; A167, k7; A168, k8; A169, k9; A1613, k13;
            A1614, k14; A1615, k15));
        rates.rates(t + C16 * h, ys, k16);
        *n_rate_evaluations += EVALS_FOR_DENSE;

        let n = x.len();
        let (x, x_new) = (&x[..n], &self.x_new[..n]);
        let (k1, k6, k7, k8, k9) = (&k1[..n], &k6[..n], &k7[..n], &k8[..n], &k9[..n]);
        let (k10, k11, k12, k13) = (&k10[..n], &k11[..n], &k12[..n], &k13[..n]);
        let (k14, k15, k16) = (&k14[..n], &k15[..n], &k16[..n]);
        let (c0, rest) = coeffs.split_at_mut(n);
        let (c1, rest) = rest.split_at_mut(n);
        let (c2, rest) = rest.split_at_mut(n);
        let (c3, rest) = rest.split_at_mut(n);
        let (c4, rest) = rest.split_at_mut(n);
        let (c5, rest) = rest.split_at_mut(n);
        let (c6, c7) = rest.split_at_mut(n);
        let c7 = &mut c7[..n];
        let mut finite = true;
        for i in 0..n {
            let y_diff = x_new[i] - x[i];
            let b_spline = h * k1[i] - y_diff;
            c0[i] = x[i];
            c1[i] = y_diff;
            c2[i] = b_spline;
            c3[i] = y_diff - h * k13[i] - b_spline;
            c4[i] = h
                * (D41 * k1[i]
                    + D46 * k6[i]
                    + D47 * k7[i]
                    + D48 * k8[i]
                    + D49 * k9[i]
                    + D410 * k10[i]
                    + D411 * k11[i]
                    + D412 * k12[i]
                    + D413 * k13[i]
                    + D414 * k14[i]
                    + D415 * k15[i]
                    + D416 * k16[i]);
            c5[i] = h
                * (D51 * k1[i]
                    + D56 * k6[i]
                    + D57 * k7[i]
                    + D58 * k8[i]
                    + D59 * k9[i]
                    + D510 * k10[i]
                    + D511 * k11[i]
                    + D512 * k12[i]
                    + D513 * k13[i]
                    + D514 * k14[i]
                    + D515 * k15[i]
                    + D516 * k16[i]);
            c6[i] = h
                * (D61 * k1[i]
                    + D66 * k6[i]
                    + D67 * k7[i]
                    + D68 * k8[i]
                    + D69 * k9[i]
                    + D610 * k10[i]
                    + D611 * k11[i]
                    + D612 * k12[i]
                    + D613 * k13[i]
                    + D614 * k14[i]
                    + D615 * k15[i]
                    + D616 * k16[i]);
            c7[i] = h
                * (D71 * k1[i]
                    + D76 * k6[i]
                    + D77 * k7[i]
                    + D78 * k8[i]
                    + D79 * k9[i]
                    + D710 * k10[i]
                    + D711 * k11[i]
                    + D712 * k12[i]
                    + D713 * k13[i]
                    + D714 * k14[i]
                    + D715 * k15[i]
                    + D716 * k16[i]);
            finite &= (c3[i] + c4[i] + c5[i] + c6[i] + c7[i]).is_finite();
        }
        finite
    }
}

/// Where the first stage of the step and `f` at its end are, relative to the swap that
/// makes the latter the first stage of the next step.
#[derive(Clone, Copy)]
enum Order {
    BeforeSwap,
    AfterSwap,
}

/// One stage's rates at `ys`: with `small` and a number of states `D` fixed at compile time,
/// the states by value (see [`Rates::rates_small`]), else as a slice.
#[inline(always)]
fn stage<R: Rates + ?Sized, const D: usize>(
    rates: &mut R,
    small: bool,
    t: f64,
    ys: &[f64],
    k: &mut [f64],
) {
    if D > 0 && small {
        let x: [f64; D] = std::array::from_fn(|i| ys[i]);
        rates.rates_small::<D>(t, x, k);
    } else {
        rates.rates(t, ys, k);
    }
}
