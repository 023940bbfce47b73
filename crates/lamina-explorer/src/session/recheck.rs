//! Rechecks as background jobs: the periodic orbit, the Lyapunov exponents or the run's points
//! computed a second time with both tolerances divided by 100 (as `lamina ... --recheck`
//! does, through `lamina_core::recheck`), and the significant digits on which the two agree.
//! One recheck runs at a time; its result is kept per target until the result it checks is
//! replaced or the scenario changes.

use std::collections::HashMap;

use lamina_core::cycle::MapKind;
use lamina_core::lyapunov::ExponentSettings;
use lamina_core::recheck::{self, Recheck};

use super::Session;
use super::analysis::{Arrival, arrival, map_points};
use crate::jobs::Job;
use crate::vocabulary::{AnalysisError, JobKind, OrbitMap, RecheckTarget};

/// A running recheck.
type RecheckJob = Job<(), Result<Recheck, AnalysisError>>;

/// The recheck job and the rechecks made.
#[derive(Default)]
pub struct RecheckState {
    job: Option<(RecheckTarget, RecheckJob)>,
    /// The last recheck of each target (or why it could not be made).
    pub results: HashMap<RecheckTarget, Result<Recheck, AnalysisError>>,
}

impl RecheckState {
    /// The target being rechecked, if any.
    pub fn running(&self) -> Option<RecheckTarget> {
        self.job.as_ref().map(|(target, _)| *target)
    }

    /// Asks the recheck to stop; whether one was going.
    pub fn cancel(&self) -> bool {
        self.job.as_ref().inspect(|(_, j)| j.cancel()).is_some()
    }

    /// Drops the recheck of `target` (the result it checked was replaced).
    pub fn forget(&mut self, target: RecheckTarget) {
        self.results.remove(&target);
        if self.running() == Some(target) {
            self.job = None;
        }
    }

    /// Drops every recheck (the scenario changed).
    pub fn clear(&mut self) {
        self.results.clear();
    }

    /// The recheck of `target`, if made.
    pub fn of(&self, target: RecheckTarget) -> Option<&Result<Recheck, AnalysisError>> {
        self.results.get(&target)
    }
}

/// The recheck in one line for the panel: `N significant digits agree (worst: ...)`.
pub fn recheck_words(recheck: &Recheck) -> String {
    let (s, verb) = if recheck.digits == 1 {
        ("", "agrees")
    } else {
        ("s", "agree")
    };
    format!(
        "{} significant digit{s} {verb} (worst: {}, {} against {}; second computation at rtol \
         {:.0e}, atol {:.0e})",
        recheck.digits,
        recheck.worst.name,
        recheck.worst.first,
        recheck.worst.second,
        recheck.rtol,
        recheck.atol
    )
}

impl Session {
    /// Starts the recheck of `target`.
    pub(crate) fn start_recheck(&mut self, target: RecheckTarget) {
        if self.analysis.recheck.running().is_some() {
            return;
        }
        let compiled = match self.doc.compiled() {
            Ok(c) => c,
            Err(e) => {
                self.analysis
                    .recheck
                    .results
                    .insert(target, Err(AnalysisError::Compile(e.to_string())));
                return;
            }
        };
        let model = compiled.model.clone();
        let run = compiled.run.clone();
        let names = self.results.names.clone();
        let spawned = match target {
            RecheckTarget::Orbit => {
                let (Some(Ok(first)), Some((kind, settings))) =
                    (&self.analysis.cycle, &self.analysis.orbit_map_used)
                else {
                    self.refuse(target, "find a periodic orbit first");
                    return;
                };
                let (first, kind, settings) = (first.clone(), kind.clone(), *settings);
                Job::spawn(
                    JobKind::Recheck,
                    self.revision,
                    self.waker.clone(),
                    move |_, _| Ok(recheck::cycle(model, kind, &settings, &first, &names)?),
                )
            }
            RecheckTarget::Exponents => {
                let Some(Ok(first)) = &self.analysis.spectrum else {
                    self.refuse(target, "compute the exponents first");
                    return;
                };
                let first = first.clone();
                Job::spawn(
                    JobKind::Recheck,
                    self.revision,
                    self.waker.clone(),
                    move |_, interrupt| {
                        Ok(recheck::exponents(
                            model,
                            &run,
                            &ExponentSettings::all(),
                            &first,
                            &mut (),
                            &interrupt,
                        )?)
                    },
                )
            }
            RecheckTarget::Points => {
                let kind = match self.analysis.map {
                    OrbitMap::Cut => compiled.cut.clone().map(MapKind::Cut),
                    OrbitMap::Strobe => compiled.strobe.map(MapKind::Strobe),
                };
                let first = map_points(self.orbit_cloud());
                let (Some(kind), true) = (kind, first.len() >= 2) else {
                    self.refuse(target, "run first: the recheck repeats the run's points");
                    return;
                };
                Job::spawn(
                    JobKind::Recheck,
                    self.revision,
                    self.waker.clone(),
                    move |_, interrupt| {
                        Ok(recheck::points(
                            &model, &run, &kind, &first, &names, &interrupt,
                        )?)
                    },
                )
            }
        };
        match spawned {
            Ok(job) => {
                self.analysis.recheck.results.remove(&target);
                self.analysis.recheck.job = Some((target, job));
                self.note(format!(
                    "rechecking the {} with tolerances divided by 100",
                    target.name()
                ));
            }
            Err(e) => {
                self.note(e.to_string());
                self.analysis
                    .recheck
                    .results
                    .insert(target, Err(AnalysisError::NotStarted(JobKind::Recheck)));
            }
        }
    }

    fn refuse(&mut self, target: RecheckTarget, why: &'static str) {
        self.analysis
            .recheck
            .results
            .insert(target, Err(AnalysisError::NothingToRecheck(why)));
    }

    /// Collects a finished recheck.
    pub(crate) fn drain_recheck(&mut self) {
        let Some((target, job)) = &self.analysis.recheck.job else {
            return;
        };
        let target = *target;
        match arrival(Some(job), self.revision) {
            Arrival::Nothing => {}
            Arrival::Stale => {
                self.analysis.recheck.job = None;
                self.note("a recheck made for an earlier version of the scenario was dropped");
            }
            Arrival::Result(result) => {
                self.analysis.recheck.job = None;
                match &result {
                    Ok(r) => self.note(format!("recheck of the {}: {r}", target.name())),
                    Err(e) => self.note(format!("recheck of the {}: {e}", target.name())),
                }
                self.analysis.recheck.results.insert(target, result);
            }
        }
    }
}
