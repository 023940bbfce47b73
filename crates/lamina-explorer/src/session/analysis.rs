//! The analysis jobs: the periodic orbit of the current run (Newton refinement from the run's
//! closest return, multipliers, verdict) and the Lyapunov exponents. Both run as background
//! jobs that can be stopped; a result that arrives for an earlier revision of the scenario
//! is dropped, and a job that ends without a result is reported as an error.

use lamina_core::cycle::{
    CycleReport, FlowMap, MapKind, MapPoint, MapSettings, NewtonSettings, find_cycle,
};
use lamina_core::lyapunov::{ExponentSettings, Spectrum, spectrum};
use lamina_core::recurrence::{RecurrenceSettings, close_returns, find_recurrence};

use super::Session;
use super::branch::BranchState;
use super::recheck::RecheckState;
use super::rest::RestState;
use crate::jobs::{Job, Poll};
use crate::results::PointCloud;
use crate::vocabulary::{AnalysisError, JobKind, OrbitMap, RecheckTarget, unit_suffix};

/// A periodic orbit and its path over one period.
pub type FoundOrbit = (CycleReport, Vec<MapPoint>);

/// A running analysis job.
type AnalysisJob<T> = Job<(), Result<T, AnalysisError>>;

/// The analysis jobs and their results.
pub struct AnalysisState {
    /// Map for the orbit search.
    pub map: OrbitMap,
    orbit_job: Option<AnalysisJob<FoundOrbit>>,
    /// The found orbit over one period, for the 3D view.
    pub orbit_path: Vec<MapPoint>,
    /// The last orbit found (or why not).
    pub cycle: Option<Result<CycleReport, AnalysisError>>,
    exponents_job: Option<AnalysisJob<Spectrum>>,
    /// The last spectrum (or why not).
    pub spectrum: Option<Result<Spectrum, AnalysisError>>,
    /// The map and its settings the shown orbit was found with (for its recheck).
    pub(crate) orbit_map_used: Option<(MapKind, MapSettings)>,
    /// The resting-point search and its result.
    pub rest: RestState,
    /// The rechecks and their results.
    pub recheck: RecheckState,
    /// The branch being followed or followed last.
    pub branch: BranchState,
}

impl AnalysisState {
    /// No jobs and no results; the orbit search on `map`.
    pub fn new(map: OrbitMap) -> Self {
        Self {
            map,
            orbit_job: None,
            orbit_path: Vec::new(),
            cycle: None,
            exponents_job: None,
            spectrum: None,
            orbit_map_used: None,
            rest: RestState::default(),
            recheck: RecheckState::default(),
            branch: BranchState::default(),
        }
    }

    /// Whether the orbit search is going.
    pub fn cycle_running(&self) -> bool {
        self.orbit_job.is_some()
    }

    /// Whether the exponents are being computed.
    pub fn exponents_running(&self) -> bool {
        self.exponents_job.is_some()
    }

    /// Switches the orbit search to `map`; a result or error of the other map goes.
    pub fn choose_map(&mut self, map: OrbitMap) {
        if map != self.map {
            self.map = map;
            self.cycle = None;
            self.orbit_path.clear();
            self.recheck.forget(RecheckTarget::Orbit);
        }
    }

    /// Clears the shown orbit, spectrum and rechecks and marks the resting points stale (the
    /// scenario changed under them).
    pub fn clear_results(&mut self) {
        self.cycle = None;
        self.orbit_path.clear();
        self.spectrum = None;
        self.rest.outdate();
        self.recheck.clear();
    }

    /// Asks the job of `kind` to stop; whether one was going.
    pub fn cancel(&mut self, kind: JobKind) -> bool {
        match kind {
            JobKind::OrbitSearch => self.orbit_job.as_ref().inspect(|j| j.cancel()).is_some(),
            JobKind::Exponents => self
                .exponents_job
                .as_ref()
                .inspect(|j| j.cancel())
                .is_some(),
            JobKind::RestSearch => self.rest.cancel(),
            JobKind::Recheck => self.recheck.cancel(),
            JobKind::Branch => self.branch.cancel(),
            _ => false,
        }
    }
}

/// The cloud's points as the core's map points.
pub fn map_points(cloud: &PointCloud) -> Vec<MapPoint> {
    (0..cloud.len())
        .map(|i| MapPoint {
            t: cloud.t[i],
            state: cloud.state(i).to_vec(),
        })
        .collect()
}

/// What a finished analysis job hands over, once checked against the session.
pub(super) enum Arrival<T> {
    Nothing,
    Result(Result<T, AnalysisError>),
    Stale,
}

/// Polls `job`: nothing yet, its result, or a result for another revision than `revision`.
pub(super) fn arrival<P, T>(
    job: Option<&Job<P, Result<T, AnalysisError>>>,
    revision: u64,
) -> Arrival<T> {
    let Some(job) = job else {
        return Arrival::Nothing;
    };
    match job.poll() {
        Poll::Running => Arrival::Nothing,
        Poll::Done(_) if job.revision != revision => Arrival::Stale,
        Poll::Done(result) => Arrival::Result(result),
        Poll::Lost => Arrival::Result(Err(AnalysisError::Lost(job.kind))),
    }
}

impl Session {
    /// The point cloud of the chosen orbit map.
    pub fn orbit_cloud(&self) -> &PointCloud {
        match self.analysis.map {
            OrbitMap::Cut => &self.results.cut,
            OrbitMap::Strobe => &self.results.strobe,
        }
    }

    /// Collects finished analysis jobs.
    pub(crate) fn drain_analysis(&mut self) {
        self.drain_rest();
        self.drain_recheck();
        self.drain_branch();
        match arrival(self.analysis.orbit_job.as_ref(), self.revision) {
            Arrival::Nothing => {}
            Arrival::Stale => {
                self.analysis.orbit_job = None;
                self.note("an orbit found for an earlier version of the scenario was dropped");
            }
            Arrival::Result(result) => {
                self.analysis.orbit_job = None;
                match &result {
                    Ok((r, _)) => {
                        let time_unit = unit_suffix(self.doc.scenario.time.unit.as_deref());
                        self.note(format!(
                            "{}-return orbit, period {}{time_unit}, {}",
                            r.k, r.period, r.verdict
                        ));
                    }
                    Err(e) => self.note(format!("no periodic orbit: {e}")),
                }
                self.analysis.orbit_path = result
                    .as_ref()
                    .map(|(_, path)| path.clone())
                    .unwrap_or_default();
                self.analysis.cycle = Some(result.map(|(r, _)| r));
                self.analysis.recheck.forget(RecheckTarget::Orbit);
            }
        }
        match arrival(self.analysis.exponents_job.as_ref(), self.revision) {
            Arrival::Nothing => {}
            Arrival::Stale => {
                self.analysis.exponents_job = None;
                self.note("exponents computed for an earlier version of the scenario were dropped");
            }
            Arrival::Result(result) => {
                self.analysis.exponents_job = None;
                match &result {
                    Ok(s) => self.note(format!(
                        "Lyapunov exponents: {:?} ({})",
                        s.exponents, s.verdict
                    )),
                    Err(e) => self.note(format!("exponents: {e}")),
                }
                self.analysis.spectrum = Some(result);
                self.analysis.recheck.forget(RecheckTarget::Exponents);
            }
        }
    }

    /// Starts the orbit search on the chosen map, from the closest returns of the run.
    pub(crate) fn start_orbit_search(&mut self) {
        if self.analysis.cycle_running() {
            return;
        }
        let compiled = match self.doc.compiled() {
            Ok(c) => c,
            Err(e) => {
                self.analysis.cycle = Some(Err(AnalysisError::Compile(e.to_string())));
                return;
            }
        };
        let map = self.analysis.map;
        let kind = match map {
            OrbitMap::Cut => compiled.cut.clone().map(MapKind::Cut),
            OrbitMap::Strobe => compiled.strobe.map(MapKind::Strobe),
        };
        let Some(kind) = kind else {
            self.analysis.cycle = Some(Err(AnalysisError::NoMap(map)));
            return;
        };
        let model = compiled.model.clone();
        let run = compiled.run.clone();
        let cloud = self.orbit_cloud();
        let points = map_points(cloud);
        let recurrence = find_recurrence(&points, &RecurrenceSettings::for_control(&run.control));
        let k = recurrence.search_k().unwrap_or(1);
        let seeds: Vec<MapPoint> = close_returns(&points, k, 4)
            .iter()
            .map(|r| points[r.index].clone())
            .collect();
        let longest = cloud
            .return_time
            .iter()
            .copied()
            .filter(|r| r.is_finite())
            .fold(0.0, f64::max);
        let max_return = if longest > 0.0 {
            4.0 * longest * k as f64
        } else {
            run.span
        };
        let settings = MapSettings::from_run(&run, max_return);
        let used = (kind.clone(), settings);
        let spawned = Job::spawn(
            JobKind::OrbitSearch,
            self.revision,
            self.waker.clone(),
            move |_, interrupt| {
                let mut map = FlowMap::new(model, kind, settings)?;
                map.set_interrupt(interrupt);
                let report = find_cycle(
                    &mut map,
                    &seeds,
                    k,
                    &NewtonSettings::for_rtol(run.control.rtol),
                )?;
                // the orbit over one period for the 3D view (drawn without it if that fails)
                let path = map
                    .trace(&report.point, report.period, 4)
                    .unwrap_or_default();
                Ok((report, path))
            },
        );
        match spawned {
            Ok(job) => {
                self.analysis.orbit_job = Some(job);
                self.analysis.orbit_map_used = Some(used);
                self.analysis.cycle = None;
                self.analysis.orbit_path.clear();
                self.note(format!(
                    "looking for a {k}-return orbit on the {} ({recurrence})",
                    map.name()
                ));
            }
            Err(e) => {
                self.note(e.to_string());
                self.analysis.cycle = Some(Err(AnalysisError::NotStarted(JobKind::OrbitSearch)));
            }
        }
    }

    /// Starts the Lyapunov exponents over the scenario's window.
    pub(crate) fn start_exponents(&mut self) {
        if self.analysis.exponents_running() {
            return;
        }
        let compiled = match self.doc.compiled() {
            Ok(c) => c,
            Err(e) => {
                self.analysis.spectrum = Some(Err(AnalysisError::Compile(e.to_string())));
                return;
            }
        };
        let model = compiled.model.clone();
        let run = compiled.run.clone();
        let spawned = Job::spawn(
            JobKind::Exponents,
            self.revision,
            self.waker.clone(),
            move |_, interrupt| {
                Ok(spectrum(
                    model,
                    &run,
                    &ExponentSettings::all(),
                    &mut (),
                    &interrupt,
                )?)
            },
        );
        match spawned {
            Ok(job) => {
                self.analysis.exponents_job = Some(job);
                self.analysis.spectrum = None;
                self.note("computing Lyapunov exponents over the scenario's window");
            }
            Err(e) => {
                self.note(e.to_string());
                self.analysis.spectrum = Some(Err(AnalysisError::NotStarted(JobKind::Exponents)));
            }
        }
    }
}
