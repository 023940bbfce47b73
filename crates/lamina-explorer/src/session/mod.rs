//! The session: the document and everything that belongs to it — the run's results, the
//! background jobs, the sweep, the regime map, the analysis, the view axes picked for this document and the
//! message log. Every change goes through [`Session::apply`] or
//! [`Session::replace_document`]; the UI reads a `&Session` and pushes [`Command`]s.
//!
//! Invariants kept here:
//! - Replacing the document stops every job and clears results, analysis, sweep, regime
//!   map, orbit marks and view axes; `generation` counts replacements so views reset what they keep.
//! - `revision` counts the changes that outdate results (model, parameters, cut, strobe,
//!   replacement). A job remembers the revision it was started for; an orbit or a spectrum
//!   that arrives for another revision is dropped, and one shown is cleared when the
//!   revision moves on.
//! - A job whose thread ends without a result is reported as an error, never left running.

use std::time::Instant;

mod analysis;
mod branch;
mod history;
mod map;
mod recheck;
mod rest;
mod runs;
mod sweep;

pub use analysis::{AnalysisState, map_points};
pub use history::History;
pub use map::MapState;
pub use recheck::recheck_words;
pub use rest::stability_words;
pub use runs::RunControl;
pub use sweep::SweepState;

use crate::document::Document;
use crate::jobs::{Waker, no_waker};
use crate::results::{AxisLabels, Results};
use crate::vocabulary::{CloudAxis, Command, JobKind, OrbitMap, PanelChanges, ViewKind};

/// The most lines the message log keeps.
const MAX_LOG: usize = 500;

/// Axes picked in the cloud views for this document (`None`: from the scenario).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct PickedAxes {
    /// The cut view's axes.
    pub cut: Option<[CloudAxis; 2]>,
    /// The strobe view's axes.
    pub strobe: Option<[CloudAxis; 2]>,
}

/// The document and all that belongs to it.
pub struct Session {
    /// The scenario being edited.
    pub doc: Document,
    /// What the current run has produced.
    pub results: Results,
    /// The run job and its bookkeeping.
    pub runs: RunControl,
    /// The sweep job and the orbit diagram's values.
    pub sweep: SweepState,
    /// The regime map job and its cells.
    pub map: MapState,
    /// The orbit search and exponent jobs and their results.
    pub analysis: AnalysisState,
    /// Axes picked in the cloud views.
    pub axes: PickedAxes,
    /// Messages for the log, with when they were written.
    pub log: Vec<(Instant, String)>,
    /// Bumped each time the document is replaced.
    pub generation: u64,
    /// Bumped by every change that outdates results (and by a replacement).
    pub revision: u64,
    /// Start a run when a document is opened.
    pub autostart: bool,
    /// Undo and redo of the document's changes.
    pub history: History,
    /// A run is due at the end of this frame (a document was just opened).
    pub(crate) pending_run: bool,
    pub(crate) waker: Waker,
}

impl Session {
    /// A session on `doc`; `autostart` runs each document as it is opened.
    pub fn new(doc: Document, autostart: bool) -> Self {
        let results = Results::new(state_names(&doc));
        let map = OrbitMap::default_for(&doc.scenario);
        Self {
            doc,
            results,
            runs: RunControl::default(),
            sweep: SweepState::default(),
            map: MapState::default(),
            analysis: AnalysisState::new(map),
            axes: PickedAxes::default(),
            log: Vec::new(),
            generation: 0,
            revision: 0,
            autostart,
            history: History::default(),
            pending_run: autostart,
            waker: no_waker(),
        }
    }

    /// Lets jobs ask for a frame through `waker`.
    pub fn set_waker(&mut self, waker: Waker) {
        self.waker = waker;
    }

    /// Adds a line to the message log.
    pub fn note(&mut self, message: impl Into<String>) {
        self.log.push((Instant::now(), message.into()));
        if self.log.len() > MAX_LOG {
            self.log.remove(0);
        }
    }

    /// Adds a line to the message log, or replaces the last line if it starts with `kind`
    /// too (a drag that repeats one action every frame gives one line, not hundreds).
    pub fn note_in_place(&mut self, kind: &str, message: String) {
        match self.log.last_mut() {
            Some((when, last)) if last.starts_with(kind) => {
                *when = Instant::now();
                *last = message;
            }
            _ => self.note(message),
        }
    }

    /// Puts `doc` in place of the current document: stops every job, clears results,
    /// analysis (resting points, rechecks and branch with it), sweep, orbit marks and picked
    /// axes, and queues a run if so set.
    pub fn replace_document(&mut self, doc: Document, message: impl Into<String>) {
        self.runs = RunControl::default();
        self.sweep = SweepState::default();
        self.map = MapState::default();
        self.analysis = AnalysisState::new(OrbitMap::default_for(&doc.scenario));
        self.axes = PickedAxes::default();
        self.results = Results::new(state_names(&doc));
        self.doc = doc;
        self.history.clear();
        self.generation += 1;
        self.revision += 1;
        self.note(message);
        self.pending_run = self.autostart;
    }

    /// The state names of the current scenario.
    pub fn state_names(&self) -> Vec<String> {
        state_names(&self.doc)
    }

    /// The axis labels of the run's states and the time, with the scenario's units.
    pub fn axis_labels(&self) -> AxisLabels {
        AxisLabels::new(&self.doc.scenario, &self.results.names)
    }

    /// Whether a run is going.
    pub fn is_running(&self) -> bool {
        self.runs.is_running()
    }

    /// Applies one command that concerns the document, its results or its jobs. A command
    /// that changes the scenario is recorded for undo; any other seals the last undo step.
    pub fn apply(&mut self, command: Command) {
        if !command.may_change_document() {
            self.history.seal();
            self.apply_inner(command);
            return;
        }
        // an edit in a field or a drag of the cut may merge with the step before; a click
        // that sets values is a step of its own
        let merges = matches!(command, Command::Edit { .. } | Command::MoveCut { .. });
        // the end of a drag of the cut closes its step: the next drag is a step of its own
        let ends_drag = matches!(
            command,
            Command::MoveCut {
                drag: crate::vocabulary::DragPhase::Ends | crate::vocabulary::DragPhase::Single,
                ..
            }
        );
        if !merges {
            self.history.seal();
        }
        let before = self.doc.scenario.clone();
        self.apply_inner(command);
        self.history
            .record(&before, &self.doc.scenario, Instant::now());
        if !merges || ends_drag {
            self.history.seal();
        }
    }

    fn apply_inner(&mut self, command: Command) {
        match command {
            Command::Undo => self.undo(),
            Command::Redo => self.redo(),
            Command::Run => self.start_run(),
            Command::Stop => self.stop_run(),
            Command::RunOn => self.run_on(),
            Command::Edit { scenario, changes } => self.take_scenario(*scenario, changes),
            Command::HoldSlider(held) => self.runs.hold_slider(held),
            Command::SetParameterAndRun { index, value } => {
                let Some(parameter) = self.doc.scenario.parameters.get_mut(index) else {
                    return;
                };
                parameter.value = value;
                let name = parameter.name.clone();
                self.doc.changed();
                self.outdate();
                self.note(format!("{name} = {value}: running the model there"));
                self.start_run();
            }
            Command::MoveCut { offset, drag } => {
                if let Some(cut) = &mut self.doc.scenario.cut
                    && let lamina_scenario::Surface::Plane { offset: o, .. } = &mut cut.surface
                {
                    *o = offset;
                    self.doc.changed();
                    self.outdate();
                    // a drag that goes on re-slices without a log line; its end writes one
                    if drag == crate::vocabulary::DragPhase::Continues {
                        self.reslice_quietly_if_idle();
                    } else {
                        self.reslice_now_or_later();
                    }
                }
            }
            Command::ChooseCloudAxes(kind, axes) => self.choose_cloud_axes(kind, axes),
            Command::ChooseOrbitMap(map) => self.analysis.choose_map(map),
            Command::FindOrbit => self.start_orbit_search(),
            Command::ComputeExponents => self.start_exponents(),
            Command::FindRestingPoints => self.start_rest_search(),
            Command::Recheck(target) => self.start_recheck(target),
            Command::FollowBranch(of) => self.start_branch(of),
            Command::StartSweep => self.start_sweep(),
            Command::StartMap => self.start_map(),
            Command::SetParametersAndRun { values } => self.set_parameters_and_run(&values),
            Command::Cancel(kind) => self.cancel(kind),
            // files, exports and dialogs belong to the window
            Command::New
            | Command::Open
            | Command::OpenPath(_)
            | Command::Save
            | Command::SaveAs
            | Command::ExportCsv(_)
            | Command::ExportPng(_)
            | Command::LoadDemo(_)
            | Command::Recover { .. } => {}
        }
    }

    /// Puts an edited `scenario` in place and acts on what changed: clears an orbit diagram
    /// whose indices no longer fit, follows a strobe switched on or off, outdates results.
    fn take_scenario(&mut self, scenario: lamina_scenario::Scenario, changes: PanelChanges) {
        let had_strobe = self.doc.scenario.strobe.is_some();
        let names_before = names_of(&self.doc.scenario);
        self.doc.scenario = scenario;
        if names_of(&self.doc.scenario) != names_before && !self.sweep.is_empty() {
            // the orbit diagram's indices would point at other states or parameters
            self.sweep = SweepState::default();
            self.note("the orbit diagram was cleared: the states or parameters changed");
        }
        if self.doc.scenario.strobe.is_some() != had_strobe {
            // a strobe switched on or off: the orbit search follows, as on opening
            self.analysis
                .choose_map(OrbitMap::default_for(&self.doc.scenario));
        }
        self.doc.changed();
        if changes.outdates_results() {
            self.outdate();
        }
        self.react_to_edit(changes);
    }

    /// Takes the last change back.
    fn undo(&mut self) {
        match self.history.undo(&self.doc.scenario) {
            Some((scenario, label)) => {
                self.restore(scenario);
                self.note(format!("undone: {label}"));
            }
            None => self.note("nothing to undo"),
        }
    }

    /// Does the last undone change again.
    fn redo(&mut self) {
        match self.history.redo(&self.doc.scenario) {
            Some((scenario, label)) => {
                self.restore(scenario);
                self.note(format!("redone: {label}"));
            }
            None => self.note("nothing to redo"),
        }
    }

    /// Puts a scenario from the history in place, acting on it as on the edit it reverses.
    fn restore(&mut self, scenario: lamina_scenario::Scenario) {
        let changes = changes_between(&self.doc.scenario, &scenario);
        if self.doc.scenario.cut.as_ref().map(|c| &c.axes) != scenario.cut.as_ref().map(|c| &c.axes)
        {
            self.axes.cut = None;
        }
        if self.doc.scenario.strobe.as_ref().map(|s| &s.axes)
            != scenario.strobe.as_ref().map(|s| &s.axes)
        {
            self.axes.strobe = None;
        }
        self.take_scenario(scenario, changes);
    }

    /// A change that outdates results: the shown orbit and spectrum no longer describe the
    /// scenario and are cleared; jobs still going will be dropped when they arrive.
    fn outdate(&mut self) {
        self.revision += 1;
        self.analysis.clear_results();
    }

    fn cancel(&mut self, kind: JobKind) {
        match kind {
            JobKind::Run => self.stop_run(),
            JobKind::Sweep => {
                if self.sweep.cancel() {
                    self.note("stopping the sweep");
                }
            }
            JobKind::RegimeMap => {
                if self.map.cancel() {
                    self.note("stopping the regime map");
                }
            }
            JobKind::OrbitSearch
            | JobKind::Exponents
            | JobKind::RestSearch
            | JobKind::Recheck
            | JobKind::Branch => {
                if self.analysis.cancel(kind) {
                    self.note(format!("stopping the {kind}"));
                }
            }
            JobKind::PngExport | JobKind::FileDialog => {}
        }
    }

    /// Takes the axes picked in a cloud view; a pair of states is also written to the
    /// scenario (so it is saved), time and return time stay a choice of the view.
    fn choose_cloud_axes(&mut self, kind: ViewKind, axes: [CloudAxis; 2]) {
        if let [CloudAxis::State(a), CloudAxis::State(b)] = axes {
            let name = |i: usize| self.results.names.get(i).cloned().unwrap_or_default();
            let pair = (name(a), name(b));
            match kind {
                ViewKind::Cut => {
                    if let Some(c) = &mut self.doc.scenario.cut {
                        c.axes = pair;
                    }
                }
                _ => {
                    if let Some(s) = &mut self.doc.scenario.strobe {
                        s.axes = pair;
                    }
                }
            }
            self.doc.changed();
        }
        match kind {
            ViewKind::Cut => self.axes.cut = Some(axes),
            _ => self.axes.strobe = Some(axes),
        }
    }

    /// The axes of the cut view: as picked, else from the scenario (a coordinate that is
    /// constant on a plane cut is replaced by the return time).
    pub fn cut_axes(&self) -> Option<[CloudAxis; 2]> {
        self.axes.cut.or_else(|| {
            let [a, b] = self.doc.scenario.cut_axes()?;
            let fixed = self.doc.scenario.cut_fixed_state();
            Some(if fixed == Some(b) {
                [CloudAxis::State(a), CloudAxis::ReturnTime]
            } else if fixed == Some(a) {
                [CloudAxis::State(b), CloudAxis::ReturnTime]
            } else {
                [CloudAxis::State(a), CloudAxis::State(b)]
            })
        })
    }

    /// The axes of the strobe view: as picked, else from the scenario.
    pub fn strobe_axes(&self) -> Option<[CloudAxis; 2]> {
        self.axes.strobe.or_else(|| {
            self.doc
                .scenario
                .strobe_axes()
                .map(|[a, b]| [CloudAxis::State(a), CloudAxis::State(b)])
        })
    }

    /// Takes what every job has sent, and starts what is due (a queued run, a re-run after
    /// a slider rested). Called once per frame before drawing; returns how long until it
    /// needs to look again, if it does without being woken.
    pub fn tick(&mut self) -> Option<std::time::Duration> {
        self.drain_run();
        self.drain_sweep();
        self.drain_map();
        self.drain_analysis();
        if std::mem::take(&mut self.pending_run) {
            self.start_run();
        }
        self.run_timers()
    }
}

/// What going from `before` to `after` touches, as the model panel would have said it.
fn changes_between(
    before: &lamina_scenario::Scenario,
    after: &lamina_scenario::Scenario,
) -> PanelChanges {
    let model = before.states != after.states
        || before.parameters != after.parameters
        || before.integrator != after.integrator
        || before.time != after.time
        || before.limits != after.limits;
    let cut = before.cut != after.cut;
    let strobe = before.strobe != after.strobe;
    PanelChanges {
        model,
        cut,
        strobe,
        view: !model && !cut && !strobe,
        ..PanelChanges::default()
    }
}

/// The state and parameter names, in order: what the indices of a sweep refer to.
fn names_of(scenario: &lamina_scenario::Scenario) -> (Vec<String>, Vec<String>) {
    (
        scenario.states.iter().map(|s| s.name.clone()).collect(),
        scenario.parameters.iter().map(|p| p.name.clone()).collect(),
    )
}

fn state_names(doc: &Document) -> Vec<String> {
    doc.scenario.states.iter().map(|s| s.name.clone()).collect()
}
