//! The entry points: follow a resting point's branch, a periodic orbit's branch, the orbits
//! born at a Hopf point, or the doubled orbits born at a period doubling; each walks from its
//! start toward both ends of the range (one end when the start is on the other, one way from
//! a special point) and puts the halves together in branch order.

use super::assemble::{both_ways, one_way};
use super::error::{BranchError, StepFailure};
use super::orbit::{OrbitLimits, OrbitMap, OrbitProblem, OrbitStart};
use super::problem::Problem;
use super::rest_problem::RestProblem;
use super::settings::BranchSettings;
use super::types::{
    Branch, BranchOf, BranchRange, BranchSink, BranchStart, SpecialKind, SpecialPoint,
};
use super::walk::Walker;
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
pub(super) fn walker<'a, P: Problem>(
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
    let (station, point) = start_walker
        .settle_start(&u0)
        .map_err(|failure| not_near("resting point", failure))?;
    Ok(both_ways(
        problem,
        station,
        point,
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
/// escape size.
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
    let (station, point) = start_walker
        .settle_start(&u0)
        .map_err(|failure| not_near("periodic orbit", failure))?;
    // the layout the start was settled in
    let problem = start_walker.problem;
    Ok(both_ways(
        problem,
        station,
        point,
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
