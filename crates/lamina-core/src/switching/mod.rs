//! Integrating through the switches of a piecewise-smooth model.
//!
//! Every `sign`, `abs`, `step`, `min`, `max`, `floor` and `ceil` whose argument moves with
//! the state is held on one branch while a step is taken, so that the integrator sees a
//! smooth right-hand side and keeps its order. After each step the switching values are
//! checked at its end; where one has crossed into another branch, the crossing time is
//! located on the step's dense output (like a cut crossing), the step is taken again to end
//! exactly there, the branch is changed and the integrator restarts on the other side.
//! This is the treatment of discontinuous right-hand sides with switching functions of
//! Hairer, Nørsett & Wanner, Solving ODEs I, sec. II.6.
//!
//! A switch that has to be undone at once, again and again, with vanishing time between
//! the switches, is a sliding mode (chattering): the model's vector field points into the
//! switching surface from both sides. That is reported as [`Chattering`] rather than
//! followed forever.

mod locate;
mod tangent;

pub use locate::{Crossing, SwitchingRates, inspect_through};
pub use tangent::{SwitchedStepError, SwitchedTangent};

use crate::expr::{Branch, Kernel, Program, Scratch, Switch};
use crate::integrate::{Integrator, Rates};
use crate::model::Model;

/// Switches in a row, each turning back at once after the one before, that make a sliding
/// mode (chattering).
const CHATTER_COUNT: u32 = 8;
/// A switch within this fraction of the step that starts at the switch before turns back
/// at once (so does one the time resolution cannot separate from it).
const BOUNCE_FRACTION: f64 = 1e-9;
/// Relative time step of the forward difference that measures how fast the margins move.
const FLOW_NUDGE: f64 = 1e-7;
/// Branch combinations whose programs are kept (a model switching back and forth between a
/// few combinations compiles each once).
const CACHE_SIZE: usize = 64;

/// The model's switches piled up with vanishing time between them: a sliding mode.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
#[error(
    "the model chatters at t = {t}: its switches pile up with vanishing time between them (a sliding mode)"
)]
pub struct Chattering {
    /// Time of the last switch.
    pub t: f64,
}

/// The programs of one combination of branches.
#[derive(Clone, Debug)]
struct Held {
    branches: Vec<Branch>,
    /// The rates with every switch held.
    rates: Program,
    rates_kernel: Option<Kernel>,
    /// The switching values with every switch held.
    values: Program,
    values_kernel: Option<Kernel>,
}

/// The switching state of a model: its switches, the branch each is held on, and the held
/// programs. Implements [`Rates`] with the held rates (and their exact Jacobian), for the
/// integrator to step with.
#[derive(Clone, Debug)]
pub struct Switching {
    /// The model's rate program, from which the held programs are made.
    source: Program,
    switches: Vec<Switch>,
    parameters: Vec<f64>,
    /// The switching values with nothing held, to choose branches from a state.
    free_values: Program,
    /// Held programs by branch combination; `current` is in use.
    cache: Vec<Held>,
    current: usize,
    scratch: Scratch,
    /// Switching values and margins at the start of the next step.
    start_margins: Vec<f64>,
    /// The margins' time derivatives along the flow at the start of the next step.
    start_slopes: Vec<f64>,
    /// Scratch for the margins' time derivatives and the rates.
    slopes: Vec<f64>,
    rates_here: Vec<f64>,
    nudged: Vec<f64>,
    /// Scratch for values, margins and an interpolated state.
    values: Vec<f64>,
    margins: Vec<f64>,
    state: Vec<f64>,
    /// Switches that cross at the located time, to change branch in [`Switching::apply`].
    crossing: Vec<usize>,
    /// Time of the last switch, whether the located one turned back at once after it, and
    /// how many switches in a row did.
    last_switch: Option<f64>,
    bounce: bool,
    n_close: u32,
    n_switches: u64,
}

impl Switching {
    /// The switching state of `model`, or `None` if it has no switches (then its rates need
    /// no holding). Branches are chosen at `(t, x)`.
    pub fn new(model: &Model, t: f64, x: &[f64]) -> Option<Self> {
        let program = model.program();
        let switches = program.switches();
        if switches.is_empty() {
            return None;
        }
        let free_values = program.switching_values(&switches, None);
        let n = switches.len();
        let mut switching = Self {
            source: program.clone(),
            parameters: model.parameters().to_vec(),
            scratch: program.scratch(),
            free_values,
            switches,
            cache: Vec::new(),
            current: 0,
            start_margins: vec![0.0; n],
            start_slopes: vec![0.0; n],
            slopes: vec![0.0; n],
            rates_here: vec![0.0; x.len()],
            nudged: vec![0.0; x.len()],
            values: vec![0.0; n],
            margins: vec![0.0; n],
            state: vec![0.0; x.len()],
            crossing: Vec::new(),
            last_switch: None,
            bounce: false,
            n_close: 0,
            n_switches: 0,
        };
        switching.choose_branches(t, x);
        Some(switching)
    }

    /// Starts again at `(t, x)`: every switch held on the branch its value lies on there, the
    /// watch for chattering cleared (the held programs compiled so far are kept).
    pub fn restart_at(&mut self, t: f64, x: &[f64]) {
        self.crossing.clear();
        self.last_switch = None;
        self.bounce = false;
        self.n_close = 0;
        self.choose_branches(t, x);
    }

    /// Holds every switch on the branch its switching value lies on at `(t, x)`.
    fn choose_branches(&mut self, t: f64, x: &[f64]) {
        self.free_values
            .eval(&mut self.scratch, t, x, &self.parameters, &mut self.values);
        let branches: Vec<Branch> = self
            .switches
            .iter()
            .zip(&self.values)
            .map(|(s, &v)| s.branch_of(v))
            .collect();
        self.hold(branches);
        self.update_start(t, x);
    }

    /// Makes `branches` current, compiling its programs unless they are cached.
    fn hold(&mut self, branches: Vec<Branch>) {
        if let Some(idx) = self.cache.iter().position(|h| h.branches == branches) {
            self.current = idx;
            return;
        }
        if self.cache.len() >= CACHE_SIZE {
            self.cache.clear();
        }
        let rates = self.source.held(&self.switches, &branches);
        let values = self
            .source
            .switching_values(&self.switches, Some(&branches));
        self.cache.push(Held {
            rates_kernel: rates.specialise(&self.parameters),
            values_kernel: values.specialise(&self.parameters),
            rates,
            values,
            branches,
        });
        self.current = self.cache.len() - 1;
    }

    /// The branch each switch is held on, in program order.
    pub fn branches(&self) -> &[Branch] {
        &self.cache[self.current].branches
    }

    /// The switches, in program order.
    pub fn switches(&self) -> &[Switch] {
        &self.switches
    }

    /// The gradient of switch `k`'s value (held as now) with respect to the states at
    /// `(t, x)` into `out`; returns the value's own change with time there.
    pub fn value_gradient(&mut self, k: usize, t: f64, x: &[f64], out: &mut [f64]) -> f64 {
        let n = x.len();
        let n_switches = self.switches.len();
        let held = &self.cache[self.current];
        let mut jacobian = vec![0.0; n_switches * n];
        held.values
            .jacobian(&mut self.scratch, t, x, &self.parameters, &mut jacobian);
        out.copy_from_slice(&jacobian[k * n..(k + 1) * n]);
        if !held.values.uses_time() {
            return 0.0;
        }
        let mut moving = vec![0.0; n_switches];
        held.values
            .time_derivative(&mut self.scratch, t, x, &self.parameters, &mut moving);
        moving[k]
    }

    /// Number of switches made so far.
    pub fn n_switches(&self) -> u64 {
        self.n_switches
    }

    /// The held switching values at `(t, x)` into `self.values` and their margins into
    /// `self.margins`.
    fn evaluate_margins(&mut self, t: f64, x: &[f64]) {
        let held = &mut self.cache[self.current];
        match &mut held.values_kernel {
            Some(kernel) => kernel.eval(t, x, &mut self.values),
            None => held
                .values
                .eval(&mut self.scratch, t, x, &self.parameters, &mut self.values),
        }
        for (((m, s), b), &v) in self
            .margins
            .iter_mut()
            .zip(&self.switches)
            .zip(&held.branches)
            .zip(&self.values)
        {
            *m = s.margin(*b, v);
        }
    }

    /// Remembers the margins at `(t, x)` as those at the start of the next step, with their
    /// time derivatives along the flow of the held rates there (one evaluation of the rates).
    fn update_start(&mut self, t: f64, x: &[f64]) {
        let mut f = std::mem::take(&mut self.rates_here);
        self.rates(t, x, &mut f);
        self.measure_slopes(t, x, &f);
        self.rates_here = f;
        self.start_slopes.copy_from_slice(&self.slopes);
        self.evaluate_margins(t, x);
        self.start_margins.copy_from_slice(&self.margins);
    }

    /// The time derivatives of the margins along the flow at `(t, x)`, where the rates are
    /// `f`, into `self.slopes` (leaves the margins at `(t, x)` in `self.margins`): a forward
    /// difference over `FLOW_NUDGE` relative time along `f`, enough for the screen of
    /// crossings that come and go inside one step.
    fn measure_slopes(&mut self, t: f64, x: &[f64], f: &[f64]) {
        let scale = x.iter().chain(f).fold(t.abs(), |m, v| m.max(v.abs()));
        let speed = f.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
        let dt = FLOW_NUDGE * (scale / speed.max(f64::MIN_POSITIVE)).clamp(1e-12, 1e12);
        let mut nudged = std::mem::take(&mut self.nudged);
        for ((n, &xi), &fi) in nudged.iter_mut().zip(x).zip(f) {
            *n = xi + dt * fi;
        }
        self.evaluate_margins(t + dt, &nudged);
        self.slopes.copy_from_slice(&self.margins);
        self.nudged = nudged;
        self.evaluate_margins(t, x);
        for (s, &m) in self.slopes.iter_mut().zip(&self.margins) {
            *s = (*s - m) / dt;
        }
    }

    /// Changes the branches of the switches that crossed at the time located by
    /// [`Switching::inspect`] (where the integrator now stands) and restarts the integrator
    /// on the new branches.
    ///
    /// # Errors
    /// [`Chattering`] when this was the eighth switch in a row to turn back at once after
    /// the one before.
    pub fn apply(&mut self, integrator: &mut Integrator) -> Result<(), Chattering> {
        let n = self.state.len();
        let (t, x) = (integrator.t(), &integrator.x()[..n]);
        self.evaluate_margins(t, x);
        let mut branches = self.branches().to_vec();
        for &k in &self.crossing {
            branches[k] = self.switches[k].across(branches[k], self.values[k]);
        }
        self.hold(branches);
        // the value of another switch may jump with this change (a clock tick restarts a
        // ramp that a comparator watches): hold it on the branch it is on now, apart from
        // the switches that just crossed (which are on their boundary)
        for _ in 0..self.switches.len() {
            self.evaluate_margins(t, x);
            let mut branches = self.branches().to_vec();
            let mut changed = false;
            for (k, branch) in branches.iter_mut().enumerate() {
                if self.margins[k] < 0.0 && !self.crossing.contains(&k) {
                    *branch = self.switches[k].branch_of(self.values[k]);
                    changed = true;
                }
            }
            if !changed {
                break;
            }
            self.hold(branches);
        }
        self.crossing.clear();
        self.update_start(t, x);
        integrator.restart();
        self.n_switches += 1;
        if self.bounce {
            self.n_close += 1;
        } else {
            self.n_close = 0;
        }
        self.last_switch = Some(t);
        if self.n_close + 1 >= CHATTER_COUNT {
            return Err(Chattering { t });
        }
        Ok(())
    }
}

impl Rates for Switching {
    fn dim(&self) -> usize {
        self.state.len()
    }

    #[inline]
    fn rates(&mut self, t: f64, x: &[f64], dx: &mut [f64]) {
        let held = &mut self.cache[self.current];
        match &mut held.rates_kernel {
            Some(kernel) => kernel.eval(t, x, dx),
            None => held
                .rates
                .eval(&mut self.scratch, t, x, &self.parameters, dx),
        }
    }

    fn exact_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) -> bool {
        let held = &self.cache[self.current];
        held.rates
            .jacobian(&mut self.scratch, t, x, &self.parameters, jacobian);
        true
    }

    fn exact_time_derivative(&mut self, t: f64, x: &[f64], out: &mut [f64]) -> bool {
        let held = &self.cache[self.current];
        if held.rates.uses_time() {
            held.rates
                .time_derivative(&mut self.scratch, t, x, &self.parameters, out);
        } else {
            out.fill(0.0);
        }
        true
    }
}
