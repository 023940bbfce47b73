//! The variational equations: the state `x` and the `n x n` matrix `Phi` integrated together,
//! `x' = f(t, x)`, `Phi' = J(t, x) Phi`, as one system of `n + n^2` states.

use crate::integrate::{Rates, TangentLayout};
use crate::model::Model;

/// The model with its variational equations, as one right-hand side of dimension `n + n^2`.
///
/// The augmented state is `x` followed by `Phi` row-major (`Phi[i][j]` at `n + i * n + j`).
/// The Jacobian comes from the compiled model ([`Model::jacobian`], forward-mode derivatives
/// of the typed equations), not from finite differences.
#[derive(Debug)]
pub struct Variational<'m> {
    model: &'m mut Model,
    n: usize,
    with_matrix: bool,
    jacobian: Vec<f64>,
}

impl<'m> Variational<'m> {
    /// The variational system of `model`; without `with_matrix` only the model itself
    /// (dimension `n`), for following an orbit whose derivatives are not wanted.
    pub fn new(model: &'m mut Model, with_matrix: bool) -> Self {
        let n = model.dim();
        Self {
            model,
            n,
            with_matrix,
            jacobian: vec![0.0; if with_matrix { n * n } else { 0 }],
        }
    }

    /// The start state: `x0` followed (`with_matrix`) by the identity matrix.
    pub fn start(x0: &[f64], with_matrix: bool) -> Vec<f64> {
        let n = x0.len();
        if !with_matrix {
            return x0.to_vec();
        }
        let mut z = vec![0.0; n + n * n];
        z[..n].copy_from_slice(x0);
        for i in 0..n {
            z[n + i * n + i] = 1.0;
        }
        z
    }
}

impl Rates for Variational<'_> {
    fn dim(&self) -> usize {
        if self.with_matrix {
            self.n + self.n * self.n
        } else {
            self.n
        }
    }

    fn rates(&mut self, t: f64, z: &[f64], dz: &mut [f64]) {
        let n = self.n;
        let (x, phi) = z.split_at(n);
        let (dx, dphi) = dz.split_at_mut(n);
        self.model.rates(t, x, dx);
        if !self.with_matrix {
            return;
        }
        self.model.jacobian(t, x, &mut self.jacobian);
        for (i, row) in dphi.chunks_exact_mut(n).enumerate() {
            let jac_row = &self.jacobian[i * n..(i + 1) * n];
            row.fill(0.0);
            for (&a, phi_row) in jac_row.iter().zip(phi.chunks_exact(n)) {
                if a != 0.0 {
                    for (r, &p) in row.iter_mut().zip(phi_row) {
                        *r += a * p;
                    }
                }
            }
        }
    }

    /// The columns of `Phi` are the tangent vectors, so the stiff method factorises the
    /// model's `n x n` matrices only.
    fn tangent_layout(&self) -> Option<TangentLayout> {
        self.with_matrix
            .then(|| TangentLayout::matrix_columns(self.n, self.n))
    }

    fn model_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) {
        self.model.jacobian(t, x, jacobian);
    }
}
