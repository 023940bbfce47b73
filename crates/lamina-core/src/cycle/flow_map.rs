//! The return maps as functions of the state, each with its Jacobian from the variational
//! equations: the cut map (the k-th crossing of the cut) and the strobe map (the state k
//! strobe periods later).

use super::CycleError;
use super::variational::Variational;
use std::sync::Arc;

use crate::integrate::{Integrator, Interrupt, Method, Rates, StepControl, TangentLayout};
use crate::memory;
use crate::model::Model;
use crate::run::{Cut, RunSpec, Strobe};
use crate::switching::{SwitchedStepError, SwitchedTangent, Switching};

/// A point of a return map: a state and its time.
#[derive(Clone, Debug, PartialEq)]
pub struct MapPoint {
    /// Time of the point (crossing time or strobe time).
    pub t: f64,
    /// The state.
    pub state: Vec<f64>,
}

impl AsRef<[f64]> for MapPoint {
    /// The state.
    fn as_ref(&self) -> &[f64] {
        &self.state
    }
}

/// Which return map a periodic orbit is a fixed point of.
#[derive(Clone, Debug)]
pub enum MapKind {
    /// The cut map (Poincaré map): from a point on the cut to its next crossing.
    Cut(Cut),
    /// The strobe map (time-T map): from a state at a strobe time to the state one period on.
    Strobe(Strobe),
}

/// How the orbit is integrated.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MapSettings {
    /// Integration method.
    pub method: Method,
    /// Tolerances (applied to the states and to the variational matrix alike).
    pub control: StepControl,
    /// Following the orbit fails when a state's magnitude passes this escape size.
    pub escape: f64,
    /// Longest time allowed between two crossings of the cut before the crossing counts as
    /// lost.
    pub max_return_time: f64,
}

impl MapSettings {
    /// The integrator and escape size of a run's settings, with the given longest return time.
    pub fn from_run(spec: &RunSpec, max_return_time: f64) -> Self {
        Self {
            method: spec.method,
            control: spec.control,
            escape: spec.escape,
            max_return_time,
        }
    }
}

/// Where `k` applications of a map take a point, and the linearisation on the way.
#[derive(Clone, Debug, PartialEq)]
pub struct MapImage {
    /// Time of the start point.
    pub t_start: f64,
    /// Time of the image (the k-th crossing, or `t_start + k T`).
    pub t: f64,
    /// The image state.
    pub state: Vec<f64>,
    /// `Phi`: the derivative of the flow from the start to the image, `n x n` row-major.
    pub monodromy: Vec<f64>,
    /// The linearised map, `n x n` row-major: for the strobe `Phi`; for the cut
    /// `(I - f grad g^T / (grad g . f)) Phi` with `f` and `grad g` at the image, which takes
    /// the change of the return time into account (it maps the flow direction at the start to
    /// zero and everything into the tangent space of the cut).
    pub jacobian: Vec<f64>,
    /// The images after 1, 2, ..., k applications (the last is the image itself).
    pub orbit: Vec<MapPoint>,
}

/// Relative size of `grad g . f` below which a crossing counts as grazing.
pub(super) const GRAZING: f64 = 1e-9;
/// Relative distance from the surface within which a start point counts as on the cut.
pub(super) const ON_CUT: f64 = 1e-10;

/// A return map of a model, ready to apply to states.
#[derive(Clone, Debug)]
pub struct FlowMap {
    pub(super) model: Model,
    pub(super) kind: MapKind,
    pub(super) settings: MapSettings,
    pub(super) integrator: Integrator,
    pub(super) n: usize,
    pub(super) gradient: Vec<f64>,
    pub(super) rates: Vec<f64>,
    pub(super) x_start: Vec<f64>,
    pub(super) x_terms: Vec<f64>,
    pub(super) x_cross: Vec<f64>,
    pub(super) z_cross: Vec<f64>,
    /// Whether the variational matrix is integrated in the current pass.
    pub(super) with_matrix: bool,
    /// Whether derivatives come from central differences (rates that jump with the states
    /// other than at located switches: `%`).
    differences: bool,
    /// For a model with switches: the held rates with the variational matrix, carried
    /// through every located switch by its saltation matrix.
    pub(super) switched: Option<SwitchedTangent>,
    /// Whether the last application fell back to differences because a switch on the way
    /// was not crossed transversally (sliding or grazing).
    fell_back: bool,
    /// Raised to stop following the orbit at the next step.
    interrupt: Option<Arc<Interrupt>>,
}

impl FlowMap {
    /// The return map `kind` of `model`.
    ///
    /// # Errors
    /// A cut of a model that uses `t` ([`CycleError::ForcedCut`]) or a cut surface that uses
    /// `t` ([`CycleError::MovingCut`]): their return maps depend on the crossing time, so they
    /// are not maps of the state; the strobe map is the map of a forced model. A model without
    /// states gives [`CycleError::BadSeed`].
    pub fn new(model: Model, kind: MapKind, settings: MapSettings) -> Result<Self, CycleError> {
        if let MapKind::Cut(cut) = &kind {
            if model.uses_time() {
                return Err(CycleError::ForcedCut);
            }
            if cut.uses_time() {
                return Err(CycleError::MovingCut);
            }
        }
        let n = model.dim();
        if n == 0 {
            return Err(CycleError::BadSeed {
                detail: "is empty: the model has no states".to_string(),
            });
        }
        let bytes = Self::workspace_bytes(n, settings.method);
        if !memory::can_allocate(bytes) {
            return Err(CycleError::TooLarge { bytes, n_states: n });
        }
        let model_jumps = model.jumps_with_states();
        let switched = Switching::new(&model, 0.0, model.start())
            .map(|switching| SwitchedTangent::new(switching, TangentLayout::matrix_columns(n, n)));
        Ok(Self {
            integrator: Integrator::new(settings.method, settings.control, n + n * n),
            model,
            kind,
            settings,
            n,
            gradient: vec![0.0; n],
            rates: vec![0.0; n],
            x_start: vec![0.0; n],
            x_terms: Vec::new(),
            x_cross: vec![0.0; n],
            z_cross: vec![0.0; n + n * n],
            with_matrix: true,
            differences: model_jumps && switched.is_none(),
            switched,
            fell_back: false,
            interrupt: None,
        })
    }

    /// Bytes of working memory a map of a model with `n_states` states needs with `method`:
    /// the integrator of the variational equations (`n + n^2` values per vector; the stiff
    /// method's matrices are the model's `n x n`), the state at a crossing and a few
    /// `n x n` matrices (Jacobian, monodromy, the map's linearisation).
    pub fn workspace_bytes(n_states: usize, method: Method) -> u64 {
        let n = n_states as u64;
        let dim = n_states.saturating_add(n_states.saturating_mul(n_states));
        let integrator = Integrator::workspace_bytes(method, dim, n_states);
        integrator.saturating_add((dim as u64 + 4 * n * n) * 8)
    }

    /// Lets `interrupt` stop the map: once it is raised, following an orbit fails at its next
    /// step with [`CycleError::Cancelled`].
    pub fn set_interrupt(&mut self, interrupt: Arc<Interrupt>) {
        self.interrupt = Some(interrupt);
    }

    /// Number of states.
    pub fn dim(&self) -> usize {
        self.n
    }

    /// The map.
    pub fn kind(&self) -> &MapKind {
        &self.kind
    }

    /// Whether this is the cut map.
    pub fn is_cut(&self) -> bool {
        matches!(self.kind, MapKind::Cut(_))
    }

    /// Whether the map's Jacobian comes from central differences of the map instead of the
    /// variational equations: so for a model whose rates jump with the states (`sign`,
    /// `step`, `floor`, `ceil`, `%` of a state), where the variational equations would miss the
    /// jumps. Its multipliers are then accurate to about `rtol^(2/3)`.
    pub fn uses_differences(&self) -> bool {
        self.differences || self.fell_back
    }

    /// Switches crossed with a saltation matrix in the last application of the map.
    pub fn n_saltations(&self) -> u64 {
        self.switched
            .as_ref()
            .map_or(0, SwitchedTangent::n_saltations)
    }

    /// Whether the last application fell back to central differences because a switch on
    /// the way was not crossed transversally (the flow slid along or grazed the switching
    /// surface), where no saltation matrix exists.
    pub fn fell_back_to_differences(&self) -> bool {
        self.fell_back
    }

    /// The model.
    pub fn model(&self) -> &Model {
        &self.model
    }

    /// The first point of the map reached from `(t0, x0)`: the first crossing of the cut after
    /// `t0` (a start on the cut is not a crossing), or the state at the first strobe time at or
    /// after `t0`.
    ///
    /// # Errors
    /// As [`FlowMap::apply`].
    pub fn first_point(&mut self, t0: f64, x0: &[f64]) -> Result<MapPoint, CycleError> {
        self.check_seed(x0)?;
        match self.strobe() {
            None => {
                let image = self.apply(
                    &MapPoint {
                        t: t0,
                        state: x0.to_vec(),
                    },
                    1,
                )?;
                Ok(MapPoint {
                    t: image.t,
                    state: image.state,
                })
            }
            Some(strobe) => {
                let t1 = strobe.time_of(strobe.first_index_from(t0));
                if t1 <= t0 {
                    return Ok(MapPoint {
                        t: t0,
                        state: x0.to_vec(),
                    });
                }
                self.reset(t0, x0, false);
                self.advance_to(t1)?;
                Ok(MapPoint {
                    t: t1,
                    state: self.integrator.x()[..self.n].to_vec(),
                })
            }
        }
    }

    /// Applies the map `k` times to `seed`, integrating the variational equations on the way
    /// (or, see [`FlowMap::uses_differences`], differencing the map).
    ///
    /// # Errors
    /// [`CycleError::ZeroReturns`], [`CycleError::BadSeed`], and for the way:
    /// [`CycleError::LostCrossing`], [`CycleError::Tangent`], [`CycleError::Escaped`],
    /// [`CycleError::Integration`].
    pub fn apply(&mut self, seed: &MapPoint, k: usize) -> Result<MapImage, CycleError> {
        if k == 0 {
            return Err(CycleError::ZeroReturns);
        }
        self.check_seed(&seed.state)?;
        if self.differences {
            return self.apply_by_differences(seed, k);
        }
        let image = self.follow(seed, k, true)?;
        if self
            .switched
            .as_ref()
            .is_some_and(|s| s.n_not_transversal() > 0)
        {
            // no saltation matrix where the flow does not cross: difference the map
            self.fell_back = true;
            let image = self.apply_by_differences(seed, k);
            self.fell_back = true;
            return image;
        }
        self.fell_back = false;
        Ok(image)
    }

    /// Follows the orbit of `seed` through `k` applications of the map, with the variational
    /// matrix when `with_matrix` (else the image's matrices are empty).
    pub(super) fn follow(
        &mut self,
        seed: &MapPoint,
        k: usize,
        with_matrix: bool,
    ) -> Result<MapImage, CycleError> {
        self.reset(seed.t, &seed.state, with_matrix);
        match self.strobe() {
            Some(strobe) => {
                let period = strobe.period;
                let mut orbit = Vec::with_capacity(k);
                for j in 1..=k {
                    // computed afresh for every j, never accumulated
                    let t_target = seed.t + j as f64 * period;
                    self.advance_to(t_target)?;
                    orbit.push(MapPoint {
                        t: t_target,
                        state: self.integrator.x()[..self.n].to_vec(),
                    });
                }
                let z = self.integrator.x();
                Ok(MapImage {
                    t_start: seed.t,
                    t: self.integrator.t(),
                    state: z[..self.n].to_vec(),
                    monodromy: z[self.n..].to_vec(),
                    jacobian: z[self.n..].to_vec(),
                    orbit,
                })
            }
            None => self.cut_returns(seed, k),
        }
    }

    /// The orbit from `start` over `duration` (for drawing it, say over one period): the
    /// start, then `samples_per_step` points inside every accepted step from its dense output,
    /// ending exactly at `start.t + duration`.
    ///
    /// # Errors
    /// [`CycleError::BadSeed`], [`CycleError::Escaped`], [`CycleError::Integration`].
    pub fn trace(
        &mut self,
        start: &MapPoint,
        duration: f64,
        samples_per_step: usize,
    ) -> Result<Vec<MapPoint>, CycleError> {
        self.check_seed(&start.state)?;
        self.reset(start.t, &start.state, false);
        let t_end = start.t + duration.max(0.0);
        let mut path = vec![start.clone()];
        let per_step = samples_per_step.max(1);
        while self.integrator.t() < t_end {
            self.step(t_end)?;
            self.accurate_dense()?;
            let segment = self.integrator.segment();
            for j in 1..=per_step {
                let t = segment.t0 + segment.h * j as f64 / per_step as f64;
                let mut state = vec![0.0; self.n];
                segment.eval(t, &mut state);
                path.push(MapPoint { t, state });
            }
        }
        Ok(path)
    }

    /// The relative tolerance of the integration.
    pub(super) fn integrator_rtol(&self) -> f64 {
        self.settings.control.rtol
    }

    /// The strobe, for the strobe map.
    fn strobe(&self) -> Option<Strobe> {
        match &self.kind {
            MapKind::Strobe(strobe) => Some(*strobe),
            MapKind::Cut(_) => None,
        }
    }

    /// Moves `x` onto the cut surface along the gradient (a no-op for the strobe map).
    pub(crate) fn project(&mut self, t: f64, x: &mut [f64]) {
        let MapKind::Cut(cut) = &mut self.kind else {
            return;
        };
        let parameters = self.model.parameters();
        for _ in 0..8 {
            let g = cut.value(t, x, parameters);
            cut.gradient(t, x, parameters, &mut self.gradient);
            let norm2: f64 = self.gradient.iter().map(|v| v * v).sum();
            if !(norm2 > 0.0 && g.is_finite()) {
                return;
            }
            let scale = norm2.sqrt() * norm(x).max(1.0);
            if g.abs() <= 4.0 * f64::EPSILON * scale {
                return;
            }
            for (xi, &gi) in x.iter_mut().zip(&self.gradient) {
                *xi -= g / norm2 * gi;
            }
        }
    }

    /// The unit normal of the cut at `(t, x)`, or `None` for the strobe map or where the
    /// gradient vanishes.
    pub(crate) fn unit_normal(&mut self, t: f64, x: &[f64]) -> Option<Vec<f64>> {
        let MapKind::Cut(cut) = &mut self.kind else {
            return None;
        };
        cut.gradient(t, x, self.model.parameters(), &mut self.gradient);
        let length = norm(&self.gradient);
        (length > 0.0 && length.is_finite())
            .then(|| self.gradient.iter().map(|g| g / length).collect())
    }

    /// The rates `f(t, x)`.
    pub(super) fn rates_at(&mut self, t: f64, x: &[f64]) -> Vec<f64> {
        self.model.rates(t, x, &mut self.rates);
        self.rates.clone()
    }

    /// The speed `|f(t, x)|` of the flow at a state.
    pub(crate) fn speed(&mut self, t: f64, x: &[f64]) -> f64 {
        self.model.rates(t, x, &mut self.rates);
        norm(&self.rates)
    }

    fn check_seed(&self, x: &[f64]) -> Result<(), CycleError> {
        if x.len() != self.n {
            return Err(CycleError::BadSeed {
                detail: format!("has {} values but the model has {} states", x.len(), self.n),
            });
        }
        if x.iter().any(|v| !v.is_finite()) {
            return Err(CycleError::BadSeed {
                detail: "is not finite".to_string(),
            });
        }
        Ok(())
    }

    fn reset(&mut self, t0: f64, x0: &[f64], with_matrix: bool) {
        self.with_matrix = with_matrix;
        let z0 = Variational::start(x0, with_matrix);
        if let Some(switched) = &mut self.switched {
            let m = if with_matrix { self.n } else { 0 };
            switched.restart_at(t0, x0, TangentLayout::matrix_columns(self.n, m));
        }
        let mut rates = flow_rates(&mut self.switched, &mut self.model, with_matrix);
        self.integrator.reset(&mut rates, t0, &z0);
    }

    /// Steps (with dense output) until exactly `t_target`.
    fn advance_to(&mut self, t_target: f64) -> Result<(), CycleError> {
        while self.integrator.t() < t_target {
            self.step(t_target)?;
        }
        Ok(())
    }

    /// One step no further than `t_limit`, with the escape check; its dense output only on
    /// [`FlowMap::accurate_dense`].
    pub(super) fn step(&mut self, t_limit: f64) -> Result<(), CycleError> {
        if self.interrupt.as_ref().is_some_and(|i| i.is_raised()) {
            return Err(CycleError::Cancelled {
                t: self.integrator.t(),
            });
        }
        match &mut self.switched {
            Some(switched) => match switched.step(&mut self.integrator, t_limit) {
                Ok(_) => {}
                Err(SwitchedStepError::Step(err)) => return Err(err.into()),
                Err(SwitchedStepError::Chattering(c)) => {
                    return Err(CycleError::Chattering { t: c.t });
                }
            },
            None => {
                let mut rates = Variational::new(&mut self.model, self.with_matrix);
                self.integrator.step_lazy(&mut rates, t_limit)?;
            }
        }
        let escape = self.settings.escape;
        if self.integrator.x()[..self.n]
            .iter()
            .any(|v| v.abs() > escape)
        {
            return Err(CycleError::Escaped {
                escape,
                t: self.integrator.t(),
            });
        }
        Ok(())
    }
}

impl FlowMap {
    /// Builds the dense output of the last step, shortening a stiff step whose interpolant
    /// does not resolve the orbit ([`Integrator::ensure_accurate_dense`]); whether the step
    /// was shortened.
    pub(super) fn accurate_dense(&mut self) -> Result<bool, CycleError> {
        let mut rates = flow_rates(&mut self.switched, &mut self.model, self.with_matrix);
        Ok(self.integrator.ensure_accurate_dense(&mut rates)?)
    }
}

/// Euclidean norm.
pub(crate) fn norm(v: &[f64]) -> f64 {
    v.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// The right-hand side a map integrates: the model's variational equations, or for a model
/// with switches the held rates with the matrix carried through the switches.
pub(super) enum FlowRates<'a> {
    /// The model and (optionally) its variational matrix.
    Smooth(Variational<'a>),
    /// The held rates with the matrix, through the switches.
    Switched(&'a mut SwitchedTangent),
}

/// The [`FlowRates`] of a map's parts.
pub(super) fn flow_rates<'a>(
    switched: &'a mut Option<SwitchedTangent>,
    model: &'a mut Model,
    with_matrix: bool,
) -> FlowRates<'a> {
    match switched {
        Some(switched) => FlowRates::Switched(switched),
        None => FlowRates::Smooth(Variational::new(model, with_matrix)),
    }
}

impl Rates for FlowRates<'_> {
    fn dim(&self) -> usize {
        match self {
            Self::Smooth(r) => r.dim(),
            Self::Switched(r) => r.dim(),
        }
    }

    fn rates(&mut self, t: f64, x: &[f64], dx: &mut [f64]) {
        match self {
            Self::Smooth(r) => r.rates(t, x, dx),
            Self::Switched(r) => r.rates(t, x, dx),
        }
    }

    fn exact_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) -> bool {
        match self {
            Self::Smooth(r) => r.exact_jacobian(t, x, jacobian),
            Self::Switched(r) => r.exact_jacobian(t, x, jacobian),
        }
    }

    fn exact_time_derivative(&mut self, t: f64, x: &[f64], out: &mut [f64]) -> bool {
        match self {
            Self::Smooth(r) => r.exact_time_derivative(t, x, out),
            Self::Switched(r) => r.exact_time_derivative(t, x, out),
        }
    }

    fn tangent_layout(&self) -> Option<crate::integrate::TangentLayout> {
        match self {
            Self::Smooth(r) => r.tangent_layout(),
            Self::Switched(r) => r.tangent_layout(),
        }
    }

    fn model_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) {
        match self {
            Self::Smooth(r) => r.model_jacobian(t, x, jacobian),
            Self::Switched(r) => r.model_jacobian(t, x, jacobian),
        }
    }
}
