//! The second computation of a recheck, one function per kind of result: a periodic orbit
//! refined again from its point, a run's points integrated again from their first point, a
//! Lyapunov spectrum computed again over the same window. Each then compares.

use std::ops::ControlFlow;

use super::{Recheck, RecheckError, compare_cycles, compare_points, compare_spectra, tighter};
use crate::Interrupt;
use crate::cycle::{CycleReport, FlowMap, MapKind, MapPoint, MapSettings, NewtonSettings, refine};
use crate::integrate::StepControl;
use crate::lyapunov::{ExponentSettings, ExponentSink, Spectrum, spectrum};
use crate::model::Model;
use crate::run::{CutPoint, Run, RunSpec, Sink, StopReason, StrobeSample};

fn failed(control: &StepControl, reason: impl ToString) -> RecheckError {
    RecheckError::Failed {
        rtol: control.rtol,
        atol: control.atol,
        reason: reason.to_string(),
    }
}

/// Rechecks a periodic orbit: Newton's method again from the orbit's point, on the same map
/// (`kind`) integrated with the tolerances of `settings` divided by 100 and a Newton
/// tolerance to match ([`NewtonSettings::for_rtol`]), then [`compare_cycles`].
///
/// `settings` are those the first orbit was found with; `names` name the states.
///
/// # Errors
/// [`RecheckError::Failed`] when the map cannot be built or Newton's method does not
/// converge at the tighter tolerances (then the first answer is itself doubtful).
pub fn cycle(
    model: Model,
    kind: MapKind,
    settings: &MapSettings,
    first: &CycleReport,
    names: &[String],
) -> Result<Recheck, RecheckError> {
    let control = tighter(&settings.control);
    let tight = MapSettings {
        control,
        ..*settings
    };
    let mut map = FlowMap::new(model, kind, tight).map_err(|e| failed(&control, e))?;
    let newton = NewtonSettings::for_rtol(control.rtol);
    let second = refine(&mut map, &first.point, first.k, &newton)
        .and_then(|refined| CycleReport::measure(&mut map, refined))
        .map_err(|e| failed(&control, e))?;
    compare_cycles(first, &second, names, settings.control.atol, &control)
}

/// Keeps the points of one kind after the common start, up to a count.
struct Collect {
    cut: bool,
    t_start: f64,
    wanted: usize,
    points: Vec<MapPoint>,
}

/// A crossing this close after the common start (relative to its time) is the start itself,
/// found again because the start lies a rounding error before the cut surface.
const SAME_TIME: f64 = 1e-9;

impl Collect {
    fn take(&mut self, t: f64, state: &[f64]) -> ControlFlow<()> {
        if t - self.t_start > SAME_TIME * self.t_start.abs().max(1.0) {
            self.points.push(MapPoint {
                t,
                state: state.to_vec(),
            });
        }
        if self.points.len() >= self.wanted {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    }
}

impl Sink for Collect {
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        if self.cut {
            self.take(point.t, &point.state)
        } else {
            ControlFlow::Continue(())
        }
    }
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        if self.cut {
            ControlFlow::Continue(())
        } else {
            self.take(sample.t, &sample.state)
        }
    }
}

/// Rechecks a run's points (cut points for a cut `kind`, strobe samples for a strobe): the
/// run integrated again from its first point `first[0]` (a state on the trajectory, so the
/// two computations share a start and the settle time plays no part) to the end of `run`'s
/// window, with both tolerances divided by 100, as many points as `first` has; then
/// [`compare_points`] (for a chaotic run over a short horizon, said in the note).
///
/// # Errors
/// [`RecheckError::Cancelled`] when `interrupt` is raised; [`RecheckError::NothingToCompare`]
/// when `first` has fewer than two points or the second computation finds none after the
/// start. A second computation stopped early by numerical trouble is compared as far as it
/// went, and the note says why it stopped.
pub fn points(
    model: &Model,
    run: &RunSpec,
    kind: &MapKind,
    first: &[MapPoint],
    names: &[String],
    interrupt: &Interrupt,
) -> Result<Recheck, RecheckError> {
    let Some(start) = first.first() else {
        return Err(RecheckError::NothingToCompare("no points".to_string()));
    };
    let control = tighter(&run.control);
    let mut model = model.clone();
    model.set_start(&start.state);
    let spec = RunSpec {
        control,
        t_start: start.t,
        settle: 0.0,
        span: (run.t_end() - start.t).max(0.0),
        max_points: usize::MAX,
        ..run.clone()
    };
    let (cut, strobe) = match kind {
        MapKind::Cut(cut) => (Some(cut.clone()), None),
        MapKind::Strobe(strobe) => (None, Some(*strobe)),
    };
    let is_cut = cut.is_some();
    let mut sink = Collect {
        cut: is_cut,
        t_start: start.t,
        wanted: first.len(),
        points: vec![start.clone()],
    };
    let outcome = Run::new(model, spec, cut, strobe, false).execute(&mut sink, interrupt);
    if let StopReason::Cancelled { t } = outcome.reason {
        return Err(RecheckError::Cancelled { t });
    }
    let mut recheck = compare_points(
        first,
        &sink.points,
        names,
        is_cut,
        run.control.atol,
        &control,
    )?;
    if outcome.reason.is_trouble() {
        let stopped = format!("the second computation stopped early: {}", outcome.reason);
        recheck.note = Some(match recheck.note.take() {
            Some(note) => format!("{note}; {stopped}"),
            None => stopped,
        });
    }
    Ok(recheck)
}

/// Rechecks a Lyapunov spectrum: the same computation (`settings`, `run`'s window) with both
/// tolerances divided by 100, then [`compare_spectra`]. Progress and running estimates of
/// the second computation go to `sink`.
///
/// # Errors
/// [`RecheckError::Cancelled`] when `interrupt` is raised; [`RecheckError::Failed`] when the
/// settings cannot run.
pub fn exponents(
    model: Model,
    run: &RunSpec,
    settings: &ExponentSettings,
    first: &Spectrum,
    sink: &mut dyn ExponentSink,
    interrupt: &Interrupt,
) -> Result<Recheck, RecheckError> {
    let control = tighter(&run.control);
    let spec = RunSpec {
        control,
        ..run.clone()
    };
    let second =
        spectrum(model, &spec, settings, sink, interrupt).map_err(|e| failed(&control, e))?;
    if let StopReason::Cancelled { t } = second.reason {
        return Err(RecheckError::Cancelled { t });
    }
    let mut recheck = compare_spectra(first, &second, &control)?;
    if second.reason != StopReason::Finished {
        let stopped = format!("the second computation stopped early: {}", second.reason);
        recheck.note = Some(match recheck.note.take() {
            Some(note) => format!("{note}; {stopped}"),
            None => stopped,
        });
    }
    Ok(recheck)
}
