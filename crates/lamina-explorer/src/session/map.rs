//! The regime map job: runs the scenario's map block in the background (its cells in
//! parallel on rayon's pool, every cell from the scenario's start, as `lamina map` does),
//! streams each classified cell to the session, and keeps the cells by number so the tile
//! fills in as they arrive.

use lamina_core::model::Model;
use lamina_core::regime_map::{MapCell, MapError, MapProblem, RegimeMapSpec, run_cells};
use lamina_core::run::Strobe;

use super::Session;
use crate::jobs::{Job, Poll};
use crate::vocabulary::JobKind;

/// The running map: each finished cell as progress, then whether the map could run.
type MapJob = Job<MapCell, Result<(), MapError>>;

/// The map's job and the cells it has produced.
#[derive(Default)]
pub struct MapState {
    job: Option<MapJob>,
    /// Finished cells, by cell number (rows by y, then x).
    pub cells: Vec<MapCell>,
    /// The map of the running or last run (`None` before the first).
    pub spec: Option<RegimeMapSpec>,
    /// The x and y parameters' names of the running or last run.
    pub names: (String, String),
    /// The x and y parameters' names with their units, for axes.
    pub labels: (String, String),
}

impl MapState {
    /// Whether the map is running.
    pub fn is_running(&self) -> bool {
        self.job.is_some()
    }

    /// Asks the map to stop; whether one was going.
    pub fn cancel(&self) -> bool {
        self.job.as_ref().inspect(|j| j.cancel()).is_some()
    }

    /// Number of cells of the running or last map.
    pub fn total(&self) -> usize {
        self.spec.as_ref().map_or(0, RegimeMapSpec::n_cells)
    }
}

impl Session {
    /// Starts the scenario's regime map.
    pub(crate) fn start_map(&mut self) {
        if self.map.is_running() {
            self.note("the regime map is already running: stop it first");
            return;
        }
        if let Some(problem) = self.doc.first_error() {
            self.note(format!("cannot run the regime map: {problem}"));
            return;
        }
        let Some(spec) = self.doc.scenario.map_spec() else {
            self.note("no regime map: set one up in the model panel");
            return;
        };
        let compiled = match self.doc.compiled() {
            Ok(c) => c,
            Err(e) => {
                self.note(format!("cannot run the regime map: {e}"));
                return;
            }
        };
        let model = compiled.model.clone();
        let run = compiled.run.clone();
        let cut = compiled.cut.clone();
        let strobe = compiled.strobe_spec.clone();
        let job_spec = spec.clone();
        let spawned = Job::spawn(
            JobKind::RegimeMap,
            self.revision,
            self.waker.clone(),
            move |reporter, interrupt| {
                // the strobe is compiled again per cell: its period may use a mapped parameter
                let strobe_for =
                    move |m: &Model| strobe.as_ref().and_then(|s| Strobe::compile(s, m).ok());
                let problem = MapProblem {
                    model: &model,
                    run: &run,
                    cut: cut.as_ref(),
                    strobe_for: &strobe_for,
                    map: &job_spec,
                };
                let indices: Vec<usize> = (0..job_spec.n_cells()).collect();
                run_cells(&problem, &indices, &interrupt, &|c| {
                    reporter.send(c.clone())
                })
                .map(|_| ())
            },
        );
        match spawned {
            Ok(job) => {
                let scenario = &self.doc.scenario;
                let name = |i: usize| {
                    scenario
                        .parameters
                        .get(i)
                        .map(|p| p.name.clone())
                        .unwrap_or_default()
                };
                self.map.names = (name(spec.x.parameter), name(spec.y.parameter));
                self.map.labels = (
                    scenario.parameter_label(spec.x.parameter),
                    scenario.parameter_label(spec.y.parameter),
                );
                let total = spec.n_cells();
                self.map.job = Some(job);
                self.map.cells.clear();
                self.map.spec = Some(spec);
                self.note(format!("regime map started: {total} cells"));
            }
            Err(e) => self.note(e.to_string()),
        }
    }

    /// Takes the map job's cells, and its end.
    pub(crate) fn drain_map(&mut self) {
        let Some(job) = &self.map.job else {
            return;
        };
        let end = job.poll();
        for cell in job.progress() {
            match self
                .map
                .cells
                .binary_search_by_key(&cell.index, |c| c.index)
            {
                Ok(at) => self.map.cells[at] = cell,
                Err(at) => self.map.cells.insert(at, cell),
            }
        }
        match end {
            Poll::Running => {}
            Poll::Lost => {
                let label = job.label();
                self.map.job = None;
                self.note(format!(
                    "the {label} stopped without a result (an internal error; please report it)"
                ));
            }
            Poll::Done(Err(e)) => {
                self.map.job = None;
                self.note(format!("the regime map could not run: {e}"));
            }
            Poll::Done(Ok(())) => {
                self.map.job = None;
                let mut counts: Vec<(&'static str, usize)> = Vec::new();
                for cell in &self.map.cells {
                    // in words: `quasi-periodic`, not the CSV's `quasi_periodic`
                    let word = cell.regime.word();
                    match counts.iter_mut().find(|(w, _)| *w == word) {
                        Some((_, n)) => *n += 1,
                        None => counts.push((word, 1)),
                    }
                }
                let counts: Vec<String> = (counts.iter())
                    .map(|(w, n)| format!("{n} {}", w.replace('_', "-")))
                    .collect();
                self.note(format!(
                    "regime map done: {} of {} cells ({})",
                    self.map.cells.len(),
                    self.map.total(),
                    counts.join(", ")
                ));
            }
        }
    }
}

impl Session {
    /// Sets the parameters `values` (index and value) and runs the model there: results of
    /// the old values are outdated, as for a click in the orbit diagram.
    pub(crate) fn set_parameters_and_run(&mut self, values: &[(usize, f64)]) {
        let mut said = Vec::new();
        for &(index, value) in values {
            if let Some(parameter) = self.doc.scenario.parameters.get_mut(index) {
                parameter.value = value;
                said.push(format!("{} = {value}", parameter.name));
            }
        }
        if said.is_empty() {
            return;
        }
        self.doc.changed();
        self.outdate();
        self.note(format!("{}: running the model there", said.join(", ")));
        self.start_run();
    }
}
