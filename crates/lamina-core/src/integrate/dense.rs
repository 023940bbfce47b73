//! Continuous (dense) output of one accepted step.

/// The dense output of one accepted step from `t0` to `t0 + h`.
///
/// Every method's interpolant has one nested form: with `s = (t - t0) / h` and
/// `r = 1 - s`, `y(t) = c0 + s (c1 + r (c2 + s (c3 + r (c4 + ...))))`, alternating `s` and `r`.
/// Dormand–Prince 5(4) has 5 coefficient vectors, DOP853 8, Rodas4 4 (8 under `Automatic`, the
/// last four zero). `c0` is the state at `t0` and
/// `c0 + c1` the state at `t0 + h`.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct DenseSegment {
    /// Start time of the step.
    pub t0: f64,
    /// Step length (positive).
    pub h: f64,
    /// Number of states.
    pub dim: usize,
    /// `n_terms * dim` coefficients, term-major: term `j`, state `i` at `j * dim + i`.
    pub coeffs: Vec<f64>,
}

impl DenseSegment {
    /// Number of coefficient vectors (4, 5 or 8).
    pub fn n_terms(&self) -> usize {
        self.coeffs.len().checked_div(self.dim).unwrap_or(0)
    }

    /// End time of the step.
    pub fn t1(&self) -> f64 {
        self.t0 + self.h
    }

    /// Interpolated state at time `t` (meant for `t0 <= t <= t0 + h`) into `out`.
    pub fn eval(&self, t: f64, out: &mut [f64]) {
        eval_terms(&self.coeffs, self.dim, (t - self.t0) / self.h, out);
    }

    /// State at the start of the step.
    pub fn start_state(&self) -> &[f64] {
        &self.coeffs[..self.dim]
    }

    /// State at the end of the step into `out`.
    pub fn end_state(&self, out: &mut [f64]) {
        for (i, o) in out.iter_mut().enumerate().take(self.dim) {
            *o = self.coeffs[i] + self.coeffs[self.dim + i];
        }
    }
}

/// Evaluates the nested interpolant of `coeffs` (term-major, `dim` per term) at the fraction
/// `s` of the step into `out`. Shared by [`DenseSegment`] and the stored run.
pub fn eval_terms(coeffs: &[f64], dim: usize, s: f64, out: &mut [f64]) {
    eval_split(&coeffs[..dim], &coeffs[dim..], dim, s, out);
}

/// Evaluates the nested interpolant whose first term is `start` and whose remaining terms
/// are `terms` (term-major, `dim` per term) at the fraction `s` of the step into `out`.
/// Used by stored runs, which keep the start states apart from the other terms.
#[inline]
pub fn eval_split(start: &[f64], terms: &[f64], dim: usize, s: f64, out: &mut [f64]) {
    let n_rest = terms.len() / dim.max(1);
    let r = 1.0 - s;
    for i in 0..dim {
        let mut acc = terms[(n_rest - 1) * dim + i];
        // rest term j is full term j + 1: the factor after full term k is r for odd k
        for j in (0..n_rest - 1).rev() {
            let w = if (j + 1) % 2 == 1 { r } else { s };
            acc = terms[j * dim + i] + w * acc;
        }
        out[i] = start[i] + s * acc;
    }
}

/// The derivative with respect to the step fraction `s` of the nested interpolant of
/// [`eval_split`] (the state's time derivative times the step size) into `out`.
pub fn slope_split(start: &[f64], terms: &[f64], dim: usize, s: f64, out: &mut [f64]) {
    let n_rest = terms.len() / dim.max(1);
    let r = 1.0 - s;
    for (i, o) in out.iter_mut().enumerate().take(start.len().min(dim)) {
        let mut acc = terms[(n_rest - 1) * dim + i];
        let mut slope = 0.0;
        for j in (0..n_rest - 1).rev() {
            let (w, dw) = if (j + 1) % 2 == 1 {
                (r, -1.0)
            } else {
                (s, 1.0)
            };
            slope = dw * acc + w * slope;
            acc = terms[j * dim + i] + w * acc;
        }
        *o = acc + s * slope;
    }
}

/// Evaluates the first `out.len()` states of the nested interpolant of `coeffs` (term-major,
/// `dim` per term) at the fraction `s` of the step: the model's states of a system that
/// carries more (tangent vectors).
pub fn eval_prefix(coeffs: &[f64], dim: usize, s: f64, out: &mut [f64]) {
    let n_terms = coeffs.len() / dim.max(1);
    let r = 1.0 - s;
    for (i, o) in out.iter_mut().enumerate() {
        let mut acc = coeffs[(n_terms - 1) * dim + i];
        for j in (1..n_terms - 1).rev() {
            let w = if j % 2 == 1 { r } else { s };
            acc = coeffs[j * dim + i] + w * acc;
        }
        *o = coeffs[i] + s * acc;
    }
}
