//! The picture of a branch: its lines (stable solid, unstable dashed; one line per recorded
//! point of an orbit) and special points over the sweep's orbit diagram when that is cheap to
//! compute, else the branch alone. Used by `lamina branch --png` and `lamina render --view
//! branch`.

use std::ops::ControlFlow;
use std::path::Path;

use anyhow::{Context, Result};
use lamina_core::Interrupt;
use lamina_core::branch::{Branch, BranchOf};
use lamina_core::run::{CutPoint, Run, RunSpec, Sink, Strobe, StrobeSample};
use lamina_core::sweep::SweepSource;
use lamina_render::{BranchLine, BranchMark, Figure, picture_title, view_names};

use super::branch::Followed;
use super::prepare::Prepared;

/// The sweep's cloud is drawn when its estimated integrator steps stay below this (a few
/// seconds of computing on one core for a small model).
const SWEEP_STEP_BUDGET: u64 = 3_000_000;

/// The PNG of the branch and a note on what it shows.
pub fn branch_picture(
    prepared: &Prepared,
    path: &Path,
    followed: &Followed,
    size: (u32, u32),
) -> Result<(Vec<u8>, String)> {
    let scenario = &prepared.scenario;
    let coordinate = scenario
        .sweep_coordinate_index()
        .context("sweep.coordinate is not a state of the model")?;
    let (cloud, note) = match sweep_cost(prepared) {
        Some(cost) if cost <= SWEEP_STEP_BUDGET => {
            let (_, _, _, columns) = super::sweep::run_sweep(path, None)?;
            let cloud: Vec<(f64, f64)> = columns
                .iter()
                .flat_map(|c| c.points.iter().map(move |p| (c.value, p[coordinate])))
                .collect();
            let note = format!(
                "the branch over the orbit diagram of the sweep's {} values",
                columns.len()
            );
            (cloud, note)
        }
        Some(cost) => (
            Vec::new(),
            format!(
                "the branch alone: the sweep's orbit diagram would take about {cost} integrator \
                 steps; `lamina sweep --png` draws it"
            ),
        ),
        None => (Vec::new(), "the branch alone".to_string()),
    };
    let branch = &followed.branch;
    let view = match branch.of {
        BranchOf::Rest => view_names::RESTING_BRANCH,
        BranchOf::Orbit => view_names::ORBIT_BRANCH,
    };
    let figure = Figure {
        size,
        title: picture_title(&scenario.title, view),
        caption: scenario.caption(),
        x_label: scenario.parameter_label(branch.parameter),
        y_label: scenario.state_label(coordinate),
    };
    let mut marks: Vec<BranchMark> = branch
        .born_at
        .iter()
        .chain(&branch.special)
        .map(|s| BranchMark {
            x: s.value,
            y: s.state[coordinate],
            label: s.kind.words().to_string(),
        })
        .collect();
    marks.dedup_by(|a, b| a.x == b.x && a.label == b.label);
    let bytes = lamina_render::branch_png(&figure, &cloud, &lines(branch, coordinate), &marks)?;
    Ok((bytes, note))
}

/// The coordinate of each recorded point (one per line of the picture), or of the state
/// where nothing is recorded.
fn lanes(state: &[f64], points: &[Vec<f64>], coordinate: usize) -> Vec<f64> {
    if points.is_empty() {
        vec![state[coordinate]]
    } else {
        points.iter().map(|p| p[coordinate]).collect()
    }
}

/// A corner of the branch's lines: a computed point (with its stability) or a special point
/// (where a line may change from stable to unstable).
struct Vertex {
    value: f64,
    lanes: Vec<f64>,
    stable: Option<bool>,
}

/// The branch as lines: one per recorded point, cut where the stability or the number of
/// recorded points changes; a special point between two points ends one line and starts the
/// next, and a branch born at a special point starts there.
fn lines(branch: &Branch, coordinate: usize) -> Vec<BranchLine> {
    let mut vertices = Vec::new();
    if let (Some(born), Some(first)) = (&branch.born_at, branch.points.first()) {
        // the orbit born there, drawn from the point it is born at (each line of a doubled
        // orbit from the one point of the orbit that doubles)
        let at = lanes(&born.state, &born.points, coordinate);
        let count = lanes(&first.state, &first.points, coordinate).len();
        vertices.push(Vertex {
            value: born.value,
            lanes: (0..count).map(|i| at[i % at.len()]).collect(),
            stable: None,
        });
    }
    for (idx, point) in branch.points.iter().enumerate() {
        vertices.push(Vertex {
            value: point.value,
            lanes: lanes(&point.state, &point.points, coordinate),
            stable: Some(point.stable),
        });
        for special in branch.special.iter().filter(|s| s.after == idx) {
            vertices.push(Vertex {
                value: special.value,
                lanes: lanes(&special.state, &special.points, coordinate),
                stable: None,
            });
        }
    }
    let mut done = Vec::new();
    let mut open: Vec<BranchLine> = Vec::new();
    let mut open_stable: Option<bool> = None;
    let mut last: Option<&Vertex> = None;
    for vertex in &vertices {
        let fits = open.len() == vertex.lanes.len();
        let continues = fits && (vertex.stable.is_none() || vertex.stable == open_stable);
        if continues {
            for (line, &y) in open.iter_mut().zip(&vertex.lanes) {
                line.points.push((vertex.value, y));
            }
        } else if let Some(stable) = vertex.stable {
            done.append(&mut open);
            open = vertex
                .lanes
                .iter()
                .enumerate()
                .map(|(i, &y)| {
                    let mut points = Vec::new();
                    if let Some(previous) = last
                        && previous.lanes.len() == vertex.lanes.len()
                    {
                        points.push((previous.value, previous.lanes[i]));
                    }
                    points.push((vertex.value, y));
                    BranchLine { points, stable }
                })
                .collect();
            open_stable = Some(stable);
        }
        last = Some(vertex);
    }
    done.append(&mut open);
    done
}

/// Counts the kept points of one sweep value and stops after `keep`.
struct Keep {
    source: SweepSource,
    keep: usize,
    kept: usize,
}

impl Keep {
    fn take(&mut self) -> ControlFlow<()> {
        self.kept += 1;
        if self.kept >= self.keep {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    }
}

impl Sink for Keep {
    fn cut_point(&mut self, _point: &CutPoint) -> ControlFlow<()> {
        if self.source == SweepSource::Cut {
            return self.take();
        }
        ControlFlow::Continue(())
    }
    fn strobe_sample(&mut self, _sample: &StrobeSample) -> ControlFlow<()> {
        if self.source == SweepSource::Strobe {
            return self.take();
        }
        ControlFlow::Continue(())
    }
}

/// The integrator steps the whole sweep would take, estimated from its middle value run as
/// the sweep runs it; `None` when the scenario has no sweep to draw.
fn sweep_cost(prepared: &Prepared) -> Option<u64> {
    let scenario = &prepared.scenario;
    let spec = scenario.sweep_spec()?;
    let n_values = spec.n_values();
    let value = spec.value(n_values / 2);
    let mut model = prepared.model.clone();
    model.set_parameter(spec.parameter, value);
    let (cut, strobe) = match spec.source {
        SweepSource::Cut => (prepared.cut.clone(), None),
        SweepSource::Strobe => (
            None,
            scenario
                .strobe_spec()
                .and_then(|s| Strobe::compile(&s, &model).ok()),
        ),
    };
    let run = RunSpec {
        settle: spec.settle,
        span: spec.span,
        max_points: usize::MAX,
        ..prepared.spec.clone()
    };
    let mut sink = Keep {
        source: spec.source,
        keep: spec.keep.max(1),
        kept: 0,
    };
    let outcome = Run::new(model, run, cut, strobe, false).execute(&mut sink, &Interrupt::new());
    Some(outcome.stats.n_accepted.saturating_mul(n_values as u64))
}
