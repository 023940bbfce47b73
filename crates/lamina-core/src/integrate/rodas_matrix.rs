//! The stiff method's Jacobian and its iteration matrix `I / (h gamma) - J`: one dense matrix
//! of the whole system, or, for variational equations, the model's own `n x n` matrix with
//! the block structure of the whole system solved exactly.
//!
//! The Jacobian of a model with `m` tangent vectors `q_k' = J(x) q_k` is block lower
//! triangular: `J` on the diagonal (once for the model, once for every vector) and, in the
//! rows of vector `k`, the coupling `H_k u = (D J(x)[u]) q_k`. Solving
//! `(I / (h gamma) - J_whole) (u, v_k) = (b, c_k)` is therefore `A u = b` followed by
//! `A v_k = c_k + H_k u` with `A = I / (h gamma) - J`: one `n x n` factorisation serves all
//! `1 + m` blocks, and `H_k u` is the change of `J q_k` along `u`, taken as a difference of
//! the model's Jacobian. The memory is `O(n^2)` instead of `(n + n m)^2`, which for
//! `m = n = 200` is the difference between 0.6 MB and 13 GB.

use super::linear::Lu;
use super::{Rates, Stats, TangentLayout};

/// Smallest increment scale of the difference Jacobian (Hairer's `MAX(1D-5, |y|)`).
pub(super) const DIFFERENCE_FLOOR: f64 = 1e-5;

/// What the matrices are for: set on the first evaluation, from the rates.
#[derive(Clone, Debug)]
enum Shape {
    /// Nothing evaluated yet (nothing allocated).
    Unset,
    /// The whole system's Jacobian, `dim x dim`.
    Whole { dim: usize },
    /// Variational equations: the model's Jacobian, `n x n`.
    Tangent {
        layout: TangentLayout,
        /// The model's state moved along a stage solution, and the Jacobian there.
        shifted_state: Vec<f64>,
        shifted_jacobian: Vec<f64>,
        /// One tangent block of a right-hand side, gathered, and one tangent vector.
        block: Vec<f64>,
        vector: Vec<f64>,
    },
}

/// The Jacobian of the last evaluation, its factorised iteration matrix and the power-method
/// probe for the spectral radius. Matrices are allocated on the first evaluation, sized by
/// what the rates are.
#[derive(Clone, Debug)]
pub(super) struct IterationMatrix {
    shape: Shape,
    /// Row-major, `size x size`.
    jacobian: Vec<f64>,
    /// `I / (h gamma) - J`, factorised.
    lu: Lu,
    /// The largest absolute row sum of the Jacobian (an upper bound of its spectral radius).
    norm: f64,
    probe: Vec<f64>,
    probe_next: Vec<f64>,
}

impl IterationMatrix {
    /// Nothing allocated until the first evaluation.
    pub(super) fn new() -> Self {
        Self {
            shape: Shape::Unset,
            jacobian: Vec::new(),
            lu: Lu::new(0),
            norm: 0.0,
            probe: Vec::new(),
            probe_next: Vec::new(),
        }
    }

    /// Bytes the matrices take for a system of `dim` states whose stiff method works with
    /// `size x size` matrices (`dim`, or `n` for variational equations).
    pub(super) fn bytes(dim: usize, size: usize) -> u64 {
        let size = size as u64;
        let matrices = 2 * size * size * 8 + size * 8 + 2 * size * 8;
        let tangent = if size as usize == dim {
            0
        } else {
            (size * size + 3 * size) * 8
        };
        matrices + tangent
    }

    /// Size of the matrices: the whole system's dimension or the model's.
    fn size(&self) -> usize {
        match &self.shape {
            Shape::Unset => 0,
            Shape::Whole { dim } => *dim,
            Shape::Tangent { layout, .. } => layout.n,
        }
    }

    /// Makes the storage fit `rates` with `dim` states.
    fn fit<R: Rates + ?Sized>(&mut self, rates: &R, dim: usize) {
        let layout = rates.tangent_layout().filter(|l| l.dim() == dim);
        let fits = match (&self.shape, layout) {
            (Shape::Whole { dim: d }, None) => *d == dim,
            (Shape::Tangent { layout: old, .. }, Some(new)) => *old == new,
            _ => false,
        };
        if fits {
            return;
        }
        self.shape = match layout {
            None => Shape::Whole { dim },
            Some(layout) => Shape::Tangent {
                layout,
                shifted_state: vec![0.0; layout.n],
                shifted_jacobian: vec![0.0; layout.n * layout.n],
                block: vec![0.0; layout.n],
                vector: vec![0.0; layout.n],
            },
        };
        let size = self.size();
        self.jacobian = vec![0.0; size * size];
        self.lu = Lu::new(size);
        self.probe = probe_start(size);
        self.probe_next = vec![0.0; size];
    }

    /// The Jacobian at `(t, x)`: exact from `rates` when it has it (the model's alone for
    /// variational equations), else by forward differences with Hairer's increments
    /// `sqrt(eps * max(1e-5, |x_j|))`, using `f0 = f(t, x)` and two scratch vectors.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn evaluate<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        f0: &[f64],
        y_scratch: &mut [f64],
        f_scratch: &mut [f64],
        stats: &mut Stats,
    ) {
        let dim = x.len();
        self.fit(rates, dim);
        stats.n_jacobians += 1;
        let size = self.size();
        match &self.shape {
            Shape::Tangent { layout, .. } => {
                rates.model_jacobian(t, &x[..layout.n], &mut self.jacobian);
            }
            _ => {
                if !rates.exact_jacobian(t, x, &mut self.jacobian) {
                    y_scratch.copy_from_slice(x);
                    for (j, &xj) in x.iter().enumerate() {
                        y_scratch[j] = xj + (f64::EPSILON * xj.abs().max(DIFFERENCE_FLOOR)).sqrt();
                        let delta = y_scratch[j] - xj;
                        rates.rates(t, y_scratch, f_scratch);
                        for i in 0..dim {
                            self.jacobian[i * dim + j] = (f_scratch[i] - f0[i]) / delta;
                        }
                        y_scratch[j] = xj;
                    }
                    stats.n_rate_evaluations += dim as u64;
                }
            }
        }
        self.norm = self
            .jacobian
            .chunks_exact(size.max(1))
            .map(|row| row.iter().map(|v| v.abs()).sum::<f64>())
            .fold(0.0, f64::max);
    }

    /// The largest absolute row sum of the last Jacobian: `h` times it below 1 means the step
    /// is not stiff.
    pub(super) fn norm(&self) -> f64 {
        self.norm
    }

    /// Factorises `I / (h gamma) - J` with `diagonal = 1 / (h gamma)`; false when singular
    /// or not finite.
    pub(super) fn factorise(&mut self, diagonal: f64, stats: &mut Stats) -> bool {
        let size = self.size();
        let matrix = self.lu.matrix_mut();
        for (m, j) in matrix.iter_mut().zip(&self.jacobian) {
            *m = -j;
        }
        for i in 0..size {
            matrix[i * size + i] += diagonal;
        }
        stats.n_decompositions += 1;
        self.lu.factorise()
    }

    /// Solves `(I / (h gamma) - J) z = rhs` in place with the last factorisation. For
    /// variational equations `x` is the state where the Jacobian was evaluated (the start of
    /// the step), whose tangent vectors the coupling blocks multiply.
    pub(super) fn solve<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        rhs: &mut [f64],
        stats: &mut Stats,
    ) {
        let Shape::Tangent {
            layout,
            shifted_state,
            shifted_jacobian,
            block,
            vector,
        } = &mut self.shape
        else {
            self.lu.solve(rhs);
            return;
        };
        let n = layout.n;
        let (u, tangent_rhs) = rhs.split_at_mut(n);
        self.lu.solve(u);
        // H_k u = (D J[u]) q_k by a forward difference of the model's Jacobian along u
        let u_size = u.iter().fold(0.0_f64, |a, v| a.max(v.abs()));
        let coupled = u_size > 0.0 && u_size.is_finite();
        let mut scale = 0.0;
        if coupled {
            let x_size = x[..n].iter().fold(0.0_f64, |a, v| a.max(v.abs()));
            let epsilon = f64::EPSILON.sqrt() * x_size.max(DIFFERENCE_FLOOR) / u_size;
            for ((s, &xi), &ui) in shifted_state.iter_mut().zip(&x[..n]).zip(u.iter()) {
                *s = xi + epsilon * ui;
            }
            rates.model_jacobian(t, shifted_state, shifted_jacobian);
            stats.n_jacobians += 1;
            for (s, j) in shifted_jacobian.iter_mut().zip(&self.jacobian) {
                *s -= j;
            }
            scale = 1.0 / epsilon;
        }
        for k in 0..layout.m {
            for (i, b) in block.iter_mut().enumerate() {
                *b = tangent_rhs[layout.index(k, i) - n];
            }
            if coupled {
                for (i, v) in vector.iter_mut().enumerate() {
                    *v = x[layout.index(k, i)];
                }
                for (b, row) in block.iter_mut().zip(shifted_jacobian.chunks_exact(n)) {
                    let change: f64 = row.iter().zip(vector.iter()).map(|(a, q)| a * q).sum();
                    *b += scale * change;
                }
            }
            self.lu.solve(block);
            for (i, b) in block.iter().enumerate() {
                tangent_rhs[layout.index(k, i) - n] = *b;
            }
        }
    }

    /// Two steps of the power method on the (model's) Jacobian, continued from step to step:
    /// `rho ~ sqrt(|J^2 v| / |v|)` (the square root of two products also settles on a
    /// complex pair, where one product alternates). The whole Jacobian of variational
    /// equations has the model's eigenvalues, so the model's matrix is enough.
    pub(super) fn spectral_radius(&mut self) -> f64 {
        let n = self.size();
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
            for v in &mut self.probe {
                *v /= z_norm;
            }
            (z_norm / v_norm).sqrt()
        } else {
            self.probe = probe_start(n);
            0.0
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
