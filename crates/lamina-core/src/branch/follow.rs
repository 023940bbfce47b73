//! The entry points: follow a resting point's branch, a periodic orbit's branch, the orbits
//! born at a Hopf point, or the doubled orbits born at a period doubling; each walks from its
//! start toward both ends of the range (one end when the start is on the other, one way from
//! a special point) and puts the halves together in branch order.

use super::error::{BranchError, StepFailure};
use super::orbit::{Born, OrbitLimits, OrbitMap, OrbitProblem, OrbitStart};
use super::problem::Problem;
use super::rest_problem::RestProblem;
use super::settings::BranchSettings;
use super::types::{
    Branch, BranchEnd, BranchOf, BranchPoint, BranchRange, BranchSink, BranchStart, SpecialKind,
    SpecialPoint,
};
use super::walk::{Half, Station, Walker};
use crate::Interrupt;
use crate::model::Model;
use crate::run::RunSpec;

/// The first step of a branch born at a special point, as a fraction of the state's size.
const BORN_STEP: f64 = 0.02;

/// Checks the range against the model; returns the model's value of the parameter.
fn check_range(model: &Model, range: &BranchRange) -> Result<f64, BranchError> {
    let value = *model
        .parameters()
        .get(range.parameter)
        .ok_or(BranchError::NoParameter)?;
    if !(range.from.is_finite() && range.to.is_finite()) {
        return Err(BranchError::BadRange {
            from: range.from,
            to: range.to,
        });
    }
    if range.from == range.to {
        return Err(BranchError::EmptyRange { value: range.from });
    }
    if !(range.low() <= value && value <= range.high()) {
        return Err(BranchError::OutsideRange {
            value,
            low: range.low(),
            high: range.high(),
        });
    }
    Ok(value)
}

/// The walker of `problem` over `range`.
fn walker<'a, P: Problem>(
    problem: P,
    range: &BranchRange,
    settings: &'a BranchSettings,
    interrupt: &'a Interrupt,
) -> Walker<'a, P> {
    Walker {
        problem,
        settings,
        low: range.low(),
        high: range.high(),
        width: range.width(),
        interrupt,
    }
}

/// Follows the resting point of `model` near `state` in the parameter of `range`, from the
/// model's value toward both ends of the range.
///
/// # Errors
/// [`BranchError::Forced`] for a model that uses `t`; the range errors;
/// [`BranchError::NotNear`] when Newton's method finds no resting point from `state`.
pub fn follow_rest_branch(
    model: &Model,
    range: &BranchRange,
    state: &[f64],
    settings: &BranchSettings,
    sink: &mut dyn BranchSink,
    interrupt: &Interrupt,
) -> Result<Branch, BranchError> {
    if model.uses_time() {
        return Err(BranchError::Forced);
    }
    let value = check_range(model, range)?;
    if state.len() != model.start().len() {
        return Err(BranchError::NotNear {
            what: "resting point",
            detail: format!(
                "the state has {} values but the model has {} states",
                state.len(),
                model.start().len()
            ),
        });
    }
    let problem = RestProblem::new(model.clone(), range.parameter, settings.rest_tolerance);
    let mut u0 = state.to_vec();
    u0.push(value);
    let mut start_walker = walker(problem.clone(), range, settings, interrupt);
    let start = start_walker
        .settle_start(&u0)
        .map_err(|failure| not_near("resting point", failure))?;
    Ok(both_ways(
        problem,
        start,
        range,
        settings,
        sink,
        interrupt,
        BranchOf::Rest,
        BranchStart::Given { value },
    ))
}

/// Follows the periodic orbit `start` of `model` on `map` in the parameter of `range`, from
/// the model's value toward both ends, integrated with `integration`'s method, tolerances and
/// bound.
///
/// # Errors
/// The range errors; [`BranchError::ForcedCut`] / [`BranchError::AutonomousStrobe`] for a
/// map that does not fit the model; [`BranchError::NotNear`] when Newton's method does not
/// hold the orbit.
#[allow(clippy::too_many_arguments)]
pub fn follow_orbit_branch(
    model: &Model,
    map: &OrbitMap,
    integration: &RunSpec,
    range: &BranchRange,
    start: &OrbitStart,
    settings: &BranchSettings,
    sink: &mut dyn BranchSink,
    interrupt: &Interrupt,
) -> Result<Branch, BranchError> {
    let value = check_range(model, range)?;
    check_map(model, map)?;
    if start.state.len() != model.start().len() || !(start.period.is_finite() && start.period > 0.0)
    {
        return Err(BranchError::BadOrbit {
            detail: format!(
                "has {} values for {} states and period {}",
                start.state.len(),
                model.start().len(),
                start.period
            ),
        });
    }
    let segments = start.segments(settings.growth_per_segment, settings.max_segments);
    let mut problem = orbit_problem(
        model,
        map,
        integration,
        range,
        settings,
        segments,
        start.returns,
        start.period,
    )?;
    let u0 = problem
        .unknowns_through(&start.state, start.period, value)
        .map_err(|failure| not_near("periodic orbit", failure))?;
    let mut start_walker = walker(problem.clone(), range, settings, interrupt);
    let station = start_walker
        .settle_start(&u0)
        .map_err(|failure| not_near("periodic orbit", failure))?;
    // the layout the start was settled in
    let problem = start_walker.problem;
    Ok(both_ways(
        problem,
        station,
        range,
        settings,
        sink,
        interrupt,
        BranchOf::Orbit,
        BranchStart::Given { value },
    ))
}

/// Follows the orbits born at the Hopf point `hopf` of a resting branch of `model` (in the
/// same parameter), away from it.
///
/// # Errors
/// [`BranchError::WrongSpecial`] for a special point that is not a Hopf point; the map
/// errors as [`follow_orbit_branch`].
#[allow(clippy::too_many_arguments)]
pub fn orbits_from_hopf(
    model: &Model,
    map: &OrbitMap,
    integration: &RunSpec,
    range: &BranchRange,
    hopf: &SpecialPoint,
    settings: &BranchSettings,
    sink: &mut dyn BranchSink,
    interrupt: &Interrupt,
) -> Result<Branch, BranchError> {
    if hopf.kind != SpecialKind::Hopf {
        return Err(BranchError::WrongSpecial {
            given: hopf.kind.words(),
            needed: SpecialKind::Hopf.words(),
        });
    }
    check_map(model, map)?;
    let (Some(omega), Some(period)) = (hopf.frequency, hopf.period) else {
        return Err(BranchError::BadOrbit {
            detail: "at the Hopf point has no frequency".to_string(),
        });
    };
    let mut problem = orbit_problem(model, map, integration, range, settings, 1, 1, period)?;
    let born = problem
        .hopf_start(&hopf.state, hopf.value, omega)
        .map_err(|failure| not_near("Hopf point", failure))?;
    let scale = hopf.state.iter().fold(1.0f64, |m, v| m.max(v.abs()));
    let first_step = (BORN_STEP * scale).min(settings.initial_step * range.width());
    Ok(one_way(
        born,
        hopf.clone(),
        first_step,
        range,
        settings,
        sink,
        interrupt,
        BranchStart::Hopf {
            value: hopf.value,
            period,
        },
    ))
}

/// Follows the orbits of twice the period born at the period doubling `doubling` of an orbit
/// branch of `model` on `map` (the same map and integration that branch was followed with).
///
/// # Errors
/// [`BranchError::WrongSpecial`] for a special point that is not a period doubling; the map
/// errors as [`follow_orbit_branch`]; [`BranchError::BadOrbit`] when the point does not fit.
#[allow(clippy::too_many_arguments)]
pub fn doubled_orbits(
    model: &Model,
    map: &OrbitMap,
    integration: &RunSpec,
    range: &BranchRange,
    doubling: &SpecialPoint,
    settings: &BranchSettings,
    sink: &mut dyn BranchSink,
    interrupt: &Interrupt,
) -> Result<Branch, BranchError> {
    if doubling.kind != SpecialKind::PeriodDoubling {
        return Err(BranchError::WrongSpecial {
            given: doubling.kind.words(),
            needed: SpecialKind::PeriodDoubling.words(),
        });
    }
    check_map(model, map)?;
    let period = doubling.period.unwrap_or(f64::NAN);
    let base = orbit_problem(
        model,
        map,
        integration,
        range,
        settings,
        doubling.anchor.segments,
        doubling.anchor.returns,
        period,
    )?;
    let born = base
        .doubled_start(&doubling.anchor)
        .map_err(|failure| BranchError::BadOrbit {
            detail: format!("at the period doubling cannot be doubled: {failure}"),
        })?;
    let scale = doubling.state.iter().fold(1.0f64, |m, v| m.max(v.abs()));
    let first_step = (BORN_STEP * scale).min(settings.initial_step * range.width());
    Ok(one_way(
        born,
        doubling.clone(),
        first_step,
        range,
        settings,
        sink,
        interrupt,
        BranchStart::PeriodDoubling {
            value: doubling.value,
            period,
        },
    ))
}

/// Refuses a map that does not fit the model.
fn check_map(model: &Model, map: &OrbitMap) -> Result<(), BranchError> {
    let forced = model.uses_time();
    match map {
        OrbitMap::Cut(cut) if forced || cut.uses_time() => Err(BranchError::ForcedCut),
        OrbitMap::Flow if forced => Err(BranchError::ForcedCut),
        OrbitMap::Strobe(_) if !forced => Err(BranchError::AutonomousStrobe),
        _ if model.start().len() < 2 && !forced => Err(BranchError::BadOrbit {
            detail: "needs a model of at least two states (one state has no periodic orbits)"
                .to_string(),
        }),
        _ => Ok(()),
    }
}

/// The orbit problem with the branch settings' limits.
#[allow(clippy::too_many_arguments)]
fn orbit_problem(
    model: &Model,
    map: &OrbitMap,
    integration: &RunSpec,
    range: &BranchRange,
    settings: &BranchSettings,
    segments: usize,
    returns: usize,
    period: f64,
) -> Result<OrbitProblem, BranchError> {
    let limits = OrbitLimits {
        tolerance_in_rtol: settings.orbit_tolerance_in_rtol,
        max_segments: settings.max_segments,
        growth_limit: settings.growth_per_segment,
        period_limit: settings.period_limit,
    };
    OrbitProblem::new(
        model.clone(),
        range.parameter,
        map,
        integration,
        &limits,
        segments,
        returns,
        period,
    )
    .map_err(|err| BranchError::BadOrbit {
        detail: format!("cannot be sampled: {err}"),
    })
}

/// A failed start as the error that says so.
fn not_near(what: &'static str, failure: StepFailure) -> BranchError {
    match failure {
        StepFailure::Cancelled => BranchError::Cancelled,
        other => BranchError::NotNear {
            what,
            detail: other.to_string(),
        },
    }
}

/// Walks from `start` toward `to` and toward `from` (each unless the start is on that end)
/// and joins the halves in branch order.
#[allow(clippy::too_many_arguments)]
fn both_ways<P: Problem>(
    problem: P,
    start: Station,
    range: &BranchRange,
    settings: &BranchSettings,
    sink: &mut dyn BranchSink,
    interrupt: &Interrupt,
    of: BranchOf,
    how: BranchStart,
) -> Branch {
    let value = start.value();
    let targets: Vec<f64> = [range.to, range.from]
        .into_iter()
        .filter(|&end| end != value)
        .collect();
    let n_walks = targets.len() as f64;
    let first_step = settings.initial_step * range.width();
    let mut halves: Vec<(f64, Half)> = Vec::new();
    let mut most_segments = problem.most_segments();
    let from_differences = problem.uses_differences();
    for (idx, &toward) in targets.iter().enumerate() {
        let mut station = start.clone();
        let wanted = (toward - value).signum();
        let slope = station.slope();
        let flip = if slope == 0.0 {
            idx == 1
        } else {
            slope * wanted < 0.0
        };
        if flip {
            for t in &mut station.tangent {
                *t = -*t;
            }
            station.bordered = station.bordered.map(|b| -b);
        }
        let mut walk = walker(problem.clone(), range, settings, interrupt);
        let done = idx as f64;
        let half = walk.walk(station, first_step, toward, sink, &|f| (done + f) / n_walks);
        most_segments = most_segments.max(walk.problem.most_segments());
        halves.push((toward, half));
    }
    let mut start_point: BranchPoint = match start.measured {
        Some(measured) => measured.point,
        None => unreachable_start(),
    };
    start_point.arclength = 0.0;
    let mut points = Vec::new();
    let mut special = Vec::new();
    let mut ends = Vec::new();
    // toward `from`, reversed, comes first
    let from_half = halves.iter().find(|(toward, _)| *toward == range.from);
    let to_half = halves.iter().find(|(toward, _)| *toward == range.to);
    if let Some((toward, half)) = from_half {
        let count = half.points.len();
        for point in half.points.iter().rev() {
            let mut point = point.clone();
            point.arclength = -point.arclength;
            points.push(point);
        }
        for (located, before) in &half.special {
            let mut located = located.clone();
            located.arclength = -located.arclength;
            located.after = count - before - 1;
            special.push(located);
        }
        ends.push(BranchEnd {
            toward: *toward,
            reason: half.end.clone(),
            n_points: count,
        });
    }
    let start_index = points.len();
    points.push(start_point);
    if let Some((toward, half)) = to_half {
        points.extend(half.points.iter().cloned());
        for (located, before) in &half.special {
            let mut located = located.clone();
            located.after = start_index + before;
            special.push(located);
        }
        ends.push(BranchEnd {
            toward: *toward,
            reason: half.end.clone(),
            n_points: half.points.len(),
        });
    }
    special.sort_by(|p, q| p.arclength.total_cmp(&q.arclength));
    sink.progress(1.0);
    Branch {
        of,
        parameter: range.parameter,
        points,
        start_index: Some(start_index),
        special,
        start: how,
        born_at: None,
        ends,
        from_differences,
        most_segments,
    }
}

/// A start that was not measured cannot be one of `both_ways`'s (those come from
/// `settle_start`, which measures); an empty point keeps the function total.
fn unreachable_start() -> BranchPoint {
    BranchPoint {
        value: f64::NAN,
        state: Vec::new(),
        period: None,
        points: Vec::new(),
        stable: false,
        n_unstable: 0,
        kind: None,
        spectrum: super::types::Spectrum::Eigenvalues(Vec::new()),
        iterations: 0,
        arclength: 0.0,
    }
}

/// Walks from the special point `born_at` along the born branch's tangent until an end.
#[allow(clippy::too_many_arguments)]
fn one_way(
    born: Born,
    born_at: SpecialPoint,
    first_step: f64,
    range: &BranchRange,
    settings: &BranchSettings,
    sink: &mut dyn BranchSink,
    interrupt: &Interrupt,
    how: BranchStart,
) -> Branch {
    let Born {
        problem,
        start,
        tangent,
        normal,
    } = born;
    let start = Station {
        u: start,
        tangent,
        measured: None,
        bordered: None,
        arclength: 0.0,
        normal: Some(normal),
    };
    let from_differences = problem.uses_differences();
    let mut walk = walker(problem, range, settings, interrupt);
    // heading for the end the branch's parameter moves toward at first (decided on the way)
    let toward = if start.value() - range.low() < range.high() - start.value() {
        range.high()
    } else {
        range.low()
    };
    let half = walk.walk(start, first_step, toward, sink, &|f| f);
    let special = half
        .special
        .iter()
        .map(|(located, before)| {
            let mut located = located.clone();
            located.after = before.saturating_sub(1);
            located
        })
        .collect();
    sink.progress(1.0);
    let toward = match half.points.last() {
        Some(last) if last.value >= half.points[0].value => range.high(),
        Some(_) => range.low(),
        None => toward,
    };
    Branch {
        of: BranchOf::Orbit,
        parameter: range.parameter,
        start_index: None,
        special,
        start: how,
        born_at: Some(born_at),
        ends: vec![BranchEnd {
            toward,
            reason: half.end,
            n_points: half.points.len(),
        }],
        from_differences,
        most_segments: walk.problem.most_segments(),
        points: half.points,
    }
}
