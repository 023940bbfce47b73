//! The equations of an orbit branch by (multiple) shooting: the orbit cut into `m` segments of
//! equal time, each segment's end equal to the next one's start, and for an autonomous model a
//! phase condition that fixes where on the orbit its first point lies. The unknowns are the
//! segments' start states, the period (autonomous models only: a forced model's period is a
//! whole number of strobe periods) and the parameter. The Jacobian comes from the variational
//! equations with the parameter sensitivity, or from central differences of the segments'
//! flows for rates that jump with the states.

use super::OrbitMap;
use super::sensitivity::Sensitivity;
use crate::branch::error::StepFailure;
use crate::expr::{Program, Scratch};
use crate::integrate::{Integrator, Rates};
use crate::model::Model;
use crate::run::{Cut, RunSpec};

/// How the orbit's time runs.
#[derive(Clone, Debug)]
pub(super) enum Timing {
    /// An autonomous model: the period is an unknown.
    Autonomous,
    /// A forced model: the period is `returns` strobe periods, the orbit starts at the
    /// strobe's first time.
    Forced {
        /// The strobe's first sample time.
        first_at: f64,
        /// The strobe period's expression.
        period: Program,
        /// Its scratch space.
        scratch: Scratch,
        /// Strobe periods per orbit period.
        returns: usize,
    },
}

/// What the orbit records at each branch point.
#[derive(Clone, Debug)]
pub(super) enum Recording {
    /// Its crossings of the cut (boxed: a cut is large beside the other kinds).
    Cut(Box<Cut>),
    /// Its strobe samples.
    Strobe,
    /// Nothing but itself.
    Nothing,
}

/// The times of the segments at one parameter value.
#[derive(Clone, Copy, Debug)]
pub(super) struct Schedule {
    /// Start time of the first segment.
    pub(super) t0: f64,
    /// Length of each segment.
    pub(super) tau: f64,
    /// `d tau / d p` (forced models, whose strobe period may depend on the parameter).
    pub(super) dtau: f64,
}

/// Where one segment ends and how that end moves.
struct SegmentEnd {
    /// The end state.
    end: Vec<f64>,
    /// `d end / d start`, row-major.
    phi: Vec<f64>,
    /// `d end / d p`.
    sensitivity: Vec<f64>,
}

/// An orbit branch's equations.
#[derive(Clone, Debug)]
pub(crate) struct OrbitProblem {
    pub(super) model: Model,
    pub(super) parameter: usize,
    pub(super) n: usize,
    pub(super) segments: usize,
    pub(super) most_segments: usize,
    pub(super) max_segments: usize,
    pub(super) growth_limit: f64,
    pub(super) timing: Timing,
    pub(super) recording: Recording,
    pub(super) full: Integrator,
    pub(super) plain: Integrator,
    pub(super) escape: f64,
    pub(super) rtol: f64,
    pub(super) weights: Vec<f64>,
    pub(super) tolerance: f64,
    pub(super) differences: bool,
    pub(super) start_period: f64,
    pub(super) period_limit: f64,
    /// `Phi` of each segment at the last evaluation.
    pub(super) blocks: Vec<Vec<f64>>,
    /// Where the last evaluation was.
    pub(super) evaluated_at: Vec<f64>,
}

/// Settings an orbit problem takes from the branch settings.
#[derive(Clone, Copy, Debug)]
pub(crate) struct OrbitLimits {
    pub(crate) tolerance_in_rtol: f64,
    pub(crate) max_segments: usize,
    pub(crate) growth_limit: f64,
    pub(crate) period_limit: f64,
}

impl OrbitProblem {
    /// The orbit branch of `model` in parameter `parameter` on `map`, integrated as
    /// `integration` says, with `segments` shooting segments and `returns` strobe periods per
    /// period (forced models).
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn new(
        model: Model,
        parameter: usize,
        map: &OrbitMap,
        integration: &RunSpec,
        limits: &OrbitLimits,
        segments: usize,
        returns: usize,
        start_period: f64,
    ) -> Result<Self, crate::run::SpecError> {
        let n = model.dim();
        let (timing, recording) = match map {
            OrbitMap::Cut(cut) => (Timing::Autonomous, Recording::Cut(Box::new(cut.clone()))),
            OrbitMap::Flow => (Timing::Autonomous, Recording::Nothing),
            OrbitMap::Strobe(spec) => {
                let period = Program::compile(
                    model.names(),
                    &[("strobe period".to_string(), spec.period.as_str())],
                )?;
                let scratch = period.scratch();
                (
                    Timing::Forced {
                        first_at: spec.first_at,
                        period,
                        scratch,
                        returns: returns.max(1),
                    },
                    Recording::Strobe,
                )
            }
        };
        // Jumping rates are differenced here, not carried through their switches by the
        // saltation matrix as the orbit search and the exponents do
        // (`switching::SwitchedTangent`): the parameter sensitivity `s = dx/dp` would also
        // jump, by `(f+ - f-) (n^T s + dv/dp) / (n^T f-)` at each switch, which is not
        // written yet.
        let differences = model.jumps_with_states();
        let rtol = integration.control.rtol;
        let mut problem = Self {
            full: Integrator::new(integration.method, integration.control, n + n * n + n),
            plain: Integrator::new(integration.method, integration.control, n),
            model,
            parameter,
            n,
            segments: segments.max(1),
            most_segments: segments.max(1),
            max_segments: limits.max_segments.max(1),
            growth_limit: limits.growth_limit,
            timing,
            recording,
            escape: integration.escape,
            rtol,
            weights: Vec::new(),
            tolerance: (limits.tolerance_in_rtol * rtol).max(1e-12),
            differences,
            start_period,
            period_limit: limits.period_limit,
            blocks: Vec::new(),
            evaluated_at: Vec::new(),
        };
        problem.set_segments(problem.segments);
        Ok(problem)
    }

    /// Whether the period is an unknown.
    pub(super) fn autonomous(&self) -> bool {
        matches!(self.timing, Timing::Autonomous)
    }

    /// Strobe periods per orbit period (1 for an autonomous model).
    pub(super) fn returns(&self) -> usize {
        match &self.timing {
            Timing::Autonomous => 1,
            Timing::Forced { returns, .. } => *returns,
        }
    }

    /// Uses `m` segments from now on.
    pub(super) fn set_segments(&mut self, m: usize) {
        self.segments = m;
        self.most_segments = self.most_segments.max(m);
        let size = self.n * m + usize::from(self.autonomous()) + 1;
        self.weights = vec![0.0; size];
        self.weights[..self.n].fill(1.0);
        if self.autonomous() {
            self.weights[self.n * m] = 1.0;
        }
        self.weights[size - 1] = 1.0;
        self.blocks.clear();
        self.evaluated_at.clear();
    }

    /// Number of unknowns in the current layout.
    pub(super) fn size(&self) -> usize {
        self.n * self.segments + usize::from(self.autonomous()) + 1
    }

    /// The strobe period and its derivative at `p` (forced models).
    fn strobe_period(&mut self, p: f64) -> Result<(f64, f64), StepFailure> {
        let Timing::Forced {
            period, scratch, ..
        } = &mut self.timing
        else {
            return Ok((f64::NAN, 0.0));
        };
        let mut parameters = self.model.parameters().to_vec();
        parameters[self.parameter] = p;
        let start = self.model.start().to_vec();
        let value = period.eval_one(scratch, 0.0, &start, &parameters);
        let mut derivative = [0.0];
        period.parameter_derivative(
            scratch,
            0.0,
            &start,
            &parameters,
            self.parameter,
            &mut derivative,
        );
        if !(value.is_finite() && value > 0.0) {
            return Err(StepFailure::StrobePeriod { value: p });
        }
        Ok((value, derivative[0]))
    }

    /// The segments' times at the unknowns `u`.
    pub(super) fn schedule(&mut self, u: &[f64]) -> Result<Schedule, StepFailure> {
        let m = self.segments;
        let p = u[u.len() - 1];
        if self.autonomous() {
            let period = u[self.n * m];
            if !(period.is_finite() && period > 0.0) {
                return Err(StepFailure::Period { period });
            }
            return Ok(Schedule {
                t0: 0.0,
                tau: period / m as f64,
                dtau: 0.0,
            });
        }
        let (strobe, derivative) = self.strobe_period(p)?;
        let k = self.returns() as f64;
        let Timing::Forced { first_at, .. } = &self.timing else {
            return Err(StepFailure::StrobePeriod { value: p });
        };
        Ok(Schedule {
            t0: *first_at,
            tau: k * strobe / m as f64,
            dtau: k * derivative / m as f64,
        })
    }

    /// The orbit's period at `u`.
    pub(super) fn period(&mut self, u: &[f64]) -> Result<f64, StepFailure> {
        let schedule = self.schedule(u)?;
        Ok(schedule.tau * self.segments as f64)
    }

    /// Integrates the states alone from `(t0, x0)` over `tau`; the end state is left in
    /// `plain`.
    pub(super) fn flow_plain(&mut self, t0: f64, x0: &[f64], tau: f64) -> Result<(), StepFailure> {
        self.plain.reset(&mut self.model, t0, x0);
        let t_end = t0 + tau;
        while self.plain.t() < t_end {
            self.plain.step(&mut self.model, t_end)?;
            check_escape(&self.plain.x()[..self.n], self.escape)?;
        }
        Ok(())
    }

    /// Integrates the states with `Phi` and `s` from `(t0, x0)` over `tau`; the end is left in
    /// `full`.
    fn flow_full(&mut self, t0: f64, x0: &[f64], tau: f64) -> Result<(), StepFailure> {
        let n = self.n;
        let z0 = Sensitivity::start(x0);
        let mut rates = Sensitivity::new(&mut self.model, self.parameter);
        self.full.reset(&mut rates, t0, &z0);
        let t_end = t0 + tau;
        while self.full.t() < t_end {
            // no dense output: only the end is wanted
            self.full.step_lazy(&mut rates, t_end)?;
            check_escape(&self.full.x()[..n], self.escape)?;
        }
        Ok(())
    }

    /// One segment's end state, `Phi` and `dx_end/dp` (the latter including, for a forced
    /// model, the motion of the segment's times with the strobe period).
    fn segment(
        &mut self,
        j: usize,
        u: &[f64],
        schedule: Schedule,
    ) -> Result<SegmentEnd, StepFailure> {
        let n = self.n;
        let x0 = u[j * n..(j + 1) * n].to_vec();
        let t0 = schedule.t0 + j as f64 * schedule.tau;
        if self.differences {
            return self.segment_by_differences(j, u, schedule);
        }
        self.flow_full(t0, &x0, schedule.tau)?;
        let z = self.full.x();
        let end = z[..n].to_vec();
        let phi = z[n..n + n * n].to_vec();
        let mut sensitivity = z[n + n * n..].to_vec();
        if schedule.dtau != 0.0 {
            // the segment runs from t0 + j tau to t0 + (j + 1) tau, both moving with p
            let mut f_end = vec![0.0; n];
            let mut f_start = vec![0.0; n];
            self.model.rates(t0 + schedule.tau, &end, &mut f_end);
            self.model.rates(t0, &x0, &mut f_start);
            let moved = super::super::linear::apply(&phi, &f_start);
            for i in 0..n {
                sensitivity[i] += schedule.dtau * ((j + 1) as f64 * f_end[i] - j as f64 * moved[i]);
            }
        }
        Ok(SegmentEnd {
            end,
            phi,
            sensitivity,
        })
    }

    /// [`OrbitProblem::segment`] by central differences of the flow (rates that jump with the
    /// states, where the variational equations miss the jumps).
    fn segment_by_differences(
        &mut self,
        j: usize,
        u: &[f64],
        schedule: Schedule,
    ) -> Result<SegmentEnd, StepFailure> {
        let n = self.n;
        let p = u[u.len() - 1];
        let x0 = u[j * n..(j + 1) * n].to_vec();
        let t0 = schedule.t0 + j as f64 * schedule.tau;
        let relative = self.rtol.cbrt();
        self.flow_plain(t0, &x0, schedule.tau)?;
        let end = self.plain.x().to_vec();
        let mut phi = vec![0.0; n * n];
        for c in 0..n {
            let delta = relative * x0[c].abs().max(1.0);
            let mut shifted = x0.clone();
            shifted[c] = x0[c] + delta;
            self.flow_plain(t0, &shifted, schedule.tau)?;
            let plus = self.plain.x().to_vec();
            shifted[c] = x0[c] - delta;
            self.flow_plain(t0, &shifted, schedule.tau)?;
            let minus = self.plain.x();
            for i in 0..n {
                phi[i * n + c] = (plus[i] - minus[i]) / (2.0 * delta);
            }
        }
        let delta = relative * p.abs().max(1.0);
        let mut ends = Vec::with_capacity(2);
        for shifted_p in [p + delta, p - delta] {
            self.model.set_parameter(self.parameter, shifted_p);
            let mut shifted_u = u.to_vec();
            let last = shifted_u.len() - 1;
            shifted_u[last] = shifted_p;
            let shifted_schedule = self.schedule(&shifted_u);
            let result = shifted_schedule.and_then(|s| {
                self.flow_plain(s.t0 + j as f64 * s.tau, &x0, s.tau)
                    .map(|()| self.plain.x().to_vec())
            });
            self.model.set_parameter(self.parameter, p);
            ends.push(result?);
        }
        let sensitivity = (0..n)
            .map(|i| (ends[0][i] - ends[1][i]) / (2.0 * delta))
            .collect();
        Ok(SegmentEnd {
            end,
            phi,
            sensitivity,
        })
    }

    /// Evaluates the shooting equations and their Jacobian at `u` (see the module's doc).
    pub(super) fn shoot(
        &mut self,
        u: &[f64],
        reference: &[f64],
        residual: &mut [f64],
        jacobian: &mut [f64],
    ) -> Result<(), StepFailure> {
        let n = self.n;
        let m = self.segments;
        let size = self.size();
        let p = u[size - 1];
        jacobian.fill(0.0);
        let mut flow_direction = vec![0.0; n];
        if self.autonomous() {
            // the phase condition's direction, at the reference point (fixed in the iteration)
            self.model
                .set_parameter(self.parameter, reference[size - 1]);
            self.model.rates(0.0, &reference[..n], &mut flow_direction);
        }
        self.model.set_parameter(self.parameter, p);
        let schedule = self.schedule(u)?;
        self.blocks.clear();
        let mut f_end = vec![0.0; n];
        for j in 0..m {
            let SegmentEnd {
                end,
                phi,
                sensitivity,
            } = self.segment(j, u, schedule)?;
            let next = (j + 1) % m;
            let t_end = schedule.t0 + (j + 1) as f64 * schedule.tau;
            if self.autonomous() {
                self.model.rates(t_end, &end, &mut f_end);
            }
            for i in 0..n {
                let row = (j * n + i) * size;
                residual[j * n + i] = end[i] - u[next * n + i];
                for c in 0..n {
                    jacobian[row + j * n + c] += phi[i * n + c];
                }
                jacobian[row + next * n + i] -= 1.0;
                if self.autonomous() {
                    jacobian[row + n * m] = f_end[i] / m as f64;
                }
                jacobian[row + size - 1] = sensitivity[i];
            }
            self.blocks.push(phi);
        }
        if self.autonomous() {
            let row = n * m;
            residual[row] = u[..n]
                .iter()
                .zip(&reference[..n])
                .zip(&flow_direction)
                .map(|((x, r), f)| (x - r) * f)
                .sum();
            jacobian[row * size..row * size + n].copy_from_slice(&flow_direction);
        }
        if residual
            .iter()
            .chain(jacobian.iter())
            .any(|v| !v.is_finite())
        {
            return Err(StepFailure::Spectrum);
        }
        self.evaluated_at = u.to_vec();
        Ok(())
    }
}

/// Fails when a state passed the escape size.
fn check_escape(x: &[f64], escape: f64) -> Result<(), StepFailure> {
    if x.iter().any(|v| v.abs() > escape) {
        return Err(StepFailure::Escaped { escape });
    }
    Ok(())
}
