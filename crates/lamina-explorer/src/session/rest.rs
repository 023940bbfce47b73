//! The resting-point search as a background job: every resting point Newton's method reaches
//! from the run of the current scenario, with eigenvalues and stability. A forced model has
//! none (the core says so). A result for an earlier revision is dropped; a shown result is
//! marked stale when the scenario changes under it and cleared when the document is replaced.

use lamina_core::rest::{RestReport, RestSettings, RestSink, RestingPoint, find_resting_points};

use super::Session;
use super::analysis::{Arrival, arrival};
use crate::jobs::{Job, Reporter};
use crate::vocabulary::{AnalysisError, JobKind};

/// A running resting-point search: progress as a fraction done.
type RestJob = Job<f64, Result<RestReport, AnalysisError>>;

/// The resting-point search and its result.
#[derive(Default)]
pub struct RestState {
    job: Option<RestJob>,
    /// The last search's points (or why there are none).
    pub found: Option<Result<RestReport, AnalysisError>>,
    /// The scenario changed since the points were found: they are shown as outdated and not
    /// marked in the 3D view.
    pub stale: bool,
    /// Fraction of the running search done.
    pub progress: f64,
}

impl RestState {
    /// Whether the search is going.
    pub fn running(&self) -> bool {
        self.job.is_some()
    }

    /// Asks the search to stop; whether one was going.
    pub fn cancel(&self) -> bool {
        self.job.as_ref().inspect(|j| j.cancel()).is_some()
    }

    /// The scenario changed: the points no longer describe it.
    pub fn outdate(&mut self) {
        if self.found.is_some() {
            self.stale = true;
        }
    }

    /// The points to mark in the 3D view (state, stable), none when stale.
    pub fn marks(&self) -> Vec<(Vec<f64>, bool)> {
        match (&self.found, self.stale) {
            (Some(Ok(report)), false) => report
                .points
                .iter()
                .map(|p| (p.state.clone(), p.stable))
                .collect(),
            _ => Vec::new(),
        }
    }
}

/// Sends the search's progress to the window.
struct Progress<'a>(&'a Reporter<f64>);

impl RestSink for Progress<'_> {
    fn progress(&mut self, fraction: f64) {
        self.0.send(fraction);
    }
}

/// Stability of a resting point in words: `stable (stable focus)`, `unstable: 1 unstable
/// direction (saddle)`.
pub fn stability_words(point: &RestingPoint) -> String {
    if point.stable {
        format!("stable ({})", point.kind.words())
    } else {
        let s = if point.n_unstable == 1 { "" } else { "s" };
        format!(
            "unstable: {} unstable direction{s} ({})",
            point.n_unstable,
            point.kind.words()
        )
    }
}

impl Session {
    /// Starts the resting-point search over the scenario's window.
    pub(crate) fn start_rest_search(&mut self) {
        if self.analysis.rest.running() {
            return;
        }
        let compiled = match self.doc.compiled() {
            Ok(c) => c,
            Err(e) => {
                self.analysis.rest.found = Some(Err(AnalysisError::Compile(e.to_string())));
                self.analysis.rest.stale = false;
                return;
            }
        };
        let model = compiled.model.clone();
        let run = compiled.run.clone();
        let spawned = Job::spawn(
            JobKind::RestSearch,
            self.revision,
            self.waker.clone(),
            move |reporter, interrupt| {
                Ok(find_resting_points(
                    &model,
                    &run,
                    &RestSettings::default(),
                    &mut Progress(reporter),
                    &interrupt,
                )?)
            },
        );
        match spawned {
            Ok(job) => {
                let rest = &mut self.analysis.rest;
                rest.job = Some(job);
                rest.found = None;
                rest.stale = false;
                rest.progress = 0.0;
                self.note("looking for resting points");
            }
            Err(e) => {
                self.note(e.to_string());
                self.analysis.rest.found =
                    Some(Err(AnalysisError::NotStarted(JobKind::RestSearch)));
            }
        }
    }

    /// Collects the search's progress and result.
    pub(crate) fn drain_rest(&mut self) {
        if let Some(job) = &self.analysis.rest.job
            && let Some(last) = job.progress().last()
        {
            self.analysis.rest.progress = *last;
        }
        match arrival(self.analysis.rest.job.as_ref(), self.revision) {
            Arrival::Nothing => {}
            Arrival::Stale => {
                self.analysis.rest.job = None;
                self.note(
                    "resting points found for an earlier version of the scenario were dropped",
                );
            }
            Arrival::Result(result) => {
                self.analysis.rest.job = None;
                match &result {
                    Ok(report) => {
                        let stable = report.points.iter().filter(|p| p.stable).count();
                        self.note(format!(
                            "{} resting point(s), {stable} stable",
                            report.points.len()
                        ));
                    }
                    Err(e) => self.note(format!("resting points: {e}")),
                }
                self.analysis.rest.found = Some(result);
                self.analysis.rest.stale = false;
            }
        }
    }
}
