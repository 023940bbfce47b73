//! Running the values of a sweep: one run per value, sequential when following a branch and
//! parallel (rayon) when every value restarts.

use std::ops::ControlFlow;

use rayon::prelude::*;

use super::{SweepColumn, SweepSource, SweepSpec};
use crate::Interrupt;
use crate::model::Model;
use crate::run::{Cut, CutPoint, Run, RunSpec, Sink, StopReason, Strobe, StrobeSample};

/// Why a sweep could not run.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SweepError {
    /// The sweep keeps cut points but there is no cut (or strobe samples without a strobe).
    #[error("the sweep keeps {0} but the scenario has none")]
    MissingSource(&'static str),
    /// The parameter index is out of range.
    #[error("the swept parameter does not exist")]
    NoParameter,
    /// The strobe period depends on the swept parameter and does not evaluate.
    #[error("the strobe period is not a positive number at {parameter} = {value}")]
    BadPeriod {
        /// Parameter name.
        parameter: String,
        /// Its value.
        value: f64,
    },
}

/// Keeps the first `keep` points after the transient, then stops the run.
struct KeepSink {
    source: SweepSource,
    keep: usize,
    points: Vec<Vec<f64>>,
    times: Vec<f64>,
}

impl KeepSink {
    fn take(&mut self, t: f64, state: &[f64]) -> ControlFlow<()> {
        self.points.push(state.to_vec());
        self.times.push(t);
        if self.points.len() >= self.keep {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    }
}

impl Sink for KeepSink {
    fn cut_point(&mut self, point: &CutPoint) -> ControlFlow<()> {
        if self.source == SweepSource::Cut {
            self.take(point.t, &point.state)
        } else {
            ControlFlow::Continue(())
        }
    }
    fn strobe_sample(&mut self, sample: &StrobeSample) -> ControlFlow<()> {
        if self.source == SweepSource::Strobe {
            self.take(sample.t, &sample.state)
        } else {
            ControlFlow::Continue(())
        }
    }
}

/// Runs one value: the model with parameter `spec.parameter` set to `value`, from `(t0, x0)`,
/// settling for `spec.settle` and keeping up to `spec.keep` points. The strobe is compiled
/// again for the value when its period depends on the parameter (`strobe_for`).
#[allow(clippy::too_many_arguments)]
pub fn run_value(
    model: &Model,
    run: &RunSpec,
    cut: Option<&Cut>,
    strobe_for: &dyn Fn(&Model) -> Option<Strobe>,
    spec: &SweepSpec,
    index: usize,
    start: (f64, &[f64]),
    interrupt: &Interrupt,
) -> SweepColumn {
    let value = spec.value(index);
    let mut model = model.clone();
    model.set_parameter(spec.parameter, value);
    model.set_start(start.1);
    let strobe = strobe_for(&model);
    let run_spec = RunSpec {
        t_start: start.0,
        settle: spec.settle,
        span: spec.span,
        max_points: usize::MAX,
        ..run.clone()
    };
    let (cut, strobe) = match spec.source {
        SweepSource::Cut => (cut.cloned(), None),
        SweepSource::Strobe if strobe.is_none() => {
            // the period has no valid value here: say so instead of running unsampled
            let end = (start.0, start.1.to_vec());
            return SweepColumn {
                index,
                value,
                points: Vec::new(),
                times: Vec::new(),
                reason: StopReason::StrobePeriod,
                end,
            };
        }
        SweepSource::Strobe => (None, strobe),
    };
    let mut sink = KeepSink {
        source: spec.source,
        keep: spec.keep.max(1),
        points: Vec::new(),
        times: Vec::new(),
    };
    let outcome = Run::new(model, run_spec, cut, strobe, false).execute(&mut sink, interrupt);
    SweepColumn {
        index,
        value,
        points: sink.points,
        times: sink.times,
        reason: outcome.reason,
        end: (outcome.t_reached, outcome.final_state),
    }
}

fn check(
    spec: &SweepSpec,
    model: &Model,
    cut: Option<&Cut>,
    has_strobe: bool,
) -> Result<(), SweepError> {
    if spec.parameter >= model.parameters().len() {
        return Err(SweepError::NoParameter);
    }
    match spec.source {
        SweepSource::Cut if cut.is_none() => Err(SweepError::MissingSource("cut points")),
        SweepSource::Strobe if !has_strobe => Err(SweepError::MissingSource("strobe samples")),
        _ => Ok(()),
    }
}

/// Follows the branch through `indices` in order: each value starts at the time and state where
/// the previous one ended (the first from the model's start at `run.t_start`). Every column
/// goes to `each` as soon as it is done; `Break` or the interrupt stops the sweep.
#[allow(clippy::too_many_arguments)]
pub fn sweep_follow(
    model: &Model,
    run: &RunSpec,
    cut: Option<&Cut>,
    strobe_for: &dyn Fn(&Model) -> Option<Strobe>,
    spec: &SweepSpec,
    indices: &[usize],
    interrupt: &Interrupt,
    each: &mut dyn FnMut(&SweepColumn) -> ControlFlow<()>,
) -> Result<(), SweepError> {
    check(spec, model, cut, strobe_for(model).is_some())?;
    let mut start = (run.t_start, model.start().to_vec());
    for &index in indices {
        if interrupt.is_raised() {
            break;
        }
        let column = run_value(
            model,
            run,
            cut,
            strobe_for,
            spec,
            index,
            (start.0, &start.1),
            interrupt,
        );
        let trouble = column.reason.is_trouble();
        start = if trouble {
            (run.t_start, model.start().to_vec())
        } else {
            column.end.clone()
        };
        if each(&column).is_break() || matches!(column.reason, StopReason::Cancelled { .. }) {
            break;
        }
    }
    Ok(())
}

/// Runs every value in `indices` from the model's start, in parallel on rayon's current pool.
/// `each` sees every column as it finishes (in any order, from any pool thread); the result is
/// sorted by index. Values not run because of the interrupt are left out.
#[allow(clippy::too_many_arguments)]
pub fn sweep_restart(
    model: &Model,
    run: &RunSpec,
    cut: Option<&Cut>,
    strobe_for: &(dyn Fn(&Model) -> Option<Strobe> + Sync),
    spec: &SweepSpec,
    indices: &[usize],
    interrupt: &Interrupt,
    each: &(dyn Fn(&SweepColumn) + Sync),
) -> Result<Vec<SweepColumn>, SweepError> {
    check(spec, model, cut, strobe_for(model).is_some())?;
    let mut columns: Vec<SweepColumn> = indices
        .par_iter()
        .filter_map(|&index| {
            if interrupt.is_raised() {
                return None;
            }
            let column = run_value(
                model,
                run,
                cut,
                strobe_for,
                spec,
                index,
                (run.t_start, model.start()),
                interrupt,
            );
            if matches!(column.reason, StopReason::Cancelled { .. }) {
                return None;
            }
            each(&column);
            Some(column)
        })
        .collect();
    columns.sort_by_key(|c| c.index);
    Ok(columns)
}
