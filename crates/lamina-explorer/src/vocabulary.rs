//! The explorer's shared words: the views, the point sets, the commands the UI pushes, the
//! kinds of background job and the window's errors. This module imports nothing from the UI
//! modules; the UI, the session and the jobs all speak it.

use std::path::PathBuf;

use lamina_scenario::Scenario;

/// A coordinate of a point cloud view: a state, the time, or the return time.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CloudAxis {
    /// The state with this index.
    State(usize),
    /// The time of the point.
    Time,
    /// The time since the previous point.
    ReturnTime,
}

/// ` um` for a unit, nothing without one: what follows a value shown with its unit.
pub fn unit_suffix(unit: Option<&str>) -> String {
    match unit {
        Some(unit) if !unit.trim().is_empty() => format!(" {unit}"),
        _ => String::new(),
    }
}

/// Where a command stands in a gesture of the mouse (a drag of the cut plane's handle): a
/// drag sends one command per frame, `Continues`, and one at its end, `Ends`, with the value
/// it ended at. Everything kept per change (the log line, an undo step) is kept once per
/// drag: the `Continues` commands are folded into the `Ends` that follows them.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DragPhase {
    /// A change on its own, not part of a drag.
    Single,
    /// The drag goes on: more moves of the same thing follow.
    Continues,
    /// The drag ended here: the change of the whole drag.
    Ends,
}

/// The views that can be shown and exported.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ViewKind {
    /// The 3D trajectory.
    Trajectory,
    /// The cut-point cloud.
    Cut,
    /// The strobe samples.
    Strobe,
    /// The return-time sequence.
    ReturnTimes,
    /// The first-return map.
    ReturnMap,
    /// The orbit diagram of the sweep.
    Orbit,
    /// The regime map over two parameters.
    RegimeMap,
    /// The chosen states against time over the recorded window.
    TimePlot,
}

impl ViewKind {
    /// Name in menus and in picture titles (the command line's pictures use the same).
    pub fn title(self) -> &'static str {
        use lamina_render::view_names;
        match self {
            Self::Trajectory => view_names::TRAJECTORY,
            Self::Cut => view_names::CUT,
            Self::Strobe => view_names::STROBE,
            Self::ReturnTimes => view_names::RETURN_TIMES,
            Self::ReturnMap => view_names::RETURN_MAP,
            Self::Orbit => view_names::ORBIT,
            Self::RegimeMap => view_names::REGIME_MAP,
            Self::TimePlot => view_names::TIME_PLOT,
        }
    }

    /// Default file name.
    pub fn file_stem(self) -> &'static str {
        match self {
            Self::Trajectory => "trajectory",
            Self::Cut => "cut_points",
            Self::Strobe => "strobe_samples",
            Self::ReturnTimes => "return_times",
            Self::ReturnMap => "first_return_map",
            Self::Orbit => "orbit_diagram",
            Self::RegimeMap => "regime_map",
            Self::TimePlot => "time_plot",
        }
    }
}

/// A point set that can be written as CSV.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PointSet {
    /// Cut points: `k,t,return_time,<states>`.
    Cut,
    /// Strobe samples: `k,t,<states>`.
    Strobe,
    /// Trajectory samples (step ends): `t,<states>`.
    Trajectory,
    /// The sweep's kept points: `<parameter>,k,<states>`.
    Sweep,
    /// The regime map's cells: `<x parameter>,<y parameter>,regime,returns,lyapunov`.
    Map,
    /// The time plot's lines as drawn: `t,<states shown>`.
    TimeSeries,
}

impl PointSet {
    /// Default file name.
    pub fn file_stem(self) -> &'static str {
        match self {
            Self::Cut => "cut_points",
            Self::Strobe => "strobe_samples",
            Self::Trajectory => "trajectory",
            Self::Sweep => "sweep",
            Self::Map => "regime_map",
            Self::TimeSeries => "time_plot",
        }
    }
}

/// What a chosen path is for.
#[derive(Clone, Debug, PartialEq)]
pub enum Purpose {
    /// Open a scenario.
    Open,
    /// Save the scenario.
    Save,
    /// Export a point set as CSV.
    Csv(PointSet),
    /// Export a view as PNG.
    Png(ViewKind),
}

/// What was waiting for the answer to "save changes?".
#[derive(Clone, Debug, PartialEq)]
pub enum Pending {
    /// Open a file chosen next.
    Open,
    /// Open this file.
    OpenPath(PathBuf),
    /// Start a new scenario.
    New,
    /// Load a demo.
    Demo(&'static str),
    /// Close the window.
    Quit,
}

/// Which map the orbit search works on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OrbitMap {
    /// The cut (Poincaré) map.
    Cut,
    /// The strobe (time-T) map.
    Strobe,
}

impl OrbitMap {
    /// The map a scenario's orbit search starts on: the strobe for a forced model (one with
    /// a strobe), as `lamina cycle` does, else the cut.
    pub fn default_for(scenario: &Scenario) -> Self {
        if scenario.strobe.is_some() {
            Self::Strobe
        } else {
            Self::Cut
        }
    }

    /// "cut" or "strobe".
    pub fn name(self) -> &'static str {
        match self {
            Self::Cut => "cut",
            Self::Strobe => "strobe",
        }
    }
}

/// Which result a recheck computes again.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum RecheckTarget {
    /// The periodic orbit found last.
    Orbit,
    /// The Lyapunov exponents computed last.
    Exponents,
    /// The points of the run on the orbit search's map (cut points or strobe samples).
    Points,
}

impl RecheckTarget {
    /// Name in messages: "orbit".
    pub fn name(self) -> &'static str {
        match self {
            Self::Orbit => "orbit",
            Self::Exponents => "exponents",
            Self::Points => "run's points",
        }
    }
}

/// What an edit in the model panel touched; the session acts on it.
#[must_use]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct PanelChanges {
    /// Anything that needs a new run (rates, starts, integrator, time, limits, names).
    pub model: bool,
    /// A parameter slider moved.
    pub slider: bool,
    /// A parameter slider is being dragged right now.
    pub slider_held: bool,
    /// The cut changed (surface, offset, direction): re-slice.
    pub cut: bool,
    /// The strobe changed: re-sample.
    pub strobe: bool,
    /// Only what is shown changed (axes, notes, title).
    pub view: bool,
}

impl PanelChanges {
    /// Whether anything changed.
    pub fn any(&self) -> bool {
        self.model || self.slider || self.cut || self.strobe || self.view
    }

    /// Whether results computed before the change no longer describe the scenario.
    pub fn outdates_results(&self) -> bool {
        self.model || self.slider || self.cut || self.strobe
    }
}

/// A request from the menus, buttons, keys or views. Drawing only pushes commands; they are
/// applied after the frame is drawn, in order.
#[derive(Clone, Debug, PartialEq)]
pub enum Command {
    /// Take the last change to the document back.
    Undo,
    /// Do the last undone change again.
    Redo,
    /// Run from the start.
    Run,
    /// Stop the run.
    Stop,
    /// Run on: integrate another span from where the finished run ended.
    RunOn,
    /// New scenario.
    New,
    /// Open (asks for a file).
    Open,
    /// Open this file.
    OpenPath(PathBuf),
    /// Save (asks for a file if there is none).
    Save,
    /// Save as.
    SaveAs,
    /// Export a point set as CSV.
    ExportCsv(PointSet),
    /// Export a view as PNG.
    ExportPng(ViewKind),
    /// Load one of the built-in demos.
    LoadDemo(&'static str),
    /// Take the recovery copy of unsaved edits from an earlier session.
    Recover {
        /// The scenario's text.
        text: String,
        /// The file it belonged to.
        path: Option<PathBuf>,
    },
    /// The model panel edited the scenario: here it is as edited.
    Edit {
        /// The scenario after the edit.
        scenario: Box<Scenario>,
        /// What the edit touched.
        changes: PanelChanges,
    },
    /// A parameter slider is held (true) or was let go (false): the re-run waits for it.
    HoldSlider(bool),
    /// Set a parameter and run the model there (a click in the orbit diagram).
    SetParameterAndRun {
        /// Parameter index.
        index: usize,
        /// New value.
        value: f64,
    },
    /// Move the plane cut to this offset (a drag of its handle in the 3D view) and re-slice.
    MoveCut {
        /// The plane's new offset.
        offset: f64,
        /// Where this move stands in the drag that makes it: one drag is many `Continues`
        /// moves and one `Ends`, so it is one change (one log line, one undo step).
        drag: DragPhase,
    },
    /// Axes picked in the cut or strobe view.
    ChooseCloudAxes(ViewKind, [CloudAxis; 2]),
    /// The map the orbit search works on.
    ChooseOrbitMap(OrbitMap),
    /// Look for a periodic orbit on the chosen map.
    FindOrbit,
    /// Compute the Lyapunov exponents.
    ComputeExponents,
    /// Look for the resting points of the model.
    FindRestingPoints,
    /// Follow the branch of the current resting point or of the orbit found last over the
    /// sweep's range.
    FollowBranch(lamina_core::branch::BranchOf),
    /// Compute a result again with tolerances divided by 100 and count the digits that agree.
    Recheck(RecheckTarget),
    /// Stop a job.
    Cancel(JobKind),
    /// Run the scenario's sweep.
    StartSweep,
    /// Run the scenario's regime map.
    StartMap,
    /// Set several parameters and run the model there (a click in the regime map).
    SetParametersAndRun {
        /// Parameter indices with their new values.
        values: Vec<(usize, f64)>,
    },
}

impl Command {
    /// Whether the command may change the scenario (and so is recorded for undo).
    pub fn may_change_document(&self) -> bool {
        matches!(
            self,
            Self::Edit { .. }
                | Self::SetParameterAndRun { .. }
                | Self::MoveCut { .. }
                | Self::ChooseCloudAxes(..)
                | Self::SetParametersAndRun { .. }
        )
    }
}

/// The kinds of background work.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum JobKind {
    /// A run of the model.
    Run,
    /// A parameter sweep.
    Sweep,
    /// The cells of a regime map.
    RegimeMap,
    /// The search for a periodic orbit.
    OrbitSearch,
    /// The Lyapunov exponents.
    Exponents,
    /// The search for resting points.
    RestSearch,
    /// A second computation at tighter tolerances.
    Recheck,
    /// Following a branch.
    Branch,
    /// Drawing and writing a PNG.
    PngExport,
    /// A desktop file dialog.
    FileDialog,
}

impl JobKind {
    /// Name in messages.
    pub fn name(self) -> &'static str {
        match self {
            Self::Run => "run",
            Self::Sweep => "sweep",
            Self::RegimeMap => "regime map",
            Self::OrbitSearch => "orbit search",
            Self::Exponents => "exponent computation",
            Self::RestSearch => "resting-point search",
            Self::Recheck => "recheck",
            Self::Branch => "branch",
            Self::PngExport => "PNG export",
            Self::FileDialog => "file dialog",
        }
    }

    /// Short name for the thread.
    pub fn thread_name(self) -> &'static str {
        match self {
            Self::Run => "run",
            Self::Sweep => "sweep",
            Self::RegimeMap => "map",
            Self::OrbitSearch => "orbit",
            Self::Exponents => "exponents",
            Self::RestSearch => "rest",
            Self::Recheck => "recheck",
            Self::Branch => "branch",
            Self::PngExport => "png",
            Self::FileDialog => "dialog",
        }
    }
}

impl std::fmt::Display for JobKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

/// Why an orbit search or exponent computation has no result.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum AnalysisError {
    /// The scenario has no cut or no strobe for the chosen map.
    #[error("the scenario has no {}: switch it on in the model panel", .0.name())]
    NoMap(OrbitMap),
    /// The scenario does not compile.
    #[error("the scenario does not compile: {0}")]
    Compile(String),
    /// The core's orbit search failed.
    #[error(transparent)]
    Cycle(#[from] lamina_core::cycle::CycleError),
    /// The core's exponent computation failed.
    #[error(transparent)]
    Exponents(#[from] lamina_core::lyapunov::ExponentError),
    /// The core's resting-point search failed.
    #[error(transparent)]
    Rest(#[from] lamina_core::rest::RestError),
    /// The second computation of a recheck failed.
    #[error(transparent)]
    Recheck(#[from] lamina_core::recheck::RecheckError),
    /// The core's continuation failed.
    #[error(transparent)]
    Branch(#[from] lamina_core::branch::BranchError),
    /// A branch cannot be started yet.
    #[error("no branch to follow: {0}")]
    NoBranch(&'static str),
    /// There is nothing to recheck yet.
    #[error("nothing to recheck: {0}")]
    NothingToRecheck(&'static str),
    /// The job's thread ended without a result.
    #[error("the {0} stopped without a result (an internal error; please report it)")]
    Lost(JobKind),
    /// The job could not start.
    #[error("cannot start the {0}: the system refused a thread")]
    NotStarted(JobKind),
}

/// Why a PNG export failed.
#[derive(Debug, thiserror::Error)]
pub enum PngError {
    /// The view has nothing to draw.
    #[error("nothing to draw yet: {0}")]
    Empty(&'static str),
    /// Drawing failed.
    #[error("cannot draw the picture: {0}")]
    Draw(#[from] lamina_render::RenderError),
    /// Writing failed.
    #[error("cannot write the picture: {0}")]
    Write(#[from] lamina_export::ExportError),
}
