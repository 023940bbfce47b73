//! One cell of a regime map: the model at the cell's two parameter values, run from a start
//! over the settle time and the span, its points, motion and largest Lyapunov exponent
//! recorded in the same pass over the span, and the whole classified.

use std::ops::ControlFlow;

use super::classify::{Evidence, classify};
use super::regime::{Failure, Regime};
use super::resting::{resting_exponent, rests_for_good};
use super::spec::RegimeMapSpec;
use crate::Interrupt;
use crate::lyapunov::{ExponentSettings, spectrum};
use crate::model::Model;
use crate::recurrence::RecurrenceSettings;
use crate::run::{Cut, CutPoint, Run, RunSpec, Sink, StopReason, Strobe, StrobeSample};
use crate::sweep::SweepSource;

/// At most this many of the latest points are kept for the recurrence detector.
const KEPT_POINTS: usize = 1024;

/// Samples of the exponent's running estimate kept for its spread.
const EXPONENT_SAMPLES: usize = 100;

/// The exponent counts as zero within this many spreads of its running estimate (over the
/// last fifth of the span) of zero, or within [`ZERO_BAND_RELATIVE`] of its size. A map's
/// span is short, so the estimate of a chaotic cell still wanders: one spread keeps such a
/// cell chaotic where the exponent report's stricter band would say undecided.
const ZERO_BAND_SPREADS: f64 = 1.0;

/// See [`ZERO_BAND_SPREADS`].
const ZERO_BAND_RELATIVE: f64 = 1e-3;

/// What every cell of one map shares: the compiled model (its parameters and start as the
/// scenario has them), the run settings (integrator, escape size, start time), the cut, the
/// strobe (compiled again per cell through `strobe_for`, since its period may depend on a
/// mapped parameter) and the map itself.
#[derive(Clone, Copy)]
pub struct MapProblem<'a> {
    /// The model.
    pub model: &'a Model,
    /// Integrator, tolerances, escape size and start time; the window comes from `map`.
    pub run: &'a RunSpec,
    /// The cut, for a map classified by cut points.
    pub cut: Option<&'a Cut>,
    /// The strobe for a model with the cell's parameter values.
    pub strobe_for: &'a (dyn Fn(&Model) -> Option<Strobe> + Sync),
    /// The map.
    pub map: &'a RegimeMapSpec,
}

/// One classified cell.
#[derive(Clone, Debug, PartialEq)]
pub struct MapCell {
    /// The cell's number (rows by y, then x).
    pub index: usize,
    /// The x parameter's value.
    pub x: f64,
    /// The y parameter's value.
    pub y: f64,
    /// What the cell settles into.
    pub regime: Regime,
    /// The largest Lyapunov exponent: for a cell at rest, the largest real part of the
    /// eigenvalues of the Jacobian at its resting point; otherwise the estimate over the
    /// recorded span (over one span after it for a model with switches: see [`run_cell`]).
    /// `None` for a cell that escaped or failed before it was estimated.
    pub lyapunov: Option<f64>,
    /// Whether the points had settled (`false`: the regime is the one they approach).
    pub settled: bool,
    /// Cut points or strobe samples recorded in the span.
    pub n_points: usize,
    /// Time and state where the recorded run ended (the start of the next cell in order).
    pub end: (f64, Vec<f64>),
}

impl MapCell {
    /// Whether the cell was not finished because the interrupt was raised.
    pub fn is_cancelled(&self) -> bool {
        matches!(
            self.regime,
            Regime::Failed(Failure::Stopped(StopReason::Cancelled { .. }))
        )
    }
}

/// Keeps the latest points of one kind and the range and size of the motion at step ends.
struct CellSink {
    source: SweepSource,
    points: Vec<Vec<f64>>,
    n_points: usize,
    low: Vec<f64>,
    high: Vec<f64>,
    largest: Vec<f64>,
}

impl CellSink {
    fn new(source: SweepSource, dim: usize) -> Self {
        Self {
            source,
            points: Vec::new(),
            n_points: 0,
            low: vec![f64::INFINITY; dim],
            high: vec![f64::NEG_INFINITY; dim],
            largest: vec![0.0; dim],
        }
    }

    fn take(&mut self, state: &[f64]) -> ControlFlow<()> {
        if self.points.len() >= 2 * KEPT_POINTS {
            self.points.drain(..KEPT_POINTS);
        }
        self.points.push(state.to_vec());
        self.n_points += 1;
        ControlFlow::Continue(())
    }

    /// The largest range of any state (0 before any step).
    fn motion(&self) -> f64 {
        (self.low.iter().zip(&self.high))
            .map(|(lo, hi)| if hi >= lo { hi - lo } else { 0.0 })
            .fold(0.0, f64::max)
    }

    /// Root-mean-square of the states' largest magnitudes.
    fn size(&self) -> f64 {
        let n = self.largest.len().max(1) as f64;
        (self.largest.iter().map(|v| v * v).sum::<f64>() / n).sqrt()
    }
}

impl Sink for CellSink {
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        if self.source == SweepSource::Cut {
            self.take(&point.state)
        } else {
            ControlFlow::Continue(())
        }
    }
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        if self.source == SweepSource::Strobe {
            self.take(&sample.state)
        } else {
            ControlFlow::Continue(())
        }
    }
    fn step(&mut self, _t: f64, state: &[f64]) {
        let bounds = self
            .low
            .iter_mut()
            .zip(&mut self.high)
            .zip(&mut self.largest);
        for (((low, high), largest), &v) in bounds.zip(state) {
            *low = low.min(v);
            *high = high.max(v);
            *largest = largest.max(v.abs());
        }
    }
}

/// Runs cell `index` of `problem`'s map from `start` (time and state): the model with the
/// cell's parameter values settles for the map's settle time, then its points, its motion
/// and its largest Lyapunov exponent are recorded over the span in one pass (the run carries
/// one tangent vector: [`Run::carry_tangent`]), and the cell is classified ([`classify`])
/// with the recurrence tolerances of the run's integrator.
///
/// A model with switches (rates with `sign`, `step`, `min`, `max`, ...) is run without the
/// tangent vector, and its exponent is estimated over one more span from where the recorded
/// run ended by [`spectrum`], which carries the vector through the switches with saltation
/// matrices.
///
/// A cell of a model that does not use `t` whose motion over the span stays within the
/// recurrence tolerance rests: its exponent is then the exact one, the largest real part of
/// the eigenvalues of the Jacobian at the resting point that Newton's method finds from the
/// run's end (when it lies within that tolerance; the span's estimate otherwise). When the
/// settle time already ends so close to a stable resting point that the linearised flow
/// cannot move the state by that tolerance over any time (a bound from the Lyapunov equation), the span is
/// not run at all: the cell rests, with the exact exponent, no points and its end where the
/// settle time ended.
///
/// A run that escapes gives [`Regime::Escaped`], one stopped by other numerical trouble
/// [`Regime::Failed`] with its reason; a raised `interrupt` gives a cancelled cell
/// ([`MapCell::is_cancelled`]).
pub fn run_cell(
    problem: &MapProblem<'_>,
    index: usize,
    start: (f64, &[f64]),
    interrupt: &Interrupt,
) -> MapCell {
    let map = problem.map;
    let (x, y) = map.cell_values(index);
    let mut model = problem.model.clone();
    model.set_parameter(map.x.parameter, x);
    model.set_parameter(map.y.parameter, y);
    model.set_start(start.1);
    let autonomous = !model.uses_time();
    let (cut, strobe) = match map.source {
        SweepSource::Cut => (problem.cut.cloned(), None),
        SweepSource::Strobe => match (problem.strobe_for)(&model) {
            Some(strobe) => (None, Some(strobe)),
            None => {
                // the period has no valid value in this cell: say so instead of running
                return MapCell {
                    regime: Regime::Failed(Failure::Stopped(StopReason::StrobePeriod)),
                    ..cell_at(index, (x, y), start.0, start.1.to_vec(), 0)
                };
            }
        },
    };
    let run_spec = RunSpec {
        t_start: start.0,
        settle: map.settle,
        span: map.span,
        max_points: usize::MAX,
        ..problem.run.clone()
    };
    let mut sink = CellSink::new(map.source, model.start().len());
    let mut run = Run::new(model.clone(), run_spec, cut, strobe, false);
    let recurrence = RecurrenceSettings::for_control(&problem.run.control);
    let settle = run.execute_settle(&mut sink, interrupt);
    if let Some(regime) = stopped(settle.reason) {
        return MapCell {
            regime,
            ..cell_at(index, (x, y), settle.t_reached, settle.final_state, 0)
        };
    }
    // at rest for good already: the span could not show any motion
    if autonomous {
        let tolerance = |size| recurrence.tolerance(size);
        let escape = problem.run.escape;
        if let Some(exact) = rests_for_good(&mut model, &settle.final_state, tolerance, escape) {
            return MapCell {
                lyapunov: Some(exact),
                ..cell_at(index, (x, y), settle.t_reached, settle.final_state, 0)
            };
        }
    }
    let one_pass = run.carry_tangent(&exponent_settings());
    let outcome = run.execute(&mut sink, interrupt);
    let n_points = sink.n_points;
    let mut cell = cell_at(
        index,
        (x, y),
        outcome.t_reached,
        outcome.final_state,
        n_points,
    );
    if let Some(regime) = stopped(outcome.reason) {
        cell.regime = regime;
        return cell;
    }
    let exponent = if one_pass {
        run.largest_exponent()
            .map(|e| with_band(&mut cell, e.value, e.spread))
    } else {
        match exponent_over_next_span(problem, &mut model, &mut cell, interrupt) {
            Ok(exponent) => exponent,
            Err(reason) => {
                cell.regime = Regime::Failed(Failure::Stopped(reason));
                return cell;
            }
        }
    };
    let evidence = Evidence {
        points: &sink.points,
        motion: sink.motion(),
        size: sink.size(),
        exponent,
        autonomous,
        flow_dimension: sink.low.len() + usize::from(!autonomous),
    };
    let (regime, settled) = classify(&evidence, &recurrence);
    cell.regime = regime;
    cell.settled = settled;
    // resting by its motion (not only approaching rest): the exponent is known exactly
    if regime == Regime::Resting && settled && autonomous {
        let near = recurrence.tolerance(sink.size());
        if let Some((_, _, exact)) =
            resting_exponent(&mut model, &cell.end.1, near, problem.run.escape)
        {
            cell.lyapunov = Some(exact);
        }
    }
    cell
}

/// A resting, settled cell at `(x, y)` without an exponent, whose run ended at `t` in `state`
/// with `n_points` recorded.
fn cell_at(index: usize, (x, y): (f64, f64), t: f64, state: Vec<f64>, n_points: usize) -> MapCell {
    MapCell {
        index,
        x,
        y,
        regime: Regime::Resting,
        lyapunov: None,
        settled: true,
        n_points,
        end: (t, state),
    }
}

/// The regime of a cell whose run stopped for `reason` before its end: escaped, or failed
/// with the reason; `None` for a run that went through.
fn stopped(reason: StopReason) -> Option<Regime> {
    match reason {
        StopReason::Finished | StopReason::SinkStopped { .. } | StopReason::PointLimit { .. } => {
            None
        }
        StopReason::Escaped { t, .. } => Some(Regime::Escaped { t }),
        other => Some(Regime::Failed(Failure::Stopped(other))),
    }
}

/// How the cell's largest exponent is estimated: one vector, the trace samples the spread is
/// taken from, the other settings as the exponent report has them.
fn exponent_settings() -> ExponentSettings {
    ExponentSettings {
        count: Some(1),
        trace_samples: EXPONENT_SAMPLES,
        ..ExponentSettings::default()
    }
}

/// Records `largest` as the cell's exponent when finite, and returns it with the band around
/// zero within which it counts as zero for the classification.
fn with_band(cell: &mut MapCell, largest: f64, spread: f64) -> (f64, f64) {
    cell.lyapunov = largest.is_finite().then_some(largest);
    let band = (ZERO_BAND_SPREADS * spread).max(ZERO_BAND_RELATIVE * largest.abs());
    (largest, band)
}

/// The two-pass estimate for a model with switches: the largest exponent by [`spectrum`] over
/// one more span from where the recorded run ended (`model` is moved there). `None` when it
/// could not be estimated; `Err` with the reason when the interrupt was raised.
fn exponent_over_next_span(
    problem: &MapProblem<'_>,
    model: &mut Model,
    cell: &mut MapCell,
    interrupt: &Interrupt,
) -> Result<Option<(f64, f64)>, StopReason> {
    model.set_start(&cell.end.1);
    let exponent_run = RunSpec {
        t_start: cell.end.0,
        settle: 0.0,
        span: problem.map.span,
        ..problem.run.clone()
    };
    let settings = exponent_settings();
    match spectrum(model.clone(), &exponent_run, &settings, &mut (), interrupt) {
        Ok(s) if matches!(s.reason, StopReason::Cancelled { .. }) => Err(s.reason),
        Ok(s) if s.reason == StopReason::Finished => {
            let spread = s.spread.first().copied().unwrap_or(f64::NAN);
            Ok(Some(with_band(cell, s.largest(), spread)))
        }
        Ok(s) => {
            cell.lyapunov = s.largest().is_finite().then(|| s.largest());
            Ok(None)
        }
        Err(_) => Ok(None),
    }
}
