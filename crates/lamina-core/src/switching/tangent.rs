//! Tangent vectors carried through the switches of a piecewise-smooth model: between switches
//! they follow the held rates' Jacobian (`q' = J q`); at every located switch they jump by the
//! saltation matrix `S = I + (f+ - f-) n^T / (n^T f- + dv/dt)`, with `n` the gradient of the
//! switching value `v`, `dv/dt` its own change with time, and `f-`, `f+` the rates before and
//! after. R. I. Leine and H. Nijmeijer, Dynamics and Bifurcations of Non-Smooth Mechanical
//! Systems (Springer 2004), ch. 7; P. C. Müller, "Calculation of Lyapunov exponents for
//! dynamic systems with discontinuities", Chaos, Solitons & Fractals 5 (1995) 1671.
//!
//! A switch where the flow does not cross (both sides point into the switching surface or
//! along it: a sliding or grazing switch) has no saltation matrix; it is counted, and the
//! caller says so (and falls back to differences where it can).

use super::{Chattering, Crossing, Switching, inspect_through};
use crate::integrate::{Integrator, Rates, StepError, TangentLayout};

/// Relative size of `n^T f` (against `|n| |f|`) below which a switch counts as not crossing
/// transversally.
const TRANSVERSAL: f64 = 1e-9;

/// Why a step through the switches failed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SwitchedStepError {
    /// The step itself failed.
    Step(StepError),
    /// The switches piled up (a sliding mode).
    Chattering(Chattering),
}

impl From<StepError> for SwitchedStepError {
    fn from(err: StepError) -> Self {
        Self::Step(err)
    }
}

/// The held rates of a switching model with tangent vectors (stored as `layout` says) as one
/// system, stepped through the switches with the saltation matrix.
#[derive(Clone, Debug)]
pub struct SwitchedTangent {
    switching: Switching,
    layout: TangentLayout,
    jacobian: Vec<f64>,
    f_minus: Vec<f64>,
    f_plus: Vec<f64>,
    normal: Vec<f64>,
    n_saltations: u64,
    n_not_transversal: u64,
    first_not_transversal: Option<f64>,
}

impl SwitchedTangent {
    /// The held rates of `switching` with tangent vectors laid out as `layout`.
    pub fn new(switching: Switching, layout: TangentLayout) -> Self {
        let n = layout.n;
        Self {
            switching,
            layout,
            jacobian: vec![0.0; n * n],
            f_minus: vec![0.0; n],
            f_plus: vec![0.0; n],
            normal: vec![0.0; n],
            n_saltations: 0,
            n_not_transversal: 0,
            first_not_transversal: None,
        }
    }

    /// Starts again at `(t, x)` with tangent vectors laid out as `layout`: branches chosen
    /// there and the counts cleared (the held programs compiled so far are kept).
    pub fn restart_at(&mut self, t: f64, x: &[f64], layout: TangentLayout) {
        self.switching.restart_at(t, x);
        self.layout = layout;
        self.n_saltations = 0;
        self.n_not_transversal = 0;
        self.first_not_transversal = None;
    }

    /// The switching state.
    pub fn switching(&self) -> &Switching {
        &self.switching
    }

    /// Switches the tangent vectors jumped through by their saltation matrix.
    pub fn n_saltations(&self) -> u64 {
        self.n_saltations
    }

    /// Switches without a saltation matrix (the flow slid along the switching surface or
    /// grazed it there): the tangent vectors went on unchanged.
    pub fn n_not_transversal(&self) -> u64 {
        self.n_not_transversal
    }

    /// Time of the first switch without a saltation matrix.
    pub fn first_not_transversal(&self) -> Option<f64> {
        self.first_not_transversal
    }

    /// One step of `integrator` (a system of these rates) towards `t_limit`, ending at a
    /// switch if one comes first; there the branch changes and the tangent vectors jump by
    /// the saltation matrix. Returns the switch, if any.
    ///
    /// # Errors
    /// A failed step, or chattering at the switch.
    pub fn step(
        &mut self,
        integrator: &mut Integrator,
        t_limit: f64,
    ) -> Result<Option<Crossing>, SwitchedStepError> {
        integrator.step_lazy(self, t_limit)?;
        let Some(crossing) = inspect_through(self, integrator)? else {
            return Ok(None);
        };
        let n = self.layout.n;
        let t = integrator.t();
        let x = integrator.x()[..n].to_vec();
        let mut f = std::mem::take(&mut self.f_minus);
        self.switching.rates(t, &x, &mut f);
        self.f_minus = f;
        let crossed = self.switching.crossing.first().copied();
        self.switching
            .apply(integrator)
            .map_err(SwitchedStepError::Chattering)?;
        let Some(k) = crossed else {
            return Ok(Some(crossing));
        };
        let mut f = std::mem::take(&mut self.f_plus);
        self.switching.rates(t, &x, &mut f);
        self.f_plus = f;
        let moving = self.switching.value_gradient(k, t, &x, &mut self.normal);
        let slope = |f: &[f64]| -> f64 {
            moving + self.normal.iter().zip(f).map(|(a, b)| a * b).sum::<f64>()
        };
        let (before, after) = (slope(&self.f_minus), slope(&self.f_plus));
        let norm = |v: &[f64]| v.iter().map(|a| a * a).sum::<f64>().sqrt();
        let speed = norm(&self.f_minus)
            .max(norm(&self.f_plus))
            .max(moving.abs());
        let scale = TRANSVERSAL * norm(&self.normal).max(f64::MIN_POSITIVE) * speed;
        let transversal = before * after > 0.0 && before.abs() > scale && after.abs() > scale;
        if !transversal || !before.is_finite() {
            self.n_not_transversal += 1;
            self.first_not_transversal.get_or_insert(t);
            return Ok(Some(crossing));
        }
        // q <- S q = q + (f+ - f-) (n . q) / (n . f- + dv/dt), for every tangent vector
        let mut z = integrator.x().to_vec();
        for vector in 0..self.layout.m {
            let along: f64 = (0..n)
                .map(|i| self.normal[i] * z[self.layout.index(vector, i)])
                .sum::<f64>()
                / before;
            for i in 0..n {
                z[self.layout.index(vector, i)] += (self.f_plus[i] - self.f_minus[i]) * along;
            }
        }
        integrator.replace_state(&z);
        self.n_saltations += 1;
        Ok(Some(crossing))
    }
}

impl super::SwitchingRates for SwitchedTangent {
    fn switching(&mut self) -> &mut Switching {
        &mut self.switching
    }
}

impl Rates for SwitchedTangent {
    fn dim(&self) -> usize {
        self.layout.dim()
    }

    fn rates(&mut self, t: f64, y: &[f64], dy: &mut [f64]) {
        let layout = self.layout;
        let n = layout.n;
        self.switching.rates(t, &y[..n], &mut dy[..n]);
        self.switching
            .exact_jacobian(t, &y[..n], &mut self.jacobian);
        for k in 0..layout.m {
            for i in 0..n {
                let row = &self.jacobian[i * n..(i + 1) * n];
                let mut sum = 0.0;
                for (j, &a) in row.iter().enumerate() {
                    if a != 0.0 {
                        sum += a * y[layout.index(k, j)];
                    }
                }
                dy[layout.index(k, i)] = sum;
            }
        }
    }

    fn tangent_layout(&self) -> Option<TangentLayout> {
        Some(self.layout)
    }

    fn model_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) {
        self.switching.exact_jacobian(t, x, jacobian);
    }
}
