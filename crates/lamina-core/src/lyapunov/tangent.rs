//! The variational equations: the model's state together with tangent vectors that move with
//! the linearised flow, `x' = f(t, x)`, `q_k' = J(t, x) q_k`, as one system of `Rates`.

use crate::expr::DirectionalKernel;
use crate::integrate::{Rates, TangentLayout};
use crate::model::Model;

/// The most tangent vectors evaluated by the model's directional kernel (rates and `J q_k` in
/// one machine-code call); more go the matrix path (rates, Jacobian, product). Forward mode
/// along the vectors costs about the program's length per vector, the product `n` per row and
/// vector over a Jacobian made once: `cargo bench -p lamina-core --bench throughput` has one
/// call 2.7 times as fast as the matrix path for one vector of the 20-state chain, 1.4 times
/// for three, and slower from four on (and it takes longer to make).
const MAX_VECTORS_IN_ONE_CALL: usize = 3;

/// The model extended by `m` tangent vectors: the state is `x` (n values) followed by the
/// tangent vectors one after another (`n` values each), `n + n * m` values in all.
#[derive(Clone, Debug)]
pub(crate) struct Tangent {
    model: Model,
    n: usize,
    m: usize,
    /// Row-major Jacobian at the last evaluation (where there is no directional kernel).
    jacobian: Vec<f64>,
    /// The model's rates with their derivatives along the `m` vectors in one machine-code
    /// call, looked up on the first evaluation (the code is shared by every clone of the
    /// model); `Some(None)` where the host has no machine code or `m` is above
    /// [`MAX_VECTORS_IN_ONE_CALL`].
    directional: Option<Option<DirectionalKernel>>,
}

impl Tangent {
    /// The model with `m` tangent vectors.
    pub(crate) fn new(model: Model, m: usize) -> Self {
        let n = model.dim();
        Self {
            model,
            n,
            m,
            jacobian: vec![0.0; n * n],
            directional: None,
        }
    }

    /// The model.
    pub(crate) fn model(&self) -> &Model {
        &self.model
    }

    /// The model alone (for integrating without tangent vectors).
    pub(crate) fn model_mut(&mut self) -> &mut Model {
        &mut self.model
    }
}

impl Rates for Tangent {
    fn dim(&self) -> usize {
        self.n + self.n * self.m
    }

    fn rates(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        let (model, m) = (&self.model, self.m);
        let kernel = self.directional.get_or_insert_with(|| {
            (m <= MAX_VECTORS_IN_ONE_CALL)
                .then(|| model.program().directional_kernel(m))
                .flatten()
        });
        if let Some(kernel) = kernel
            && kernel.eval(t, y, model.parameters(), dy)
        {
            return;
        }
        self.rates_by_matrix(t, y, dy);
    }

    /// The tangent vectors one after another, so the stiff method factorises the model's
    /// `n x n` matrices only.
    fn tangent_layout(&self) -> Option<TangentLayout> {
        Some(TangentLayout::vectors(self.n, self.m))
    }

    fn model_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) {
        self.model.jacobian(t, x, jacobian);
    }
}

impl Tangent {
    /// The rates without the directional kernel: the model's rates, its Jacobian, and the
    /// Jacobian times each vector (the path of every step for more vectors than one call
    /// takes, or where there is no machine code).
    #[inline(never)]
    fn rates_by_matrix(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        let n = self.n;
        let (x, vectors) = y.split_at(n);
        let (dx, dvectors) = dy.split_at_mut(n);
        self.model.rates(t, x, dx);
        self.model.jacobian(t, x, &mut self.jacobian);
        for (q, dq) in vectors.chunks_exact(n).zip(dvectors.chunks_exact_mut(n)) {
            for (row, out) in self.jacobian.chunks_exact(n).zip(dq.iter_mut()) {
                *out = row.iter().zip(q).map(|(a, b)| a * b).sum();
            }
        }
    }
}

/// Writes `m` starting tangent vectors for `n` states into `out` (`n * m` values): the
/// coordinate axes tilted by a fixed, irregular amount, not yet orthonormal.
///
/// The axes themselves are often special directions of a model (an invariant axis or plane,
/// a direction the flow never mixes into), where a tangent vector could stay for a long time
/// and bias the estimates; tilted axes have a part along every direction. The tilt is fixed,
/// so runs are reproducible. Every entry off the axis is below `0.9 / n` in size, so the
/// `n x n` matrix of all tilted axes is strictly diagonally dominant and any `m` of them are
/// independent.
pub(crate) fn tilted_axes(n: usize, m: usize, out: &mut [f64]) {
    let tilt = 0.9 / n as f64;
    for (k, column) in out.chunks_exact_mut(n).take(m).enumerate() {
        for (i, value) in column.iter_mut().enumerate() {
            // an irregular pattern in (-1, 1)
            let wiggle = (1.0 + 1.7 * i as f64 + 2.9 * k as f64).sin();
            *value = if i == k { 1.0 } else { tilt * wiggle };
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{ModelSpec, ParameterSpec, StateSpec};

    #[test]
    fn one_call_and_the_matrix_path_give_the_same_rates() {
        let state = |name: &str, rate: &str| StateSpec {
            name: name.into(),
            start: 1.0,
            rate: rate.into(),
        };
        let model = Model::compile(&ModelSpec {
            states: vec![
                state("x", "a - (b + 1)*x + x^2*y"),
                state("y", "b*x - x^2*y"),
            ],
            parameters: vec![
                ParameterSpec {
                    name: "a".into(),
                    value: 1.0,
                },
                ParameterSpec {
                    name: "b".into(),
                    value: 3.0,
                },
            ],
        })
        .expect("compiles");
        for m in 1..=MAX_VECTORS_IN_ONE_CALL {
            let mut tangent = Tangent::new(model.clone(), m);
            let mut y = vec![0.7, 2.9];
            let mut axes = vec![0.0; 2 * m];
            tilted_axes(2, m.min(2), &mut axes);
            y.extend_from_slice(&axes);
            let (mut one_call, mut by_matrix) = (vec![0.0; y.len()], vec![0.0; y.len()]);
            tangent.rates(0.0, &y, &mut one_call);
            assert!(matches!(tangent.directional, Some(Some(_))), "machine code");
            tangent.rates_by_matrix(0.0, &y, &mut by_matrix);
            // the rates bit for bit, the derivatives to rounding
            assert_eq!(one_call[..2], by_matrix[..2]);
            for (a, b) in one_call[2..].iter().zip(&by_matrix[2..]) {
                // [common practice] forward mode and the matrix product sum in another order
                assert!((a - b).abs() <= 1e-14 * (1.0 + b.abs()), "{a} vs {b}");
            }
        }
    }
}
