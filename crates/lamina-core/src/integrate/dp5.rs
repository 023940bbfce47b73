//! Dormand–Prince 5(4): the 7-stage FSAL pair with Shampine's fourth-order dense output.
//!
//! Coefficients: Dormand & Prince, J. Comput. Appl. Math. 6 (1980) 19–26, as used in
//! Hairer's DOPRI5; dense output as in DOPRI5's `CONTD5`.

use super::{ErrorScale, Rates};

pub(super) const C2: f64 = 0.2;
pub(super) const C3: f64 = 0.3;
pub(super) const C4: f64 = 0.8;
pub(super) const C5: f64 = 8.0 / 9.0;

pub(super) const A21: f64 = 0.2;
pub(super) const A31: f64 = 3.0 / 40.0;
pub(super) const A32: f64 = 9.0 / 40.0;
pub(super) const A41: f64 = 44.0 / 45.0;
pub(super) const A42: f64 = -56.0 / 15.0;
pub(super) const A43: f64 = 32.0 / 9.0;
pub(super) const A51: f64 = 19372.0 / 6561.0;
pub(super) const A52: f64 = -25360.0 / 2187.0;
pub(super) const A53: f64 = 64448.0 / 6561.0;
pub(super) const A54: f64 = -212.0 / 729.0;
pub(super) const A61: f64 = 9017.0 / 3168.0;
pub(super) const A62: f64 = -355.0 / 33.0;
pub(super) const A63: f64 = 46732.0 / 5247.0;
pub(super) const A64: f64 = 49.0 / 176.0;
pub(super) const A65: f64 = -5103.0 / 18656.0;
// row 7 is the fifth-order solution b (b2 = b7 = 0)
pub(super) const A71: f64 = 35.0 / 384.0;
pub(super) const A73: f64 = 500.0 / 1113.0;
pub(super) const A74: f64 = 125.0 / 192.0;
pub(super) const A75: f64 = -2187.0 / 6784.0;
pub(super) const A76: f64 = 11.0 / 84.0;

/// Error weights `b - bhat`.
pub(super) const E1: f64 = 71.0 / 57600.0;
pub(super) const E3: f64 = -71.0 / 16695.0;
pub(super) const E4: f64 = 71.0 / 1920.0;
pub(super) const E5: f64 = -17253.0 / 339200.0;
pub(super) const E6: f64 = 22.0 / 525.0;
pub(super) const E7: f64 = -1.0 / 40.0;

/// Dense output (Shampine 1986), the fifth interpolant coefficient.
pub(super) const D1: f64 = -12715105075.0 / 11282082432.0;
pub(super) const D3: f64 = 87487479700.0 / 32700410799.0;
pub(super) const D4: f64 = -10690763975.0 / 1880347072.0;
pub(super) const D5: f64 = 701980252875.0 / 199316789632.0;
pub(super) const D6: f64 = -1453857185.0 / 822651844.0;
pub(super) const D7: f64 = 69997945.0 / 29380423.0;

/// Number of coefficient vectors of the interpolant.
pub(super) const N_TERMS: usize = 5;
/// Classical order, used by the automatic initial step.
pub(super) const ORDER: i32 = 5;
/// Rate evaluations of one step attempt (stages 2 to 7).
pub(super) const EVALS_PER_ATTEMPT: u64 = 6;

/// Vectors of the system's length that the stepper holds besides its interpolant (the fields
/// below: 7 stages, the stage state and the new state), for estimates of a run's memory.
pub(super) const VECTORS: usize = 9;

/// Stage vectors and scratch of the Dormand–Prince 5(4) stepper, allocated once.
#[derive(Clone, Debug)]
pub(super) struct Dp5 {
    /// `k[0]` is `f(t, x)` at the current state (first same as last), `k[1..7]` stages 2–7.
    k: [Vec<f64>; 7],
    /// State at which a stage is evaluated.
    y_stage: Vec<f64>,
    /// Fifth-order solution at `t + h` of the last attempt.
    x_new: Vec<f64>,
    /// Interpolant coefficients of the last accepted attempt, `N_TERMS * dim`.
    dense: Vec<f64>,
}

impl Dp5 {
    /// Buffers for `dim` states.
    pub(super) fn new(dim: usize) -> Self {
        Self {
            k: std::array::from_fn(|_| vec![0.0; dim]),
            y_stage: vec![0.0; dim],
            x_new: vec![0.0; dim],
            dense: vec![0.0; N_TERMS * dim],
        }
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
        self.k.swap(0, 6);
    }

    /// Interpolant coefficients of the last completed step (swapped out by the integrator).
    pub(super) fn dense_mut(&mut self) -> &mut Vec<f64> {
        &mut self.dense
    }

    /// Attempts a step of size `h` from `(t, x)`; `f0` must hold `f(t, x)`.
    ///
    /// Leaves the new state in `x_new` and returns the scaled error norm of DOPRI5
    /// (`<= 1` means acceptable). Returns NaN when a stage or the new state is not finite.
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
        let [k1, k2, k3, k4, k5, k6, k7] = &mut self.k;
        let ys = &mut self.y_stage;
        combine!(ys = x + h * (A21, k1));
        rates.rates(t + C2 * h, ys, k2);
        combine!(ys = x + h * (A31, k1; A32, k2));
        rates.rates(t + C3 * h, ys, k3);
        combine!(ys = x + h * (A41, k1; A42, k2; A43, k3));
        rates.rates(t + C4 * h, ys, k4);
        combine!(ys = x + h * (A51, k1; A52, k2; A53, k3; A54, k4));
        rates.rates(t + C5 * h, ys, k5);
        combine!(ys = x + h * (A61, k1; A62, k2; A63, k3; A64, k4; A65, k5));
        let t_end = t + h;
        rates.rates(t_end, ys, k6);
        let x_new = &mut self.x_new;
        combine!(x_new = x + h * (A71, k1; A73, k3; A74, k4; A75, k5; A76, k6));
        rates.rates(t_end, x_new, k7);
        *n_rate_evaluations += EVALS_PER_ATTEMPT;

        let n = x.len();
        let (x, x_new) = (&x[..n], &x_new[..n]);
        let (k1, k3, k4, k5, k6, k7) = (&k1[..n], &k3[..n], &k4[..n], &k5[..n], &k6[..n], &k7[..n]);
        let (rtol, atol, controlled) = (scale.rtol, scale.atol, scale.controlled.min(n));
        let mut err_sq = 0.0;
        let mut finite = true;
        for i in 0..n {
            finite &= x_new[i].is_finite();
            if i < controlled {
                let sk = atol + rtol * x[i].abs().max(x_new[i].abs());
                let e = h
                    * (E1 * k1[i] + E3 * k3[i] + E4 * k4[i] + E5 * k5[i] + E6 * k6[i] + E7 * k7[i]);
                err_sq += (e / sk) * (e / sk);
            }
        }
        if !finite {
            return f64::NAN;
        }
        (err_sq / controlled.max(1) as f64).sqrt()
    }

    /// Completes an accepted attempt of size `h` from `x`: with `dense` builds the
    /// interpolant (into [`Dp5::dense_mut`]), and makes the last stage the first of the next
    /// step. Returns whether everything is finite (if not, nothing of the current step is
    /// changed). Without `dense`, [`Dp5::build_dense`] builds the interpolant later, as long
    /// as no other attempt has been made since.
    #[inline]
    pub(super) fn finish(&mut self, x: &[f64], h: f64, dense: bool) -> bool {
        if !self.k[6].iter().all(|v| v.is_finite()) {
            return false;
        }
        if dense {
            let mut coeffs = std::mem::take(&mut self.dense);
            let finite = self.interpolant(x, h, Order::BeforeSwap, &mut coeffs);
            self.dense = coeffs;
            if !finite {
                return false;
            }
        }
        self.k.swap(0, 6);
        true
    }

    /// Builds the interpolant of the step just completed by [`Dp5::finish`] without `dense`
    /// (of size `h` from the state `start`) into `coeffs`; returns whether it is finite.
    pub(super) fn build_dense(&self, start: &[f64], h: f64, coeffs: &mut [f64]) -> bool {
        self.interpolant(start, h, Order::AfterSwap, coeffs)
    }

    /// The interpolant coefficients. The first and last stages trade places when a step
    /// completes, so `order` says where they are.
    fn interpolant(&self, x: &[f64], h: f64, order: Order, coeffs: &mut [f64]) -> bool {
        let n = x.len();
        let [first, _, k3, k4, k5, k6, last] = &self.k;
        let (k1, k7) = match order {
            Order::BeforeSwap => (first, last),
            Order::AfterSwap => (last, first),
        };
        let (x, x_new) = (&x[..n], &self.x_new[..n]);
        let (k1, k3, k4, k5, k6, k7) = (&k1[..n], &k3[..n], &k4[..n], &k5[..n], &k6[..n], &k7[..n]);
        let (c0, rest) = coeffs.split_at_mut(n);
        let (c1, rest) = rest.split_at_mut(n);
        let (c2, rest) = rest.split_at_mut(n);
        let (c3, c4) = rest.split_at_mut(n);
        let c4 = &mut c4[..n];
        let mut finite = true;
        for i in 0..n {
            let y_diff = x_new[i] - x[i];
            let b_spline = h * k1[i] - y_diff;
            c0[i] = x[i];
            c1[i] = y_diff;
            c2[i] = b_spline;
            c3[i] = y_diff - h * k7[i] - b_spline;
            c4[i] =
                h * (D1 * k1[i] + D3 * k3[i] + D4 * k4[i] + D5 * k5[i] + D6 * k6[i] + D7 * k7[i]);
            finite &= c4[i].is_finite() && c3[i].is_finite();
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

#[cfg(test)]
mod tests {
    use super::*;

    const C: [f64; 7] = [0.0, C2, C3, C4, C5, 1.0, 1.0];
    const A: [&[f64]; 7] = [
        &[],
        &[A21],
        &[A31, A32],
        &[A41, A42, A43],
        &[A51, A52, A53, A54],
        &[A61, A62, A63, A64, A65],
        &[A71, 0.0, A73, A74, A75, A76],
    ];
    // Dormand & Prince, J. Comput. Appl. Math. 6 (1980) 19–26 (REFERENCES case 13)
    const B: [f64; 7] = [
        35.0 / 384.0,
        0.0,
        500.0 / 1113.0,
        125.0 / 192.0,
        -2187.0 / 6784.0,
        11.0 / 84.0,
        0.0,
    ];
    // Dormand & Prince, J. Comput. Appl. Math. 6 (1980) 19–26 (REFERENCES case 13)
    const B_HAT: [f64; 7] = [
        5179.0 / 57600.0,
        0.0,
        7571.0 / 16695.0,
        393.0 / 640.0,
        -92097.0 / 339200.0,
        187.0 / 2100.0,
        1.0 / 40.0,
    ];
    const E: [f64; 7] = [E1, 0.0, E3, E4, E5, E6, E7];

    fn quadrature(weights: &[f64], k: i32) -> f64 {
        weights.iter().zip(C).map(|(b, c)| b * c.powi(k - 1)).sum()
    }

    #[test]
    fn fifth_order_weights_meet_the_quadrature_conditions() {
        for k in 1..=5 {
            // [analytic] order conditions sum(b c^(k-1)) = 1/k; REFERENCES case 13
            assert!(
                (quadrature(&B, k) - 1.0 / f64::from(k)).abs() < 1e-15,
                "k = {k}"
            );
        }
    }

    #[test]
    fn fourth_order_weights_meet_the_quadrature_conditions() {
        for k in 1..=4 {
            // [analytic] order conditions of the embedded fourth-order solution
            assert!(
                (quadrature(&B_HAT, k) - 1.0 / f64::from(k)).abs() < 1e-15,
                "k = {k}"
            );
        }
    }

    #[test]
    fn row_sums_equal_the_nodes() {
        for (row, c) in A.iter().zip(C).skip(1) {
            let sum: f64 = row.iter().sum();
            // [analytic] row-sum condition sum_j a_ij = c_i
            assert!((sum - c).abs() < 1e-14, "c = {c}");
        }
    }

    #[test]
    fn last_row_is_the_solution_weights_and_error_weights_are_their_difference() {
        for (j, a) in A[6].iter().enumerate() {
            assert_eq!(*a, B[j]);
        }
        for j in 0..7 {
            // Dormand & Prince (1980): error weights are b - bhat
            assert!((E[j] - (B[j] - B_HAT[j])).abs() < 1e-16, "j = {j}");
        }
    }
}
