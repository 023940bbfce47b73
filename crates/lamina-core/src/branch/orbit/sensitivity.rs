//! The model with its variational equations and its sensitivity to the branch's parameter:
//! `x' = f(t, x, p)`, `Phi' = J Phi`, `s' = J s + f_p`, one system of `n + n^2 + n` states.

use crate::integrate::Rates;
use crate::model::Model;

/// The augmented system: `x`, then `Phi` row-major, then `s = dx/dp`.
#[derive(Debug)]
pub(crate) struct Sensitivity<'m> {
    model: &'m mut Model,
    parameter: usize,
    n: usize,
    jacobian: Vec<f64>,
    derivative: Vec<f64>,
}

impl<'m> Sensitivity<'m> {
    /// The system of `model` for parameter `parameter`.
    pub(crate) fn new(model: &'m mut Model, parameter: usize) -> Self {
        let n = model.dim();
        Self {
            model,
            parameter,
            n,
            jacobian: vec![0.0; n * n],
            derivative: vec![0.0; n],
        }
    }

    /// The start `x0, I, 0`.
    pub(crate) fn start(x0: &[f64]) -> Vec<f64> {
        let n = x0.len();
        let mut z = vec![0.0; n + n * n + n];
        z[..n].copy_from_slice(x0);
        for i in 0..n {
            z[n + i * n + i] = 1.0;
        }
        z
    }
}

impl Rates for Sensitivity<'_> {
    fn dim(&self) -> usize {
        self.n + self.n * self.n + self.n
    }

    fn rates(&mut self, t: f64, z: &[f64], dz: &mut [f64]) {
        let n = self.n;
        let (x, rest) = z.split_at(n);
        let (phi, s) = rest.split_at(n * n);
        let (dx, drest) = dz.split_at_mut(n);
        let (dphi, ds) = drest.split_at_mut(n * n);
        self.model.rates(t, x, dx);
        self.model.jacobian(t, x, &mut self.jacobian);
        self.model
            .parameter_derivative(t, x, self.parameter, &mut self.derivative);
        for i in 0..n {
            let row = &self.jacobian[i * n..(i + 1) * n];
            let out = &mut dphi[i * n..(i + 1) * n];
            out.fill(0.0);
            let mut sensitivity = self.derivative[i];
            for (k, &a) in row.iter().enumerate() {
                if a != 0.0 {
                    for (o, &p) in out.iter_mut().zip(&phi[k * n..(k + 1) * n]) {
                        *o += a * p;
                    }
                    sensitivity += a * s[k];
                }
            }
            ds[i] = sensitivity;
        }
    }
}
