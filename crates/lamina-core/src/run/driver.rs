//! The run driver: steps the integrator over the time window (through the switches of a
//! piecewise-smooth model), records cut points and strobe samples inside the window, stores
//! the steps, reports changes of method, and stops with a reason.

use std::ops::ControlFlow;

use super::graze::{self, Bracket, Turns};
use super::tangent::CarriedTangent;
use super::time_resolution::{
    TimeResolution, check_time_resolution, step_lost_to_time, time_spacing,
};
use super::{Cut, CutPoint, RunSpec, StoredRun, Strobe, StrobeSample};
use crate::integrate::{
    DenseSegment, Integrator, Interrupt, Method, MethodChange, Rates, Stats, StepError, copy_values,
};
use crate::lyapunov::{ExponentSettings, LargestExponent};
use crate::model::Model;
use crate::switching::{Chattering, Switching};

/// Evaluates `$body` with `$rates` the system that run `$run`'s integrator steps: the model's
/// held rates at its switches, the model with its tangent vector over the recorded window, or
/// the model itself (a macro rather than a `dyn Rates`, so that each stays inlined in the
/// stepper).
macro_rules! with_system {
    ($run:ident, $rates:ident => $body:expr) => {
        match (&mut $run.switching, &mut $run.tangent) {
            (Some($rates), _) => $body,
            (None, Some(tangent)) if tangent.active => {
                let $rates = &mut tangent.system;
                $body
            }
            (None, _) => {
                let $rates = &mut $run.model;
                $body
            }
        }
    };
}

/// Receives what a run finds. Returning `ControlFlow::Break` stops the run at once.
pub trait Sink {
    /// A recorded cut point.
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        let _ = point;
        ControlFlow::Continue(())
    }
    /// A recorded strobe sample.
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        let _ = sample;
        ControlFlow::Continue(())
    }
    /// Progress: the current time and the fraction of the whole run done.
    fn progress(&mut self, t: f64, fraction: f64) {
        let _ = (t, fraction);
    }
    /// The state at the end of an accepted step inside the recorded window (for drawing the
    /// trajectory).
    fn step(&mut self, t: f64, state: &[f64]) {
        let _ = (t, state);
    }
    /// The automatic method changed between the explicit and the stiff method (when and why:
    /// its `Display` is a sentence for the run log).
    fn method_changed(&mut self, change: &MethodChange) {
        let _ = change;
    }
}

/// A sink that keeps everything in memory.
#[derive(Clone, Debug, Default)]
pub struct Collect {
    /// Cut points in time order.
    pub cut_points: Vec<CutPoint>,
    /// Strobe samples in time order.
    pub strobe_samples: Vec<StrobeSample>,
}

impl Sink for Collect {
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        self.cut_points.push(point.clone());
        ControlFlow::Continue(())
    }
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        self.strobe_samples.push(sample.clone());
        ControlFlow::Continue(())
    }
}

/// Why a run ended.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum StopReason {
    /// Reached the end of the time window.
    Finished,
    /// The interrupt flag was raised.
    Cancelled {
        /// Time reached.
        t: f64,
    },
    /// A state's magnitude passed the escape size.
    Escaped {
        /// Time at the end of the step where it happened.
        t: f64,
        /// The escape size that was passed (`RunSpec::escape`).
        escape: f64,
    },
    /// A value became NaN or infinite.
    NotFinite {
        /// Time of the last good state.
        t: f64,
    },
    /// The step size collapsed.
    StepTooSmall {
        /// Time where it happened.
        t: f64,
    },
    /// The point limit was reached.
    PointLimit {
        /// Time of the last point.
        t: f64,
    },
    /// The sink asked to stop (for example after `--count` points).
    SinkStopped {
        /// Time of the last point.
        t: f64,
    },
    /// The model's switches piled up with vanishing time between them (a sliding mode).
    Chattering {
        /// Time of the last switch.
        t: f64,
    },
    /// The time is too far from 0 for the run: a part of the window, the strobe times or
    /// the steps the model needs are lost in rounding there (the run would stand still).
    TimeTooCoarse(TimeResolution),
    /// The strobe's period is not a positive finite number at the run's parameter values (a
    /// sweep or map value where `2*pi/w` meets `w = 0`, say): no run was made.
    StrobePeriod,
}

impl StopReason {
    /// Whether the run ended because of numerical trouble (escape, non-finite, step
    /// collapse, chattering).
    pub fn is_trouble(&self) -> bool {
        matches!(
            self,
            Self::Escaped { .. }
                | Self::NotFinite { .. }
                | Self::StepTooSmall { .. }
                | Self::Chattering { .. }
                | Self::TimeTooCoarse(_)
                | Self::StrobePeriod
        )
    }
}

impl std::fmt::Display for StopReason {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Self::Finished => write!(f, "finished"),
            Self::Cancelled { t } => write!(f, "stopped at t = {t}"),
            Self::Escaped { t, escape } => write!(
                f,
                "a state passed the escape size {} at t = {t}",
                Size(*escape)
            ),
            Self::NotFinite { t } => write!(f, "a value became NaN or infinite at t = {t}"),
            Self::StepTooSmall { t } => write!(
                f,
                "the step size collapsed at t = {t} (stiff or discontinuous model?)"
            ),
            Self::PointLimit { t } => write!(f, "point limit reached at t = {t}"),
            Self::SinkStopped { t } => write!(f, "stopped after the requested points at t = {t}"),
            Self::Chattering { t } => write!(
                f,
                "the model chatters at t = {t}: its switches pile up with vanishing time between them (a sliding mode)"
            ),
            Self::TimeTooCoarse(problem) => write!(f, "{problem}"),
            Self::StrobePeriod => write!(
                f,
                "the strobe period is not a positive finite number at these parameter values, so nothing was sampled"
            ),
        }
    }
}

/// A size as one would type it in a scenario: plainly from 0.001 to below 10 000 (`50`,
/// `0.5`), in exponent form otherwise (`1e6`, `2.5e-7`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Size(pub f64);

impl std::fmt::Display for Size {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let magnitude = self.0.abs();
        if magnitude == 0.0 || (1e-3..1e4).contains(&magnitude) || !magnitude.is_finite() {
            write!(f, "{}", self.0)
        } else {
            write!(f, "{:e}", self.0)
        }
    }
}

/// What a run did.
#[derive(Clone, Debug, PartialEq)]
pub struct RunOutcome {
    /// Why it ended.
    pub reason: StopReason,
    /// Integrator work.
    pub stats: Stats,
    /// Time reached.
    pub t_reached: f64,
    /// State at `t_reached`.
    pub final_state: Vec<f64>,
    /// Cut points recorded.
    pub n_cut_points: usize,
    /// Strobe samples recorded.
    pub n_strobe_samples: usize,
    /// Every change of the automatic method so far, in time order.
    pub method_changes: Vec<MethodChange>,
    /// Switches of the model's branches located and stepped through so far.
    pub n_switches: u64,
}

/// A run: the model, its window, cut and strobe, the integrator state and the stored steps.
/// Call [`Run::execute`] to integrate to the end of the window; after it finishes,
/// [`Run::extend`] moves the end further and `execute` continues from where it stopped.
pub struct Run {
    model: Model,
    spec: RunSpec,
    cut: Option<Cut>,
    strobe: Option<Strobe>,
    integrator: Integrator,
    /// The switching state of a piecewise-smooth model (made at the start of the run).
    switching: Option<Switching>,
    method_changes: Vec<MethodChange>,
    stored: StoredRun,
    store: bool,
    started: bool,
    t_end: f64,
    g_prev: f64,
    /// Whether the cut was not followed over the last steps (settle steps that could not
    /// reach the recorded window): `g_prev` and `slope_prev` are taken again before a step
    /// that may reach it.
    cut_untracked: bool,
    /// `dg/dt` of the cut at the start of the next step; `None` until measured (after a
    /// switch of the model's rates it is measured again with the new rates).
    slope_prev: Option<f64>,
    last_crossing: Option<f64>,
    next_strobe: i64,
    n_cut: usize,
    n_strobe: usize,
    cut_point: CutPoint,
    end_state: Vec<f64>,
    /// The rates at the end of the step just taken (for the cut's slope there).
    end_rates: Vec<f64>,
    /// The tangent vector carried over the recorded window ([`Run::carry_tangent`]).
    tangent: Option<CarriedTangent>,
    /// The model's part of the last step's dense output when the integrator carries the
    /// tangent vector too ([`model_part`]).
    model_segment: DenseSegment,
}

/// How often progress is reported, in accepted steps.
const PROGRESS_EVERY_STEPS: u64 = 256;

impl Run {
    /// Prepares a run of `model` over `spec`'s window. With `store`, accepted steps inside the
    /// recorded window are kept for re-slicing.
    pub fn new(
        model: Model,
        spec: RunSpec,
        cut: Option<Cut>,
        strobe: Option<Strobe>,
        store: bool,
    ) -> Self {
        let dim = model.start().len();
        let integrator = Integrator::new(spec.method, spec.control, dim);
        let stored = StoredRun::new(dim, (spec.t_record(), spec.t_end()), spec.store_bytes);
        let next_strobe = strobe.map_or(0, |s| s.first_index_from(spec.t_record()));
        Self {
            t_end: spec.t_end(),
            model,
            spec,
            cut,
            strobe,
            integrator,
            switching: None,
            method_changes: Vec::new(),
            stored,
            store,
            started: false,
            g_prev: 0.0,
            cut_untracked: false,
            slope_prev: None,
            last_crossing: None,
            next_strobe,
            n_cut: 0,
            n_strobe: 0,
            cut_point: CutPoint {
                t: 0.0,
                return_time: None,
                state: vec![0.0; dim],
            },
            end_state: vec![0.0; dim],
            end_rates: vec![0.0; dim],
            tangent: None,
            model_segment: DenseSegment {
                dim,
                ..DenseSegment::default()
            },
        }
    }

    /// Carries one tangent vector (`q' = J q`) along with the model over the recorded window,
    /// so that the run estimates the largest Lyapunov exponent in the same pass as its cut
    /// points and strobe samples ([`Run::largest_exponent`]), with the growth limit, trace
    /// samples and tail fraction of `settings` as [`crate::lyapunov::spectrum`] uses them for
    /// one vector. The settle time is stepped without it. Cut points, strobe samples, the
    /// escape check and the steps reported to the sink see the model's states only, and so
    /// does the integrator's error control (the vector rides on the states' steps). The
    /// integrator starts afresh at the start of the recorded window, so the steps there are not
    /// those of a run without the vector. The vector is rescaled to unit length between steps whenever it has
    /// grown or shrunk past the growth limit, without restarting the integrator.
    ///
    /// Returns false, and the run goes on without it, for a model with switches (whose
    /// tangent vector would need saltation matrices at every switch: use
    /// [`crate::lyapunov::spectrum`]), for a run that stores its steps, that carries one
    /// already or that has passed the start of the recorded window.
    pub fn carry_tangent(&mut self, settings: &ExponentSettings) -> bool {
        let switches = !self.model.program().switches().is_empty();
        let passed = self.t() > self.spec.t_record();
        if switches || self.store || self.tangent.is_some() || passed {
            return false;
        }
        let t_record = self.spec.t_record();
        let span = self.t_end - t_record;
        self.tangent = Some(CarriedTangent::new(&self.model, t_record, span, settings));
        true
    }

    /// The largest Lyapunov exponent estimated from the carried tangent vector over the
    /// recorded window up to where the run stands (`None` without [`Run::carry_tangent`] or
    /// before the recorded window).
    pub fn largest_exponent(&self) -> Option<LargestExponent> {
        self.tangent.as_ref().and_then(CarriedTangent::result)
    }

    /// The model's states (the integrator's first values).
    fn state(&self) -> &[f64] {
        &self.integrator.x()[..self.end_state.len()]
    }

    /// The model being integrated.
    pub fn model(&self) -> &Model {
        &self.model
    }

    /// The run settings.
    pub fn spec(&self) -> &RunSpec {
        &self.spec
    }

    /// The stored steps (empty unless the run was made with `store`).
    pub fn stored(&self) -> &StoredRun {
        &self.stored
    }

    /// The cut, if any.
    pub fn cut(&self) -> Option<&Cut> {
        self.cut.as_ref()
    }

    /// The strobe, if any.
    pub fn strobe(&self) -> Option<&Strobe> {
        self.strobe.as_ref()
    }

    /// Current end of the window.
    pub fn t_end(&self) -> f64 {
        self.t_end
    }

    /// Time reached so far.
    pub fn t(&self) -> f64 {
        if self.started {
            self.integrator.t()
        } else {
            self.spec.t_start
        }
    }

    /// Integrator work so far.
    pub fn stats(&self) -> Stats {
        self.integrator.stats()
    }

    /// Moves the end of the window `extra_span` further, so the next `execute` continues.
    pub fn extend(&mut self, extra_span: f64) {
        self.t_end += extra_span.max(0.0);
        self.stored.extend_window(self.t_end);
    }

    /// Replaces the cut (for example after the user moved it). Points found so far are not
    /// changed; re-slice the stored run for the new cut's points up to now. A continued run
    /// records crossings of the new cut from where it stands.
    pub fn set_cut(&mut self, cut: Option<Cut>) {
        self.cut = cut;
        self.last_crossing = None;
        self.slope_prev = None;
        self.cut_untracked = false;
        let (t, x) = if self.started {
            (self.integrator.t(), self.state().to_vec())
        } else {
            (self.spec.t_start, self.model.start().to_vec())
        };
        if let Some(cut) = &mut self.cut {
            self.g_prev = cut.value(t, &x, self.model.parameters());
        }
    }

    /// Replaces the strobe; a continued run samples with it from where it stands.
    pub fn set_strobe(&mut self, strobe: Option<Strobe>) {
        self.strobe = strobe;
        if let Some(s) = &self.strobe {
            let from = if self.started {
                self.integrator.t().max(self.spec.t_record())
            } else {
                self.spec.t_record()
            };
            self.next_strobe = s.first_index_from(from);
            // a sample exactly at the current time was already taken
            if self.started
                && s.time_of(self.next_strobe) <= self.integrator.t()
                && self.integrator.t() > self.spec.t_record()
            {
                self.next_strobe += 1;
            }
        }
    }

    /// Integrates the settle time only, from where the run stands to the start of the
    /// recorded window (reported as finished there, progress 1 included); [`Run::execute`]
    /// goes on over the span.
    pub fn execute_settle(&mut self, sink: &mut dyn Sink, interrupt: &Interrupt) -> RunOutcome {
        let t_end = self.t_end;
        self.t_end = self.spec.t_record().min(t_end);
        let outcome = self.execute(sink, interrupt);
        self.t_end = t_end;
        outcome
    }

    /// Integrates from where the run stands to the end of the window, reporting to `sink`.
    pub fn execute(&mut self, sink: &mut dyn Sink, interrupt: &Interrupt) -> RunOutcome {
        let reason = self.advance(sink, interrupt);
        RunOutcome {
            reason,
            stats: self.integrator.stats(),
            t_reached: self.t(),
            final_state: if self.started {
                self.state().to_vec()
            } else {
                self.model.start().to_vec()
            },
            n_cut_points: self.n_cut,
            n_strobe_samples: self.n_strobe,
            method_changes: self.method_changes.clone(),
            n_switches: self.switching.as_ref().map_or(0, Switching::n_switches),
        }
    }

    /// The switching state of a piecewise-smooth model (`None` before the run starts and for
    /// a model without switches).
    pub fn switching(&self) -> Option<&Switching> {
        self.switching.as_ref()
    }

    fn advance(&mut self, sink: &mut dyn Sink, interrupt: &Interrupt) -> StopReason {
        let t_start = self.spec.t_start;
        if !self.started {
            if let Err(problem) = check_time_resolution(&self.spec, self.strobe.as_ref()) {
                return StopReason::TimeTooCoarse(problem);
            }
            let start = self.model.start().to_vec();
            if let Some(reason) = self.check_state(t_start, &start) {
                return reason;
            }
            self.switching = Switching::new(&self.model, t_start, &start);
            with_system!(self, rates => self.integrator.reset(rates, t_start, &start));
            if let Some(cut) = &mut self.cut {
                self.g_prev = cut.value(t_start, &start, self.model.parameters());
            }
            self.started = true;
        }
        loop {
            let t = self.integrator.t();
            if t >= self.t_end {
                sink.progress(t, 1.0);
                return StopReason::Finished;
            }
            if interrupt.is_raised() {
                return StopReason::Cancelled { t };
            }
            let t_limit = self.start_tangent_if_due(t);
            if let Err(err) = self.measure_start_slope() {
                return stop_reason(&self.spec, err);
            }
            // the dense output costs DOP853 three more evaluations: build it only for a stored
            // step, a strobe sample inside the step, a cut crossing (found from the end state)
            // or a switch of the model's branches
            let stepped = with_system!(self, rates => self.integrator.step_lazy(rates, t_limit));
            if let Err(err) = stepped {
                return stop_reason(&self.spec, err);
            }
            if let Some(change) = self.integrator.take_method_change() {
                self.method_changes.push(change);
                sink.method_changed(&change);
            }
            // a stiff step that will be sampled must have an interpolant that resolves the
            // solution; a long one is taken again shorter until it does
            if self.integrator.active_method() == Method::Rodas4 && self.wants_dense() {
                let refined =
                    with_system!(self, rates => self.integrator.ensure_accurate_dense(rates));
                if let Err(err) = refined {
                    return stop_reason(&self.spec, err);
                }
            }
            let crossing = match &mut self.switching {
                Some(switching) => match switching.inspect(&mut self.integrator) {
                    Ok(crossing) => crossing,
                    Err(err) => return stop_reason(&self.spec, err),
                },
                None => None,
            };
            let stop = match crossing {
                Some(c) if !c.step_kept => None,
                _ => self.finish_step(sink),
            };
            // a located switch changes branch before anything returns, so that a continued
            // run goes on from the other side
            if crossing.is_some()
                && let Some(switching) = &mut self.switching
            {
                // the cut's slope changes with the rates
                self.slope_prev = None;
                if let Err(Chattering { t }) = switching.apply(&mut self.integrator) {
                    return stop.unwrap_or(StopReason::Chattering { t });
                }
            }
            if let Some(reason) = stop {
                return reason;
            }
        }
    }

    /// Whether the step just taken will be sampled on its dense output: stored, or with a
    /// strobe time or a crossing of the cut inside.
    fn wants_dense(&mut self) -> bool {
        let t1 = self.integrator.t();
        if self.store && t1 > self.spec.t_record() {
            return true;
        }
        if let Some(strobe) = &self.strobe {
            let t = strobe.time_of(self.next_strobe);
            if t < t1 || (t1 >= self.t_end && t <= self.t_end) {
                return true;
            }
        }
        if self.cut.is_some() && t1 >= self.spec.t_record() {
            let n = self.end_state.len();
            copy_values(&mut self.end_state, &self.integrator.x()[..n]);
            let Ok((g1, _, turns)) = self.screen_cut(t1) else {
                return false;
            };
            let Some(cut) = &self.cut else {
                return false;
            };
            return !turns.is_empty() || cut.direction.crosses(self.g_prev, g1);
        }
        false
    }

    /// Measures the cut's `dg/dt` at the current state unless known (at the start of the
    /// run, after a switch or a new cut): from the rates the next step starts with, so that
    /// it costs no evaluation.
    ///
    /// A step of the settle time that ends before the recorded window keeps no crossing, so
    /// the cut is not followed over it ([`Run::cut_untracked`]): a step is at most its proposed
    /// size, or the rest up to its time limit (when that is within 1 % more than the
    /// proposal), which is then before the window too. Twice the proposal leaves room.
    fn measure_start_slope(&mut self) -> Result<(), StepError> {
        let Some(cut) = &mut self.cut else {
            return Ok(());
        };
        let (t, h) = (self.integrator.t(), self.integrator.h_next());
        if h > 0.0 && t + 2.0 * h < self.spec.t_record() {
            self.cut_untracked = true;
            return Ok(());
        }
        if std::mem::take(&mut self.cut_untracked) {
            let n = self.end_state.len();
            let x = &self.integrator.x()[..n];
            self.g_prev = cut.value(t, x, self.model.parameters());
            self.slope_prev = None;
        }
        if self.slope_prev.is_some() {
            return Ok(());
        }
        let rates = with_system!(self, rates => self.integrator.rates_here(rates))?;
        let n = self.end_rates.len();
        self.end_rates.copy_from_slice(&rates[..n]);
        let (t, x) = (self.integrator.t(), &self.integrator.x()[..n]);
        self.slope_prev = Some(cut.slope(t, x, &self.end_rates, self.model.parameters()));
        Ok(())
    }

    /// The cut's value and `dg/dt` at the end of the step just taken (whose state is in
    /// `end_state`), and the interior extrema of the step's Hermite interpolant of the cut's
    /// value that may hide crossings ([`graze::screen`]).
    fn screen_cut(&mut self, t1: f64) -> Result<(f64, f64, Turns), StepError> {
        let Some(cut) = &mut self.cut else {
            return Ok((f64::NAN, f64::NAN, Turns::default()));
        };
        // after a step its last stage holds the rates at its end (first same as last)
        let rates = match self.integrator.end_rates() {
            Some(rates) => rates,
            None => with_system!(self, rates => self.integrator.rates_here(rates))?,
        };
        let rates = &rates[..self.end_state.len()];
        let parameters = self.model.parameters();
        let g1 = cut.value(t1, &self.end_state, parameters);
        let d1 = cut.slope(t1, &self.end_state, rates, parameters);
        // a step of the settle time hides no crossing that is kept
        let Some(d0) = self.slope_prev.filter(|_| t1 >= self.spec.t_record()) else {
            return Ok((g1, d1, Turns::default()));
        };
        let h = self.integrator.segment().h;
        let turns = graze::screen(self.g_prev, g1, h * d0, h * d1, graze::FIRST_REACH);
        Ok((g1, d1, turns))
    }

    /// Stores, reports and records the step just taken; a reason to stop, if any.
    fn finish_step(&mut self, sink: &mut dyn Sink) -> Option<StopReason> {
        let t_start = self.spec.t_start;
        let total = (self.t_end - t_start).max(f64::MIN_POSITIVE);
        let t1 = self.integrator.t();
        let n = self.end_state.len();
        copy_values(&mut self.end_state, &self.integrator.x()[..n]);
        if self.store && t1 > self.spec.t_record() {
            if let Err(err) = self.dense() {
                return Some(stop_reason(&self.spec, err));
            }
            self.stored.push(self.integrator.segment(), &self.end_state);
        }
        if t1 >= self.spec.t_record() {
            sink.step(t1, &self.end_state);
        }
        if let Some(reason) = self.record(sink, t1) {
            return Some(reason);
        }
        if let Some(reason) = self.check_state(t1, &self.end_state) {
            return Some(reason);
        }
        if let Some(tangent) = self.tangent.as_mut().filter(|tangent| tangent.active)
            && let Err(err) = tangent.after_step(&mut self.integrator, t1)
        {
            return Some(stop_reason(&self.spec, err));
        }
        if self
            .integrator
            .stats()
            .n_accepted
            .is_multiple_of(PROGRESS_EVERY_STEPS)
        {
            sink.progress(t1, ((t1 - t_start) / total).clamp(0.0, 1.0));
        }
        None
    }

    /// Escape and non-finite checks of a state.
    fn check_state(&self, t: f64, x: &[f64]) -> Option<StopReason> {
        let escape = self.spec.escape;
        // one comparison per value on every step: a value that is not finite or past the
        // escape size fails it (the limit is finite, so an infinite value fails even
        // without an escape size); only then which of the two
        let limit = escape.min(f64::MAX);
        if x.iter().all(|v| v.abs() <= limit) {
            return None;
        }
        if x.iter().any(|v| !v.is_finite()) {
            return Some(StopReason::NotFinite { t });
        }
        Some(StopReason::Escaped { t, escape })
    }

    /// Records the cut crossing and strobe samples of the step just taken, building the
    /// step's dense output when one of them needs it.
    fn record(&mut self, sink: &mut dyn Sink, t1: f64) -> Option<StopReason> {
        if self.cut_untracked && t1 >= self.spec.t_record() {
            // not expected (see `measure_start_slope`), but a step that reached the window
            // after all gets the cut's value at its start, without the screen
            self.cut_untracked = false;
            self.slope_prev = None;
            let segment = model_part(self.integrator.segment(), &self.model_segment);
            let (t0, dim) = (segment.t0, segment.dim);
            if let Some(cut) = &mut self.cut {
                self.g_prev = cut.value(t0, &segment.coeffs[..dim], self.model.parameters());
            }
        }
        if self.cut.is_some() && !self.cut_untracked {
            let (g1, d1, turns) = match self.screen_cut(t1) {
                Ok(screened) => screened,
                Err(err) => return Some(stop_reason(&self.spec, err)),
            };
            // the next step starts from this one's end even if the sink stops the run here
            let g0 = std::mem::replace(&mut self.g_prev, g1);
            self.slope_prev = Some(d1);
            let Some(cut) = &self.cut else {
                return None;
            };
            let mut n_brackets = usize::from(cut.direction.crosses(g0, g1));
            if n_brackets == 0 && turns.is_empty() {
                // most steps
            } else if t1 < self.spec.t_record() {
                // a step of the settle time: its crossings are not kept, so they are neither
                // located nor given a dense output
            } else {
                let mut brackets = [Bracket {
                    a: 0.0,
                    b: 1.0,
                    ga: g0,
                    gb: g1,
                }; 3];
                if let Err(err) = self.dense() {
                    return Some(stop_reason(&self.spec, err));
                }
                let Some(cut) = &mut self.cut else {
                    return None;
                };
                let segment = model_part(self.integrator.segment(), &self.model_segment);
                let (t0, h, dim) = (segment.t0, segment.h, segment.dim);
                let parameters = self.model.parameters();
                let (start, terms) = segment.coeffs.split_at(dim);
                // the first screen passes; the dense output's slopes decide, as in a re-slice
                let turns = if turns.is_empty() {
                    turns
                } else {
                    let state = &mut self.cut_point.state;
                    cut.turns_on_step(start, terms, t0, h, g0, g1, parameters, state)
                };
                if !turns.is_empty() {
                    n_brackets = cut.brackets(
                        start,
                        terms,
                        t0,
                        h,
                        g0,
                        g1,
                        &turns,
                        parameters,
                        &mut self.cut_point.state,
                        &mut brackets,
                    );
                }
                for bracket in &brackets[..n_brackets] {
                    let Some(cut) = &mut self.cut else {
                        return None;
                    };
                    if !cut.direction.crosses(bracket.ga, bracket.gb) {
                        continue;
                    }
                    let segment = model_part(self.integrator.segment(), &self.model_segment);
                    let (start, terms) = segment.coeffs.split_at(dim);
                    let parameters = self.model.parameters();
                    let t = if turns.is_empty() {
                        // the usual crossing, located as a re-slice locates it
                        cut.locate(
                            start,
                            terms,
                            t0,
                            h,
                            g0,
                            g1,
                            parameters,
                            &mut self.cut_point.state,
                        )
                    } else {
                        cut.locate_in(
                            start,
                            terms,
                            t0,
                            h,
                            bracket,
                            parameters,
                            &mut self.cut_point.state,
                        )
                    };
                    if let Some(reason) = self.emit_cut_point(sink, t) {
                        return Some(reason);
                    }
                }
            }
        }
        if let Some(strobe) = self.strobe {
            let t_end = self.t_end;
            let last_step = t1 >= t_end;
            let inside = |t: f64| t < t1 || (last_step && t <= t_end);
            if !inside(strobe.time_of(self.next_strobe)) {
                return None;
            }
            if let Err(err) = self.dense() {
                return Some(stop_reason(&self.spec, err));
            }
            let segment = model_part(self.integrator.segment(), &self.model_segment);
            loop {
                let t = strobe.time_of(self.next_strobe);
                if !inside(t) {
                    break;
                }
                let mut sample = StrobeSample {
                    index: self.next_strobe,
                    t,
                    state: vec![0.0; segment.dim],
                };
                segment.eval(t, &mut sample.state);
                if let Some(reason) = self.check_state(t, &sample.state) {
                    return Some(reason);
                }
                self.next_strobe += 1;
                if strobe.time_of(self.next_strobe) <= t {
                    // the next sample time rounds onto this one
                    return Some(StopReason::TimeTooCoarse(TimeResolution::StrobeTimes {
                        first_at: strobe.first_at,
                        period: strobe.period,
                        t,
                        spacing: time_spacing(t),
                    }));
                }
                self.n_strobe += 1;
                if sink.strobe_sample(&sample).is_break() {
                    return Some(StopReason::SinkStopped { t });
                }
                if self.n_strobe >= self.spec.max_points {
                    return Some(StopReason::PointLimit { t });
                }
            }
        }
        None
    }
}

impl Run {
    /// Reports the crossing at `t` (its state in `cut_point`) when it lies inside the
    /// recorded window; a reason to stop, if any.
    fn emit_cut_point(&mut self, sink: &mut dyn Sink, t: f64) -> Option<StopReason> {
        if t < self.spec.t_record() || t > self.t_end {
            return None;
        }
        // a point past the escape size (or not finite) is not a valid point: the run stops
        // where it is instead
        if let Some(reason) = self.check_state(t, &self.cut_point.state) {
            return Some(reason);
        }
        self.cut_point.t = t;
        self.cut_point.return_time = self.last_crossing.map(|last| t - last);
        self.last_crossing = Some(t);
        self.n_cut += 1;
        if sink.cut_point(&self.cut_point).is_break() {
            return Some(StopReason::SinkStopped { t });
        }
        if self.n_cut >= self.spec.max_points {
            return Some(StopReason::PointLimit { t });
        }
        None
    }
}

impl Run {
    /// Builds the dense output of the last step with the rates it was taken with (the
    /// model's, its held rates when it switches, or the variational system's), and copies
    /// the model's part of it when the integrator carries the tangent vector.
    fn dense(&mut self) -> Result<(), StepError> {
        with_system!(self, rates => self.integrator.ensure_dense(rates))?;
        let segment = self.integrator.segment();
        let copy = &mut self.model_segment;
        if segment.dim != copy.dim {
            copy.t0 = segment.t0;
            copy.h = segment.h;
            copy.coeffs.clear();
            for term in segment.coeffs.chunks_exact(segment.dim) {
                copy.coeffs.extend_from_slice(&term[..copy.dim]);
            }
        }
        Ok(())
    }

    /// Starts the carried tangent vector once the run reaches the recorded window at `t`;
    /// the time the next step may not pass: the end of the window, or the start of the
    /// recorded one while the tangent vector waits for it.
    fn start_tangent_if_due(&mut self, t: f64) -> f64 {
        let t_record = self.spec.t_record();
        let Some(tangent) = self.tangent.as_mut().filter(|tangent| !tangent.active) else {
            return self.t_end;
        };
        if t < t_record {
            return t_record.min(self.t_end);
        }
        let x = self.integrator.x().to_vec();
        tangent.activate(&mut self.integrator, t, &x);
        self.t_end
    }
}

/// The model's part of the last step's dense output: `segment` itself, or `copy` (made by
/// `Run::dense`) when the segment carries the tangent vector too.
fn model_part<'a>(segment: &'a DenseSegment, copy: &'a DenseSegment) -> &'a DenseSegment {
    if segment.dim == copy.dim {
        segment
    } else {
        copy
    }
}

/// The stop reason of a failed step of a run over `spec`'s window: a step that collapsed
/// because the time is too far from 0 for the model says so.
pub(crate) fn stop_reason(spec: &RunSpec, err: StepError) -> StopReason {
    match err {
        StepError::NotFinite { t } => StopReason::NotFinite { t },
        StepError::StepTooSmall { t, h } => match step_lost_to_time(spec, t, h) {
            Some(problem) => StopReason::TimeTooCoarse(problem),
            None => StopReason::StepTooSmall { t },
        },
    }
}

/// Runs `model` once over `spec`'s window without storing steps; convenience for batch use.
pub fn run_once(
    model: Model,
    spec: RunSpec,
    cut: Option<Cut>,
    strobe: Option<Strobe>,
    sink: &mut dyn Sink,
    interrupt: &Interrupt,
) -> RunOutcome {
    Run::new(model, spec, cut, strobe, false).execute(sink, interrupt)
}

impl Rates for Run {
    fn dim(&self) -> usize {
        self.model.dim()
    }
    fn rates(&mut self, t: f64, x: &[f64], dx: &mut [f64]) {
        self.model.rates(t, x, dx);
    }
    fn exact_jacobian(&mut self, t: f64, x: &[f64], jacobian: &mut [f64]) -> bool {
        self.model.exact_jacobian(t, x, jacobian)
    }
    fn exact_time_derivative(&mut self, t: f64, x: &[f64], out: &mut [f64]) -> bool {
        self.model.exact_time_derivative(t, x, out)
    }
}
