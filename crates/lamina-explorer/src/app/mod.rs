//! The explorer application: the session, the window's own state (settings, file dialogs,
//! the views' selections) and one frame: take what the jobs sent, draw from the session while
//! collecting commands, then apply the commands in order.

mod export;
mod files;
mod map_access;
mod png_export;
mod view_access;

use std::path::PathBuf;

use egui::{Key, KeyboardShortcut, Modifiers, Ui};

use crate::analysis::analysis_panel_ui;
use crate::chrome::{Chrome, ViewState};
use crate::document::Document;
use crate::help;
use crate::jobs::Job;
use crate::layout;
use crate::model_panel::model_panel_ui;
use crate::results::RunState;
use crate::session::Session;
use crate::settings::Settings;
use crate::vocabulary::{Command, PngError};
use files::Files;

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

/// The explorer window's state.
pub struct ExplorerApp {
    pub(crate) session: Session,
    pub(crate) chrome: Chrome,
    pub(crate) files: Files,
    /// A PNG being drawn and written.
    pub(crate) png_export: Option<Job<(), Result<String, PngError>>>,
    /// The window title last sent to the desktop.
    shown_title: Option<String>,
}

impl ExplorerApp {
    /// The explorer on `file` (or the built-in demo).
    pub fn new(file: Option<PathBuf>, settings: Settings, options: Options) -> Self {
        let mut app = Self {
            session: Session::new(Document::demo(), options.autostart),
            chrome: Chrome {
                settings,
                view: ViewState::default(),
                show_about: false,
                show_shortcuts: false,
                show_analysis: false,
                show_model: true,
                main_tab: 0,
                lower_tab: Default::default(),
                space_as_opened: None,
            },
            files: Files::new(options.native_dialogs, options.recovery),
            png_export: None,
            shown_title: None,
        };
        app.files.last_folder = app
            .chrome
            .settings
            .recent
            .first()
            .and_then(|p| files::absolute_folder(p));
        match file {
            Some(path) => app.open_path(path),
            None => {
                app.session.note("opened the built-in demo scenario");
                app.apply_view_block();
                // its notes say what to look at
                app.chrome.view.open_notes = true;
            }
        }
        app
    }

    /// The document (for tests and the binary).
    pub fn document(&self) -> &Document {
        &self.session.doc
    }

    /// The scenario being edited.
    pub fn scenario(&self) -> &lamina_scenario::Scenario {
        &self.session.doc.scenario
    }

    /// Replaces the scenario as if the user had edited it in the model panel.
    pub fn edit_scenario(&mut self, edit: impl FnOnce(&mut lamina_scenario::Scenario)) {
        let mut scenario = self.session.doc.scenario.clone();
        edit(&mut scenario);
        self.apply(Command::Edit {
            scenario: Box::new(scenario),
            changes: crate::vocabulary::PanelChanges {
                model: true,
                ..Default::default()
            },
        });
    }

    /// Applies a command as the window would after drawing a frame.
    pub fn command(&mut self, command: Command) {
        self.apply(command);
    }

    /// Where the run stands.
    pub fn run_state(&self) -> &RunState {
        &self.session.results.state
    }

    /// Number of cut points shown.
    pub fn n_cut_points(&self) -> usize {
        self.session.results.cut.len()
    }

    /// Number of strobe samples shown.
    pub fn n_strobe_samples(&self) -> usize {
        self.session.results.strobe.len()
    }

    /// How many runs were started since the window opened.
    pub fn n_runs_started(&self) -> u64 {
        self.session.runs.n_started
    }

    /// Time of each cut point shown (for tests).
    pub fn cut_times(&self) -> &[f64] {
        &self.session.results.cut.t
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
        let names = app.session.state_names();
        let results = &mut app.session.results;
        *results = crate::results::Results::new(names);
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
            results.cut.push_cut(&point);
            results.strobe.push_cut(&point);
        }
        results.state = RunState::Finished;
        app
    }

    /// Marks the point clouds as changed, as a pan or a new batch would (benchmark only).
    #[doc(hidden)]
    pub fn benchmark_touch(&mut self) {
        self.session.results.cut.revision += 1;
        self.session.results.strobe.revision += 1;
    }

    /// Parameter values the sweep has finished.
    pub fn n_sweep_values(&self) -> usize {
        self.session.sweep.columns.len()
    }

    /// Whether a sweep is going.
    pub fn is_sweeping(&self) -> bool {
        self.session.sweep.is_running()
    }

    /// The periodic orbit found last: period, returns and the verdict's text.
    pub fn orbit_summary(&self) -> Option<(f64, usize, String)> {
        match &self.session.analysis.cycle {
            Some(Ok(r)) => Some((r.period, r.k, r.verdict.to_string())),
            _ => None,
        }
    }

    /// The orbit search's error, if the last search ended in one.
    pub fn orbit_error(&self) -> Option<String> {
        match &self.session.analysis.cycle {
            Some(Err(e)) => Some(e.to_string()),
            _ => None,
        }
    }

    /// Number of points of the found orbit drawn in the 3D view.
    pub fn n_orbit_path_points(&self) -> usize {
        self.session.analysis.orbit_path.len()
    }

    /// The map the orbit search works on: "cut" or "strobe".
    pub fn orbit_map(&self) -> &'static str {
        self.session.analysis.map.name()
    }

    /// The Lyapunov exponents computed last.
    pub fn exponents(&self) -> Option<Vec<f64>> {
        match &self.session.analysis.spectrum {
            Some(Ok(s)) => Some(s.exponents.clone()),
            _ => None,
        }
    }

    /// Whether an orbit search, an exponent run, a resting-point search or a recheck is
    /// going.
    pub fn is_analysing(&self) -> bool {
        let a = &self.session.analysis;
        a.cycle_running()
            || a.exponents_running()
            || a.rest.running()
            || a.recheck.running().is_some()
            || a.branch.running()
    }

    /// The followed branch: its number of points so far and its special points (kind in
    /// words, parameter value).
    pub fn branch_summary(&self) -> (usize, Vec<(String, f64)>) {
        let b = &self.session.analysis.branch;
        let special = b
            .special
            .iter()
            .map(|s| (s.kind.words().to_string(), s.value))
            .collect();
        (b.points.len(), special)
    }

    /// The resting points found last: state, stable, stability in words; `None` before a
    /// search or when it failed.
    pub fn resting_points(&self) -> Option<Vec<(Vec<f64>, bool, String)>> {
        match &self.session.analysis.rest.found {
            Some(Ok(r)) => Some(
                r.points
                    .iter()
                    .map(|p| {
                        (
                            p.state.clone(),
                            p.stable,
                            crate::session::stability_words(p),
                        )
                    })
                    .collect(),
            ),
            _ => None,
        }
    }

    /// The resting points marked in the 3D view (none while stale).
    pub fn n_resting_marks(&self) -> usize {
        self.session.analysis.rest.marks().len()
    }

    /// The digits of the last recheck of `target`, or its error.
    pub fn recheck_digits(&self, target: crate::RecheckTarget) -> Option<Result<u32, String>> {
        self.session
            .analysis
            .recheck
            .of(target)
            .map(|r| r.as_ref().map(|r| r.digits).map_err(|e| e.to_string()))
    }

    /// Whether an orbit search is going.
    pub fn is_searching_orbit(&self) -> bool {
        self.session.analysis.cycle_running()
    }

    /// Whether a run is going.
    pub fn is_running(&self) -> bool {
        self.session.is_running()
    }

    /// The message log's lines, oldest first.
    pub fn messages(&self) -> impl Iterator<Item = &str> {
        self.session.log.iter().map(|(_, line)| line.as_str())
    }

    /// The name of the change Undo would take back ("remove parameter k3").
    pub fn undo_label(&self) -> Option<&str> {
        self.session.history.undo_label()
    }

    /// The name of the change Redo would do again.
    pub fn redo_label(&self) -> Option<&str> {
        self.session.history.redo_label()
    }

    /// Number of changes that can be undone.
    pub fn n_undo_steps(&self) -> usize {
        self.session.history.n_undo()
    }

    /// The 3D view's camera: turn and tilt in degrees, zoom.
    pub fn camera(&self) -> (f64, f64, f64) {
        let space = &self.chrome.settings.space;
        (
            f64::from(space.yaw).to_degrees(),
            f64::from(space.pitch).to_degrees(),
            f64::from(space.zoom),
        )
    }

    /// Turns the 3D view as a drag would: turn and tilt in degrees, zoom.
    pub fn set_camera(&mut self, yaw_deg: f64, pitch_deg: f64, zoom: f64) {
        let space = &mut self.chrome.settings.space;
        space.yaw = yaw_deg.to_radians() as f32;
        space.pitch = pitch_deg.to_radians() as f32;
        space.zoom = zoom as f32;
    }

    /// The 3D view's axes: state indices, the number of states for the time.
    pub fn space_axes(&self) -> [usize; 3] {
        self.chrome.settings.space.axes
    }

    /// Chooses the 3D view's axes as its pickers would.
    pub fn set_space_axes(&mut self, axes: [usize; 3]) {
        self.chrome.settings.space.axes = axes;
    }

    /// Opens or closes the analysis panel (orbits and exponents).
    pub fn show_analysis_panel(&mut self, on: bool) {
        self.chrome.show_analysis = on;
    }

    /// Resets what the views keep when the document was replaced or new results came.
    fn sync_views(&mut self) {
        if self.chrome.view.generation != self.session.generation {
            // a demo (notes and no file) opens with its notes shown: they say what to look at
            let doc = &self.session.doc;
            self.chrome.view = ViewState {
                generation: self.session.generation,
                open_notes: doc.path.is_none() && !doc.scenario.notes.trim().is_empty(),
                ..ViewState::default()
            };
        }
        if self.chrome.view.results_serial != self.session.results.serial {
            self.chrome.view.results_serial = self.session.results.serial;
            self.chrome.view.cut_view.selected = None;
            self.chrome.view.strobe_view.selected = None;
        }
    }

    /// One frame of the whole window.
    pub fn show_ui(&mut self, ui: &mut Ui) {
        let ctx = ui.ctx().clone();
        let waker_ctx = ctx.clone();
        self.session
            .set_waker(std::sync::Arc::new(move || waker_ctx.request_repaint()));
        if let Some(after) = self.session.tick() {
            ctx.request_repaint_after(after);
        }
        self.sync_views();
        let mut commands = self.keyboard(&ctx);
        layout::menu_bar_ui(ui, &self.session, &mut self.chrome, &mut commands);
        layout::status_bar_ui(ui, &self.session);
        let mut draft = self.session.doc.clone();
        let open_notes = std::mem::take(&mut self.chrome.view.open_notes);
        let changes = egui::Panel::left("model_panel")
            .resizable(true)
            .default_size(380.0)
            .min_size(280.0)
            .max_size(720.0)
            .show_collapsible(ui, &mut self.chrome.show_model, |ui| {
                model_panel_ui(ui, &mut draft, open_notes)
            })
            .map(|r| r.inner)
            .unwrap_or_default();
        if changes.any() {
            commands.push(Command::Edit {
                scenario: Box::new(draft.scenario),
                changes,
            });
        } else if changes.slider_held != self.session.runs.slider_held() {
            commands.push(Command::HoldSlider(changes.slider_held));
        }
        egui::Panel::right("analysis_panel")
            .resizable(true)
            .default_size(320.0)
            .min_size(240.0)
            .max_size(640.0)
            // a closed analysis panel leaves no handle: the Analysis button opens it
            .drag_to_open(false)
            .show_collapsible(ui, &mut self.chrome.show_analysis, |ui| {
                analysis_panel_ui(
                    ui,
                    &self.session,
                    &mut self.chrome.view.summary,
                    &mut commands,
                )
            });
        layout::lower_views_ui(ui, &self.session, &mut self.chrome);
        layout::main_views_ui(ui, &self.session, &mut self.chrome, &mut commands);
        help::about_window(&ctx, &mut self.chrome.show_about);
        help::shortcuts_window(&ctx, &mut self.chrome.show_shortcuts);
        files::dialogs_ui(self, &ctx, &mut commands);
        self.handle_dropped_files(&ctx, &mut commands);
        for command in commands {
            self.apply(command);
        }
        self.drain_png_export();
        self.files_tick(&ctx);
        // a viewport command asks for another frame: send the title only when it changes, or
        // an untouched window would repaint for ever
        let title = self.session.doc.window_title();
        if self.shown_title.as_deref() != Some(title.as_str()) {
            ctx.send_viewport_cmd(egui::ViewportCommand::Title(title.clone()));
            self.shown_title = Some(title);
        }
    }

    fn keyboard(&mut self, ctx: &egui::Context) -> Vec<Command> {
        let mut commands = Vec::new();
        let shortcut = |m: Modifiers, k: Key| KeyboardShortcut::new(m, k);
        ctx.input_mut(|i| {
            if i.consume_shortcut(&shortcut(Modifiers::NONE, Key::F6)) {
                commands.push(Command::RunOn);
            }
            if i.consume_shortcut(&shortcut(Modifiers::NONE, Key::F5))
                || i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::R))
            {
                commands.push(Command::Run);
            }
            if i.consume_shortcut(&shortcut(Modifiers::NONE, Key::Escape)) {
                commands.push(Command::Stop);
            }
            // Ctrl+Shift+Z before Ctrl+Z: a shortcut matches with extra modifiers held
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND | Modifiers::SHIFT, Key::Z))
                || i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::Y))
            {
                commands.push(Command::Redo);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::Z)) {
                commands.push(Command::Undo);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND | Modifiers::SHIFT, Key::S)) {
                commands.push(Command::SaveAs);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::S)) {
                commands.push(Command::Save);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::O)) {
                commands.push(Command::Open);
            }
            if i.consume_shortcut(&shortcut(Modifiers::COMMAND, Key::N)) {
                commands.push(Command::New);
            }
            if i.consume_shortcut(&shortcut(Modifiers::NONE, Key::F1)) {
                self.chrome.show_shortcuts = !self.chrome.show_shortcuts;
            }
        });
        if commands
            .iter()
            .any(|c| matches!(c, Command::Undo | Command::Redo))
        {
            // a field being typed in keeps its own text while focused: let it go, so it shows
            // the value undo brings back (the document's undo replaces the field's own)
            ctx.memory_mut(|m| {
                if let Some(id) = m.focused() {
                    m.surrender_focus(id);
                }
            });
        }
        commands
    }

    fn handle_dropped_files(&mut self, ctx: &egui::Context, commands: &mut Vec<Command>) {
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
                commands.push(Command::OpenPath(path));
            } else {
                self.session
                    .note(format!("{}: not a scenario file (.ron)", path.display()));
            }
        }
    }

    /// Applies one command: files and exports here, the rest in the session.
    fn apply(&mut self, command: Command) {
        match command {
            Command::New => self.request_new(),
            Command::Open => self.request_open(),
            Command::OpenPath(path) => self.request_open_path(path),
            Command::Save => self.save(false),
            Command::SaveAs => self.save(true),
            Command::ExportCsv(set) => self.request_csv_export(set),
            Command::ExportPng(view) => self.request_png_export(view),
            Command::LoadDemo(name) => self.request_demo(name),
            Command::Recover { text, path } => self.recover(&text, path),
            other => self.session.apply(other),
        }
    }
}

impl eframe::App for ExplorerApp {
    fn ui(&mut self, ui: &mut Ui, _frame: &mut eframe::Frame) {
        self.show_ui(ui);
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        self.chrome.settings.store(storage);
    }
}
