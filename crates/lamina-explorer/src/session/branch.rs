//! Following a branch as a background job: the current resting point or the periodic orbit
//! found last, continued in the sweep block's parameter over [from, to] (the core's
//! pseudo-arclength continuation). Points and special points arrive while it grows, for the
//! orbit-diagram tile; the branch is cleared when the document is replaced, and one
//! computed for an earlier revision of the scenario is dropped.

use std::ops::ControlFlow;

use lamina_core::branch::{
    Branch, BranchOf, BranchPoint, BranchRange, BranchSettings, BranchSink, OrbitMap, OrbitStart,
    SpecialPoint, follow_orbit_branch, follow_rest_branch,
};
use lamina_core::cycle::MapKind;

use super::Session;
use super::analysis::{Arrival, arrival};
use crate::jobs::{Job, Reporter};
use crate::vocabulary::{AnalysisError, JobKind};

/// What a growing branch sends.
pub enum Growth {
    /// A new point.
    Point(BranchPoint),
    /// A special point, located.
    Special(SpecialPoint),
    /// The fraction done.
    Fraction(f64),
}

/// A running branch job.
type BranchJob = Job<Growth, Result<Branch, AnalysisError>>;

/// The branch job and the branch as far as it has grown.
#[derive(Default)]
pub struct BranchState {
    job: Option<BranchJob>,
    /// What is followed and the parameter moved.
    pub following: Option<(BranchOf, usize)>,
    /// The points as they arrived (while growing) or in branch order (when done).
    pub points: Vec<BranchPoint>,
    /// The special points located so far.
    pub special: Vec<SpecialPoint>,
    /// Fraction done while growing.
    pub progress: f64,
    /// The finished branch, or why there is none.
    pub done: Option<Result<Branch, AnalysisError>>,
    /// What the branch was computed from, to tell when the scenario has moved away from it.
    basis: Option<BranchBasis>,
}

/// The parts of a scenario a branch depends on: the model with every parameter but the one
/// the branch moves, the integrator, and the cut and strobe an orbit's branch is taken on.
/// Moving the branch's own parameter (a click on a special point does) leaves it valid.
#[derive(Clone, Debug, PartialEq)]
struct BranchBasis {
    states: Vec<(String, String)>,
    parameters: Vec<(String, Option<f64>)>,
    integrator: lamina_scenario::Integrator,
    cut: Option<(lamina_scenario::Surface, lamina_scenario::Direction)>,
    strobe: Option<(String, f64)>,
}

impl BranchBasis {
    /// The basis of `scenario` for a branch in parameter `moved`.
    fn of(scenario: &lamina_scenario::Scenario, moved: usize) -> Self {
        Self {
            states: (scenario.states.iter())
                .map(|s| (s.name.clone(), s.rate.clone()))
                .collect(),
            parameters: (scenario.parameters.iter().enumerate())
                .map(|(i, p)| (p.name.clone(), (i != moved).then_some(p.value)))
                .collect(),
            integrator: scenario.integrator.clone(),
            cut: (scenario.cut.as_ref()).map(|c| (c.surface.clone(), c.direction)),
            strobe: (scenario.strobe.as_ref()).map(|s| (s.period.clone(), s.first_at)),
        }
    }
}

impl BranchState {
    /// Whether a branch is being followed.
    pub fn running(&self) -> bool {
        self.job.is_some()
    }

    /// Asks the job to stop; whether one was going.
    pub fn cancel(&self) -> bool {
        self.job.as_ref().inspect(|j| j.cancel()).is_some()
    }

    /// Whether `scenario` has moved away from the one the branch was followed in (another
    /// equation, another value of a parameter the branch does not move, another integrator,
    /// cut or strobe): the branch no longer describes it.
    pub fn is_outdated(&self, scenario: &lamina_scenario::Scenario) -> bool {
        match (&self.basis, self.following) {
            (Some(basis), Some((_, moved))) => *basis != BranchBasis::of(scenario, moved),
            _ => false,
        }
    }
}

/// Sends the branch's growth to the window.
struct Grow<'a>(&'a Reporter<Growth>);

impl BranchSink for Grow<'_> {
    fn point(&mut self, point: &BranchPoint) -> ControlFlow<()> {
        self.0.send(Growth::Point(point.clone()));
        ControlFlow::Continue(())
    }
    fn special(&mut self, special: &SpecialPoint) {
        self.0.send(Growth::Special(special.clone()));
    }
    fn progress(&mut self, fraction: f64) {
        self.0.send(Growth::Fraction(fraction));
    }
}

impl Session {
    /// The sweep block's parameter and range, or why there is none.
    pub fn branch_range(&self) -> Result<BranchRange, &'static str> {
        let scenario = &self.doc.scenario;
        let sweep = scenario
            .sweep
            .as_ref()
            .ok_or("a branch moves the sweep's parameter: switch the sweep on")?;
        let parameter = scenario
            .parameter_index(&sweep.parameter)
            .ok_or("the sweep's parameter is not a parameter of the model")?;
        Ok(BranchRange {
            parameter,
            from: sweep.from,
            to: sweep.to,
        })
    }

    /// The resting point a rest branch starts from: the one the run settles at, else the
    /// first stable one, else the first.
    pub fn current_resting_point(&self) -> Option<Vec<f64>> {
        let rest = &self.analysis.rest;
        if rest.stale {
            return None;
        }
        let Some(Ok(report)) = &rest.found else {
            return None;
        };
        report
            .points
            .iter()
            .find(|p| p.reached_by_run)
            .or_else(|| report.points.iter().find(|p| p.stable))
            .or_else(|| report.points.first())
            .map(|p| p.state.clone())
    }

    /// Starts following the branch of the current resting point or of the orbit found last.
    pub(crate) fn start_branch(&mut self, of: BranchOf) {
        if self.analysis.branch.running() {
            return;
        }
        let fail = |s: &mut Self, e: AnalysisError| {
            s.analysis.branch.done = Some(Err(e));
            s.analysis.branch.points.clear();
            s.analysis.branch.special.clear();
        };
        let range = match self.branch_range() {
            Ok(r) => r,
            Err(why) => return fail(self, AnalysisError::NoBranch(why)),
        };
        let compiled = match self.doc.compiled() {
            Ok(c) => c,
            Err(e) => return fail(self, AnalysisError::Compile(e.to_string())),
        };
        let model = compiled.model.clone();
        let run = compiled.run.clone();
        let settings = BranchSettings::default();
        let spawned = match of {
            BranchOf::Rest => {
                let Some(state) = self.current_resting_point() else {
                    return fail(
                        self,
                        AnalysisError::NoBranch("find the resting points first"),
                    );
                };
                Job::spawn(
                    JobKind::Branch,
                    self.revision,
                    self.waker.clone(),
                    move |reporter, interrupt| {
                        Ok(follow_rest_branch(
                            &model,
                            &range,
                            &state,
                            &settings,
                            &mut Grow(reporter),
                            &interrupt,
                        )?)
                    },
                )
            }
            BranchOf::Orbit => {
                let (Some(Ok(report)), Some((kind, _))) =
                    (&self.analysis.cycle, &self.analysis.orbit_map_used)
                else {
                    return fail(self, AnalysisError::NoBranch("find a periodic orbit first"));
                };
                let map = match kind {
                    MapKind::Cut(cut) => OrbitMap::Cut(cut.clone()),
                    MapKind::Strobe(_) => match self.doc.scenario.strobe_spec() {
                        Some(spec) => OrbitMap::Strobe(spec),
                        None => return fail(self, AnalysisError::NoBranch("the strobe is off")),
                    },
                };
                let start = OrbitStart::from_report(report);
                Job::spawn(
                    JobKind::Branch,
                    self.revision,
                    self.waker.clone(),
                    move |reporter, interrupt| {
                        Ok(follow_orbit_branch(
                            &model,
                            &map,
                            &run,
                            &range,
                            &start,
                            &settings,
                            &mut Grow(reporter),
                            &interrupt,
                        )?)
                    },
                )
            }
        };
        match spawned {
            Ok(job) => {
                let branch = &mut self.analysis.branch;
                branch.job = Some(job);
                branch.following = Some((of, range.parameter));
                branch.basis = Some(BranchBasis::of(&self.doc.scenario, range.parameter));
                branch.points.clear();
                branch.special.clear();
                branch.progress = 0.0;
                branch.done = None;
                let what = match of {
                    BranchOf::Rest => "resting point",
                    BranchOf::Orbit => "periodic orbit",
                };
                self.note(format!(
                    "following the {what}'s branch over [{}, {}]",
                    range.from, range.to
                ));
            }
            Err(e) => {
                self.note(e.to_string());
                fail(self, AnalysisError::NotStarted(JobKind::Branch));
            }
        }
    }

    /// Collects the branch's growth and its end.
    pub(crate) fn drain_branch(&mut self) {
        if let Some(job) = &self.analysis.branch.job {
            for growth in job.progress() {
                let branch = &mut self.analysis.branch;
                match growth {
                    Growth::Point(p) => branch.points.push(p),
                    Growth::Special(s) => branch.special.push(s),
                    Growth::Fraction(f) => branch.progress = f,
                }
            }
        }
        match arrival(self.analysis.branch.job.as_ref(), self.revision) {
            Arrival::Nothing => {}
            Arrival::Stale => {
                self.analysis.branch = Default::default();
                self.note("a branch followed for an earlier version of the scenario was dropped");
            }
            Arrival::Result(result) => {
                let branch = &mut self.analysis.branch;
                branch.job = None;
                if let Ok(b) = &result {
                    branch.points = b.points.clone();
                    branch.special = b.special.clone();
                }
                match &result {
                    Ok(b) => {
                        let specials: Vec<String> = b
                            .special
                            .iter()
                            .map(|s| format!("{} at {}", s.kind.words(), s.value))
                            .collect();
                        self.note(format!(
                            "branch of {} points; special points: {}",
                            b.points.len(),
                            if specials.is_empty() {
                                "none".to_string()
                            } else {
                                specials.join(", ")
                            }
                        ));
                    }
                    Err(e) => self.note(format!("branch: {e}")),
                }
                self.analysis.branch.done = Some(result);
            }
        }
    }
}
