//! The explorer application: owns the document, the results, the worker and the views, and
//! runs one frame: drain events, draw, then apply what the user asked for.

use std::path::PathBuf;
use std::time::Instant;

use egui::{Key, KeyboardShortcut, Modifiers, Ui};

use crate::document::Document;
use crate::execution::Execution;
use crate::files::Files;
use crate::help;
use crate::layout::{self, Layout};
use crate::model_panel::model_panel_ui;
use crate::results::Results;
use crate::settings::Settings;

/// How the app talks to the outside world; tests switch the native parts off.
#[derive(Clone, Debug)]
pub struct Options {
    /// Use the desktop's file dialogs (off in tests: a path field is shown instead).
    pub native_dialogs: bool,
    /// Keep a recovery copy of unsaved edits and offer it after a crash.
    pub recovery: bool,
    /// Start the run as soon as the window opens.
    pub autostart: bool,
}

impl Default for Options {
    fn default() -> Self {
        Self {
            native_dialogs: false,
            recovery: false,
            autostart: true,
        }
    }
}

/// A request from the menus, buttons or keys, applied after drawing.
#[derive(Clone, Debug, PartialEq)]
pub enum Action {
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
    ExportCsv(crate::export::PointSet),
    /// Export a view as PNG.
    ExportPng(layout::ViewKind),
    /// Load one of the built-in demos.
    LoadDemo(&'static str),
}

/// The explorer window's state.
pub struct ExplorerApp {
    pub(crate) doc: Document,
    pub(crate) results: Results,
    pub(crate) execution: Execution,
    pub(crate) files: Files,
    pub(crate) layout: Layout,
    pub(crate) settings: Settings,
    pub(crate) options: Options,
    pub(crate) show_about: bool,
    pub(crate) show_shortcuts: bool,
    pub(crate) log: Vec<(Instant, String)>,
    pub(crate) pending_autostart: bool,
    pub(crate) sweep: crate::sweep_panel::SweepState,
    pub(crate) analysis: crate::analysis::AnalysisState,
    pub(crate) show_analysis: bool,
    /// The window title last sent to the desktop.
    shown_title: Option<String>,
}

impl ExplorerApp {
    /// The explorer on `file` (or the built-in demo).
    pub fn new(file: Option<PathBuf>, settings: Settings, options: Options) -> Self {
        let mut app = Self {
            doc: Document::demo(),
            results: Results::new(Vec::new()),
            execution: Execution::default(),
            files: Files::new(options.native_dialogs, options.recovery),
            layout: Layout::default(),
            settings,
            options: options.clone(),
            show_about: false,
            show_shortcuts: false,
            log: Vec::new(),
            pending_autostart: options.autostart,
            sweep: Default::default(),
            analysis: Default::default(),
            show_analysis: false,
            shown_title: None,
        };
        app.results = Results::new(app.state_names());
        match file {
            Some(path) => app.open_path(path),
            None => {
                app.apply_view_block();
                app.note("opened the built-in demo scenario");
            }
        }
        app
    }

    /// Adds a line to the message log.
    pub(crate) fn note(&mut self, message: impl Into<String>) {
        self.log.push((Instant::now(), message.into()));
        if self.log.len() > 500 {
            self.log.remove(0);
        }
    }

    /// The axis labels of the run's states and the time, with the scenario's units.
    pub(crate) fn axis_labels(&self) -> crate::results::AxisLabels {
        crate::results::AxisLabels::new(&self.doc.scenario, &self.results.names)
    }

    /// State names of the current scenario.
    pub(crate) fn state_names(&self) -> Vec<String> {
        self.doc
            .scenario
            .states
            .iter()
            .map(|s| s.name.clone())
            .collect()
    }

    /// The document (for tests and the binary).
    pub fn document(&self) -> &Document {
        &self.doc
    }

    /// The scenario being edited.
    pub fn scenario(&self) -> &lamina_scenario::Scenario {
        &self.doc.scenario
    }

    /// Replaces the scenario as if the user had edited it.
    pub fn edit_scenario(&mut self, edit: impl FnOnce(&mut lamina_scenario::Scenario)) {
        edit(&mut self.doc.scenario);
        self.doc.changed();
    }

    /// Where the run stands.
    pub fn run_state(&self) -> &crate::RunState {
        &self.results.state
    }

    /// Number of cut points shown.
    pub fn n_cut_points(&self) -> usize {
        self.results.cut.len()
    }

    /// Number of strobe samples shown.
    pub fn n_strobe_samples(&self) -> usize {
        self.results.strobe.len()
    }

    /// How many runs were started since the window opened.
    pub fn n_runs_started(&self) -> u64 {
        self.execution.n_started
    }

    /// Time of each cut point shown (for tests).
    pub fn cut_times(&self) -> &[f64] {
        &self.results.cut.t
    }

    /// A window showing `n_points` synthetic cut points and strobe samples, for the frame
    /// benchmark only (the points lie on a noisy closed curve; they are not a model's).
    #[doc(hidden)]
    pub fn benchmark_scene(n_points: usize) -> Self {
        let options = Options {
            autostart: false,
            ..Options::default()
        };
        let mut app = Self::new(None, Settings::default(), options);
        let names = app.state_names();
        app.results = Results::new(names);
        let mut state = [0.0; 2];
        for k in 0..n_points {
            let angle = k as f64 * 0.618_033_988_75 * std::f64::consts::TAU;
            let wobble = 1.0 + 0.05 * ((k as f64 * 0.37).sin());
            state[0] = wobble * angle.cos();
            state[1] = wobble * angle.sin();
            let point = lamina_core::run::CutPoint {
                t: k as f64,
                return_time: Some(1.0 + 0.1 * angle.sin()),
                state: state.to_vec(),
            };
            app.results.cut.push_cut(&point);
            app.results.strobe.push_cut(&point);
        }
        app.results.state = crate::RunState::Finished;
        app
    }

    /// Marks the point clouds as changed, as a pan or a new batch would (benchmark only).
    #[doc(hidden)]
    pub fn benchmark_touch(&mut self) {
        self.results.cut.revision += 1;
        self.results.strobe.revision += 1;
    }

    /// Parameter values the sweep has finished.
    pub fn n_sweep_values(&self) -> usize {
        self.sweep.columns.len()
    }

    /// Whether a sweep is going.
    pub fn is_sweeping(&self) -> bool {
        self.sweep.worker.is_running()
    }

    /// The periodic orbit found last: period, returns and the verdict's text.
    pub fn orbit_summary(&self) -> Option<(f64, usize, String)> {
        match &self.analysis.cycle {
            Some(Ok(r)) => Some((r.period, r.k, r.verdict.to_string())),
            _ => None,
        }
    }

    /// The Lyapunov exponents computed last.
    pub fn exponents(&self) -> Option<Vec<f64>> {
        match &self.analysis.spectrum {
            Some(Ok(s)) => Some(s.exponents.clone()),
            _ => None,
        }
    }

    /// Whether an orbit search or an exponent run is going.
    pub fn is_analysing(&self) -> bool {
        self.analysis.cycle_running() || self.analysis.exponents_running()
    }

    /// Whether a run is going.
    pub fn is_running(&self) -> bool {
        self.execution.worker.is_running()
    }

    /// Opens or closes the analysis panel (orbits and exponents).
    pub fn show_analysis_panel(&mut self, on: bool) {
        self.show_analysis = on;
    }

    /// One frame of the whole window.
    pub fn show(&mut self, ui: &mut Ui) {
        let ctx = ui.ctx().clone();
        self.drain_worker(&ctx);
        self.drain_sweep();
        self.drain_analysis();
        if self.sweep.worker.is_running() {
            ctx.request_repaint_after(std::time::Duration::from_millis(100));
        }
        let mut actions = self.keyboard(&ctx);
        if std::mem::take(&mut self.pending_autostart) {
            actions.push(Action::Run);
        }
        layout::menu_bar(self, ui, &mut actions);
        layout::status_bar(self, ui);
        let changes = egui::Panel::left("model_panel")
            .resizable(true)
            .default_size(430.0)
            .min_size(300.0)
            .show(ui, |ui| model_panel_ui(ui, &mut self.doc))
            .inner;
        if self.show_analysis {
            egui::Panel::right("analysis_panel")
                .resizable(true)
                .default_size(330.0)
                .min_size(260.0)
                .show(ui, |ui| self.analysis_panel_ui(ui));
        }
        layout::lower_views(self, ui);
        layout::main_views(self, ui, &mut actions);
        help::about_window(&ctx, &mut self.show_about);
        help::shortcuts_window(&ctx, &mut self.show_shortcuts);
        crate::files::dialogs(self, &ctx, &mut actions);
        self.handle_dropped_files(&ctx, &mut actions);
        self.apply_changes(&ctx, changes);
        for action in actions {
            self.apply(&ctx, action);
        }
        self.execution_tick(&ctx);
        self.files_tick(&ctx);
        // a viewport command asks for another frame: send the title only when it changes, or
        // an untouched window would repaint for ever
        let title = self.doc.window_title();
        if self.shown_title.as_deref() != Some(title.as_str()) {
            ctx.send_viewport_cmd(egui::ViewportCommand::Title(title.clone()));
            self.shown_title = Some(title);
        }
    }

    fn keyboard(&mut self, ctx: &egui::Context) -> Vec<Action> {
        let mut actions = Vec::new();
        let shortcut = |m: Modifiers, k: Key| KeyboardShortcut::new(m, k);
        ctx.input_mut(|i| {
            if i.consume_shortcut(&shortcut(Modifiers::NONE, Key::F6)) {
                actions.push(Action::RunOn);
            }
            if i.consume_shortcut(&shortcut(Modifiers::NONE, Key::F5))
                || i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::R))
            {
                actions.push(Action::Run);
            }
            if i.consume_shortcut(&shortcut(Modifiers::NONE, Key::Escape)) {
                actions.push(Action::Stop);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND | Modifiers::SHIFT, Key::S)) {
                actions.push(Action::SaveAs);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::S)) {
                actions.push(Action::Save);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::O)) {
                actions.push(Action::Open);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::N)) {
                actions.push(Action::New);
            }
            if i.consume_shortcut(&shortcut(Modifiers::NONE, Key::F1)) {
                self.show_shortcuts = !self.show_shortcuts;
            }
        });
        actions
    }

    fn handle_dropped_files(&mut self, ctx: &egui::Context, actions: &mut Vec<Action>) {
        let dropped: Vec<PathBuf> = ctx.input(|i| {
            i.raw
                .dropped_files
                .iter()
                .map(|f| f.path().to_path_buf())
                .filter(|p| !p.as_os_str().is_empty())
                .collect()
        });
        for path in dropped {
            if path.extension().is_some_and(|e| e == "ron") {
                actions.push(Action::OpenPath(path));
            } else {
                self.note(format!("{}: not a scenario file (.ron)", path.display()));
            }
        }
    }

    fn apply(&mut self, ctx: &egui::Context, action: Action) {
        match action {
            Action::Run => self.start_run(ctx),
            Action::Stop => self.stop_run(),
            Action::RunOn => self.run_on(ctx),
            Action::New => self.request_new(),
            Action::Open => self.request_open(),
            Action::OpenPath(path) => self.request_open_path(path),
            Action::Save => self.save(false),
            Action::SaveAs => self.save(true),
            Action::ExportCsv(set) => self.request_csv_export(set),
            Action::ExportPng(view) => self.request_png_export(view),
            Action::LoadDemo(name) => self.request_demo(name),
        }
    }
}

impl eframe::App for ExplorerApp {
    fn ui(&mut self, ui: &mut Ui, _frame: &mut eframe::Frame) {
        self.show(ui);
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        self.settings.store(storage);
    }
}
