//! The equations of a resting-point branch: `f(x, p) = 0`, the Jacobian `[f_x | f_p]` from the
//! compiled model, and the eigenvalues with the Hopf test at each point.

use super::error::StepFailure;
use super::problem::{Measured, Problem, Tests};
use super::types::{Anchor, BranchPoint, Spectrum};
use crate::integrate::Rates;
use crate::model::Model;
use crate::rest::{Eigenvalue, classify, eigenvalues_of};

/// A resting-point branch of a model in one parameter.
#[derive(Clone, Debug)]
pub(crate) struct RestProblem {
    model: Model,
    parameter: usize,
    n: usize,
    weights: Vec<f64>,
    tolerance: f64,
    jacobian: Vec<f64>,
    derivative: Vec<f64>,
}

impl RestProblem {
    /// The branch of `model`'s resting points in parameter `parameter`.
    pub(crate) fn new(model: Model, parameter: usize, tolerance: f64) -> Self {
        let n = model.dim();
        Self {
            model,
            parameter,
            n,
            weights: vec![1.0; n + 1],
            tolerance,
            jacobian: vec![0.0; n * n],
            derivative: vec![0.0; n],
        }
    }
}

impl Problem for RestProblem {
    fn n_unknowns(&self) -> usize {
        self.n + 1
    }

    fn weights(&self) -> &[f64] {
        &self.weights
    }

    fn tolerance(&self) -> f64 {
        self.tolerance
    }

    fn evaluate(
        &mut self,
        u: &[f64],
        _reference: &[f64],
        residual: &mut [f64],
        jacobian: &mut [f64],
    ) -> Result<(), StepFailure> {
        let n = self.n;
        let (x, p) = (&u[..n], u[n]);
        self.model.set_parameter(self.parameter, p);
        self.model.rates(0.0, x, residual);
        self.model.jacobian(0.0, x, &mut self.jacobian);
        self.model
            .parameter_derivative(0.0, x, self.parameter, &mut self.derivative);
        for i in 0..n {
            jacobian[i * (n + 1)..i * (n + 1) + n]
                .copy_from_slice(&self.jacobian[i * n..(i + 1) * n]);
            jacobian[i * (n + 1) + n] = self.derivative[i];
        }
        if residual
            .iter()
            .chain(jacobian.iter())
            .any(|v| !v.is_finite())
        {
            return Err(StepFailure::Spectrum);
        }
        Ok(())
    }

    fn measure(&mut self, u: &[f64], _previous: Option<&[f64]>) -> Result<Measured, StepFailure> {
        let n = self.n;
        self.model.set_parameter(self.parameter, u[n]);
        self.model.jacobian(0.0, &u[..n], &mut self.jacobian);
        let eigenvalues = eigenvalues_of(&self.jacobian, n).ok_or(StepFailure::Spectrum)?;
        let stability = classify(&eigenvalues);
        let hopf = hopf_test(&eigenvalues);
        Ok(Measured {
            point: BranchPoint {
                value: u[n],
                state: u[..n].to_vec(),
                period: None,
                points: Vec::new(),
                stable: stability.stable,
                n_unstable: stability.n_unstable,
                kind: Some(stability.kind),
                spectrum: Spectrum::Eigenvalues(eigenvalues),
                iterations: 0,
                arclength: 0.0,
            },
            tests: Tests {
                hopf,
                ..Tests::default()
            },
            end: None,
        })
    }

    fn anchor(&self, u: &[f64]) -> Anchor {
        Anchor {
            unknowns: u.to_vec(),
            segments: 1,
            returns: 1,
        }
    }
}

/// `prod_{i<j} (l_i + l_j) / (|l_i| + |l_j|)` (real: conjugate factors pair up); `None` with
/// fewer than two eigenvalues.
fn hopf_test(values: &[Eigenvalue]) -> Option<f64> {
    if values.len() < 2 {
        return None;
    }
    let (mut re, mut im) = (1.0f64, 0.0f64);
    for (i, a) in values.iter().enumerate() {
        for b in &values[i + 1..] {
            let size = a.modulus() + b.modulus();
            if size == 0.0 {
                continue;
            }
            let (fr, fi) = ((a.re + b.re) / size, (a.im + b.im) / size);
            (re, im) = (re * fr - im * fi, re * fi + im * fr);
        }
    }
    Some(re)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hopf_test_changes_sign_with_the_real_part_of_a_pair() {
        // [analytic] with l1 < 0 real and a pair a +- ib, the product is |l1 + a + ib|^2 2a
        // over positive sizes: its sign is the sign of a
        for (a, sign) in [(-0.1, -1.0), (0.1, 1.0)] {
            let values = [
                Eigenvalue { re: a, im: 2.0 },
                Eigenvalue { re: a, im: -2.0 },
                Eigenvalue { re: -3.0, im: 0.0 },
            ];
            let value = hopf_test(&values).expect("three values");
            assert_eq!(value.signum(), sign, "{value}");
        }
        assert!(hopf_test(&[Eigenvalue { re: 1.0, im: 0.0 }]).is_none());
    }
}
