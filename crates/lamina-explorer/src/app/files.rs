//! Files: new, open, save, save as, recent files, dropped files, the prompt before unsaved
//! edits are dropped, and the recovery copy of unsaved edits. File dialogs run on a helper
//! thread; where none is available (no desktop portal) a path field is shown instead.

use std::path::PathBuf;
use std::time::{Duration, Instant};

use egui::Context;

use super::ExplorerApp;
use crate::document::Document;
use crate::jobs::{Job, Poll, Waker};
use crate::vocabulary::{Command, JobKind, Pending, Purpose};

enum DialogAnswer {
    Picked(Purpose, PathBuf),
    Cancelled,
    /// No dialog could be shown: the purpose and the path it was to suggest.
    Unavailable(Purpose, Option<PathBuf>),
}

/// File dialogs, prompts and recovery.
pub struct Files {
    native: bool,
    recovery: bool,
    dialog: Option<Job<(), DialogAnswer>>,
    /// A path field shown instead of a dialog: purpose and text.
    pub prompt: Option<(Purpose, String, Option<String>)>,
    /// "Save changes?" waiting on this.
    pub confirm: Option<Pending>,
    after_save: Option<Pending>,
    /// Unsaved edits found from an earlier session.
    pub recovery_offer: Option<(String, Option<PathBuf>)>,
    last_recovery_write: Option<Instant>,
    recovery_revision: u64,
    closing: bool,
    /// A message to show in a window (a failed open or save).
    pub alert: Option<String>,
    /// The folder of the file opened or saved last: where a file name without a folder is put.
    pub last_folder: Option<PathBuf>,
}

/// How often unsaved edits are copied for recovery.
const RECOVERY_EVERY: Duration = Duration::from_secs(5);
/// A dialog that answers faster than this without a path was never shown.
const DIALOG_NOT_SHOWN: Duration = Duration::from_millis(250);

fn recovery_paths() -> Option<(PathBuf, PathBuf)> {
    let dir = eframe::storage_dir("Lamina")?;
    Some((dir.join("recovery.ron"), dir.join("recovery.path")))
}

impl Files {
    /// File handling; `native` uses desktop dialogs, `recovery` keeps recovery copies.
    pub fn new(native: bool, recovery: bool) -> Self {
        let recovery_offer = if recovery {
            recovery_paths().and_then(|(ron, path)| {
                let text = std::fs::read_to_string(ron).ok()?;
                let original = std::fs::read_to_string(path)
                    .ok()
                    .map(PathBuf::from)
                    .filter(|p| !p.as_os_str().is_empty());
                Some((text, original))
            })
        } else {
            None
        };
        Self {
            native,
            recovery,
            dialog: None,
            prompt: None,
            confirm: None,
            after_save: None,
            recovery_offer,
            last_recovery_write: None,
            recovery_revision: u64::MAX,
            closing: false,
            alert: None,
            last_folder: None,
        }
    }

    /// Asks for a path: a desktop dialog on a helper thread, or the path field.
    pub fn ask_path(&mut self, purpose: Purpose, suggested: Option<PathBuf>, waker: Waker) {
        let suggested = Some(self.in_a_folder(suggested));
        if !self.native {
            let text = suggested
                .map(|p| p.display().to_string())
                .unwrap_or_default();
            self.prompt = Some((purpose, text, None));
            return;
        }
        if self.dialog.is_some() {
            return;
        }
        let spawned = Job::spawn(JobKind::FileDialog, 0, waker, move |_, _| {
            let started = Instant::now();
            let mut dialog = rfd::FileDialog::new();
            let (name, ext) = match &purpose {
                Purpose::Open | Purpose::Save => ("Lamina scenario", "ron"),
                Purpose::Csv(_) => ("CSV", "csv"),
                Purpose::Png(_) => ("PNG image", "png"),
            };
            dialog = dialog.add_filter(name, &[ext]);
            if let Some(s) = &suggested {
                if let Some(dir) = s.parent() {
                    dialog = dialog.set_directory(dir);
                }
                if let Some(file) = s.file_name() {
                    dialog = dialog.set_file_name(file.to_string_lossy());
                }
            }
            let picked = match purpose {
                Purpose::Open => dialog.pick_file(),
                _ => dialog.save_file(),
            };
            match picked {
                Some(path) => DialogAnswer::Picked(purpose, path),
                None if started.elapsed() < DIALOG_NOT_SHOWN => {
                    DialogAnswer::Unavailable(purpose, suggested)
                }
                None => DialogAnswer::Cancelled,
            }
        });
        match spawned {
            Ok(job) => self.dialog = Some(job),
            Err(e) => {
                self.prompt = Some((
                    Purpose::Open,
                    String::new(),
                    Some(format!("{e}: type a path")),
                ));
            }
        }
    }
}

impl Files {
    /// `suggested` as a whole path: a relative path with a folder is taken from the working
    /// folder; a bare file name goes into the folder of the file used last, else the working
    /// folder (unless that is the file system's root, as for a program started from a desktop
    /// menu), else the home folder; no suggestion gives the folder itself, ending in a
    /// separator, ready for a file name.
    fn in_a_folder(&self, suggested: Option<PathBuf>) -> PathBuf {
        let name = suggested.unwrap_or_default();
        if name.is_absolute() {
            return name;
        }
        let has_folder = name.parent().is_some_and(|p| !p.as_os_str().is_empty());
        if has_folder {
            // a relative path with its folder: from the working folder, where it points now
            return std::path::absolute(&name).unwrap_or(name);
        }
        let cwd = std::env::current_dir()
            .ok()
            .filter(|d| d.parent().is_some());
        let home = std::env::var_os("HOME").map(PathBuf::from);
        let folder = self.last_folder.clone().or(cwd).or(home);
        match folder {
            Some(folder) if name.as_os_str().is_empty() => {
                let mut text = folder.into_os_string();
                text.push(std::path::MAIN_SEPARATOR_STR);
                PathBuf::from(text)
            }
            Some(folder) => folder.join(name),
            None => name,
        }
    }
}

impl ExplorerApp {
    /// Polls the dialog thread and writes the recovery copy; runs every frame.
    pub(crate) fn files_tick(&mut self, ctx: &Context) {
        let answer = self.files.dialog.as_ref().map(Job::poll);
        match answer {
            None | Some(Poll::Running) => {}
            Some(Poll::Done(answer)) => {
                self.files.dialog = None;
                match answer {
                    DialogAnswer::Picked(purpose, path) => self.path_chosen(ctx, purpose, path),
                    DialogAnswer::Cancelled => self.files.after_save = None,
                    DialogAnswer::Unavailable(purpose, suggested) => {
                        // the path field starts where the dialog would have
                        let text = suggested
                            .map(|p| p.display().to_string())
                            .unwrap_or_default();
                        self.files.prompt = Some((
                            purpose,
                            text,
                            Some(
                                "No file dialog is available on this desktop: type a path instead."
                                    .into(),
                            ),
                        ));
                    }
                }
            }
            Some(Poll::Lost) => {
                self.files.dialog = None;
                self.files.after_save = None;
                self.files.prompt = Some((
                    Purpose::Open,
                    String::new(),
                    Some("The file dialog closed without an answer: type a path instead.".into()),
                ));
            }
        }
        self.write_recovery();
        if ctx.input(|i| i.viewport().close_requested())
            && !self.files.closing
            && self.session.doc.is_dirty()
        {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.files.confirm = Some(Pending::Quit);
        }
    }

    fn write_recovery(&mut self) {
        if !self.files.recovery || self.files.recovery_offer.is_some() {
            return;
        }
        let Some((ron_path, path_path)) = recovery_paths() else {
            return;
        };
        if !self.session.doc.is_dirty() {
            return;
        }
        let due = self
            .files
            .last_recovery_write
            .is_none_or(|t| t.elapsed() >= RECOVERY_EVERY);
        if !due || self.files.recovery_revision == self.session.doc.revision {
            return;
        }
        self.files.last_recovery_write = Some(Instant::now());
        self.files.recovery_revision = self.session.doc.revision;
        let text = lamina_scenario::to_ron_string(&self.session.doc.scenario);
        let original = self
            .session
            .doc
            .path
            .as_ref()
            .map(|p| p.display().to_string())
            .unwrap_or_default();
        let _ = std::fs::create_dir_all(ron_path.parent().unwrap_or(&ron_path));
        let write = |path: &PathBuf, contents: &str| {
            lamina_export::write_bytes_atomically(path, contents.as_bytes())
        };
        if write(&ron_path, &text).is_ok() {
            let _ = write(&path_path, &original);
        }
    }

    fn clear_recovery(&mut self) {
        if let Some((ron, path)) = recovery_paths().filter(|_| self.files.recovery) {
            let _ = std::fs::remove_file(ron);
            let _ = std::fs::remove_file(path);
        }
    }

    fn path_chosen(&mut self, ctx: &Context, purpose: Purpose, path: PathBuf) {
        match purpose {
            Purpose::Open => self.open_path(path),
            Purpose::Save => {
                if self.save_to(path) {
                    if let Some(pending) = self.files.after_save.take() {
                        self.proceed(pending, ctx);
                    }
                } else {
                    self.files.after_save = None;
                }
            }
            Purpose::Csv(set) => self.export_csv(set, &path),
            Purpose::Png(view) => self.export_png(view, path),
        }
    }

    /// Opens `path`, replacing the current scenario (already confirmed).
    pub(crate) fn open_path(&mut self, path: PathBuf) {
        // the whole path: recent files, saves and suggestions stay right if the working
        // folder is not the one the window started in
        let path = std::path::absolute(&path).unwrap_or(path);
        match lamina_scenario::load_file(&path) {
            Ok(scenario) => {
                let format_note = scenario.format_note();
                self.chrome.settings.remember(path.clone());
                self.files.last_folder = absolute_folder(&path);
                self.replace_document(
                    Document::new(scenario, Some(path.clone())),
                    format!("opened {}", path.display()),
                );
                if let Some(note) = format_note {
                    self.session.note(note);
                }
            }
            Err(e) => {
                let message = format!("cannot open {}: {e}", path.display());
                self.session.note(message.clone());
                self.files.alert = Some(message);
            }
        }
    }

    /// Puts `doc` in the window: the session stops every job and clears what belonged to
    /// the old document; the 3D view takes the new one's axes and camera. Opening a file, New,
    /// a demo and the recovery copy all come here.
    pub(crate) fn replace_document(&mut self, doc: Document, message: String) {
        self.session.replace_document(doc, message);
        self.apply_view_block();
    }

    /// Takes the 3D axes and camera from the scenario's view block, if it has one.
    pub(crate) fn apply_view_block(&mut self) {
        if let Some(axes) = self.session.doc.scenario.view_axes() {
            let n = self.session.doc.scenario.states.len();
            self.chrome.settings.space.axes = axes.map(|a| match a {
                lamina_scenario::ViewAxis::State(i) => i,
                lamina_scenario::ViewAxis::Time => n,
            });
        } else {
            let n = self.session.doc.scenario.states.len();
            // a forced model with two states: the time within the period (or the time) as the
            // third axis
            let third = if n >= 3 {
                2
            } else if self.session.doc.scenario.strobe.is_some() {
                n + 1
            } else {
                n
            };
            self.chrome.settings.space.axes = [0, 1.min(n.saturating_sub(1)), third];
        }
        if let Some(camera) = self
            .session
            .doc
            .scenario
            .view
            .as_ref()
            .and_then(|v| v.camera.as_ref())
        {
            self.chrome.settings.space.yaw = camera.yaw_deg.to_radians() as f32;
            self.chrome.settings.space.pitch = camera.pitch_deg.to_radians() as f32;
            self.chrome.settings.space.zoom = camera.zoom as f32;
        }
        self.chrome.space_as_opened = Some(self.space_now());
    }

    /// The 3D view's axes and camera now.
    fn space_now(&self) -> ([usize; 3], [f32; 3]) {
        let space = &self.chrome.settings.space;
        (space.axes, [space.yaw, space.pitch, space.zoom])
    }

    /// The view block to save: the scenario's own while the 3D view's axes and camera are
    /// as opened (so an untouched file saves as it was), else the view as shown now.
    pub(crate) fn view_block_to_save(&self) -> Option<lamina_scenario::View> {
        if self.chrome.space_as_opened == Some(self.space_now()) {
            self.session.doc.scenario.view.clone()
        } else {
            Some(self.view_block_now())
        }
    }

    /// The view block as the window shows the scenario now: the 3D view's camera and axes
    /// (the axes left out where one is the time within the drive period, which a scenario
    /// cannot name and which is the default for such a model anyway), the colours kept.
    pub(crate) fn view_block_now(&self) -> lamina_scenario::View {
        let scenario = &self.session.doc.scenario;
        let space = &self.chrome.settings.space;
        let n = scenario.states.len();
        let name = |axis: usize| -> Option<String> {
            if axis < n {
                Some(scenario.states[axis].name.clone())
            } else if axis == n {
                Some("t".into())
            } else {
                None
            }
        };
        let axes = match space.axes.map(name) {
            [Some(a), Some(b), Some(c)] => Some((a, b, c)),
            _ => None,
        };
        // whole hundredths of a degree and of the zoom: a saved file reads as typed
        let round = |v: f64| (v * 100.0).round() / 100.0;
        lamina_scenario::View {
            camera: Some(lamina_scenario::Camera {
                yaw_deg: round(f64::from(space.yaw).to_degrees().rem_euclid(360.0)),
                pitch_deg: round(f64::from(space.pitch).to_degrees()).clamp(-90.0, 90.0),
                zoom: round(f64::from(space.zoom)).max(0.01),
            }),
            axes,
            colours: scenario.view.as_ref().and_then(|v| v.colours.clone()),
        }
    }

    /// Writes the scenario to `path`, with the view block as shown now; true on success.
    pub(crate) fn save_to(&mut self, path: PathBuf) -> bool {
        let mut scenario = self.session.doc.scenario.clone();
        scenario.view = self.view_block_to_save();
        match lamina_scenario::save_file(&path, &scenario) {
            Ok(()) => {
                self.session.doc.scenario.view = scenario.view;
                self.chrome.space_as_opened = Some(self.space_now());
                self.session.doc.mark_saved(path.clone());
                self.chrome.settings.remember(path.clone());
                self.files.last_folder = absolute_folder(&path);
                self.clear_recovery();
                self.session.note(format!("saved {}", path.display()));
                true
            }
            Err(e) => {
                let message = format!("cannot save {}: {e}", path.display());
                self.session.note(message.clone());
                self.files.alert = Some(message);
                false
            }
        }
    }

    /// Takes the recovery copy of unsaved edits in place of the current document.
    pub(crate) fn recover(&mut self, text: &str, path: Option<PathBuf>) {
        match lamina_scenario::load_str(text) {
            Ok(scenario) => {
                let mut doc = Document::new(scenario, path);
                doc.changed();
                self.replace_document(doc, "recovered unsaved edits from the last session".into());
            }
            Err(e) => self
                .session
                .note(format!("the recovery copy cannot be read: {e}")),
        }
    }

    /// Save (to the known file) or save as.
    pub(crate) fn save(&mut self, choose: bool) {
        match (&self.session.doc.path, choose) {
            (Some(path), false) => {
                let path = path.clone();
                self.save_to(path);
            }
            _ => {
                let suggested = self.session.doc.path.clone().or_else(|| {
                    Some(PathBuf::from(format!(
                        "{}.ron",
                        slug(&self.session.doc.scenario.title)
                    )))
                });
                let waker = self.session.waker.clone();
                self.files.ask_path(Purpose::Save, suggested, waker);
            }
        }
    }

    fn guard(&mut self, pending: Pending, ctx: Option<&Context>) {
        if self.session.doc.is_dirty() {
            self.files.confirm = Some(pending);
        } else if let Some(ctx) = ctx {
            self.proceed(pending, ctx);
        } else {
            self.proceed_without_ctx(pending);
        }
    }

    pub(crate) fn request_open(&mut self) {
        self.guard(Pending::Open, None);
    }

    pub(crate) fn request_open_path(&mut self, path: PathBuf) {
        self.guard(Pending::OpenPath(path), None);
    }

    pub(crate) fn request_new(&mut self) {
        self.guard(Pending::New, None);
    }

    pub(crate) fn request_demo(&mut self, name: &'static str) {
        self.guard(Pending::Demo(name), None);
    }

    fn proceed_without_ctx(&mut self, pending: Pending) {
        match pending {
            Pending::Open => {
                let waker = self.session.waker.clone();
                let recent = self.chrome.settings.recent.first().cloned();
                self.files.ask_path(Purpose::Open, recent, waker);
            }
            Pending::OpenPath(path) => self.open_path(path),
            Pending::New => {
                self.replace_document(Document::blank(), "new scenario".into());
                // a new scenario waits for Run
                self.session.pending_run = false;
            }
            Pending::Demo(name) => {
                let found = crate::document::DEMOS.iter().find(|(n, _)| *n == name);
                match found.map(|(_, text)| lamina_scenario::load_str(text)) {
                    Some(Ok(scenario)) => self.replace_document(
                        Document::new(scenario, None),
                        format!("opened the demo '{name}'"),
                    ),
                    Some(Err(e)) => self
                        .session
                        .note(format!("the demo '{name}' does not load: {e}")),
                    None => self.session.note(format!("no demo called '{name}'")),
                }
            }
            Pending::Quit => {}
        }
    }

    fn proceed(&mut self, pending: Pending, ctx: &Context) {
        if pending == Pending::Quit {
            self.files.closing = true;
            self.clear_recovery();
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        } else {
            self.proceed_without_ctx(pending);
        }
    }
}

/// The folder of `path`, made absolute.
pub(super) fn absolute_folder(path: &std::path::Path) -> Option<PathBuf> {
    let absolute = std::path::absolute(path).ok()?;
    absolute.parent().map(std::path::Path::to_path_buf)
}

/// A file-name-friendly version of a title.
fn slug(title: &str) -> String {
    let s: String = title
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '_'
            }
        })
        .collect();
    let s = s.trim_matches('_').to_string();
    if s.is_empty() { "scenario".into() } else { s }
}

/// The windows of this module: the path field, "save changes?", recovery, alerts.
pub fn dialogs_ui(app: &mut ExplorerApp, ctx: &Context, commands: &mut Vec<Command>) {
    if let Some(pending) = app.files.confirm.clone() {
        let mut answer = None;
        egui::Modal::new(egui::Id::unique("confirm_discard")).show(ctx, |ui| {
            ui.heading("Unsaved changes");
            ui.label(format!(
                "“{}” has changes that are not saved.",
                app.session.doc.scenario.title
            ));
            ui.horizontal(|ui| {
                if ui
                    .button("Save")
                    .on_hover_text("Save, then go on")
                    .clicked()
                {
                    answer = Some(0);
                }
                if ui
                    .button("Discard changes")
                    .on_hover_text("Go on without saving")
                    .clicked()
                {
                    answer = Some(1);
                }
                if ui.button("Cancel").on_hover_text("Stay here").clicked() {
                    answer = Some(2);
                }
            });
        });
        match answer {
            Some(0) => {
                app.files.confirm = None;
                if let Some(path) = app.session.doc.path.clone() {
                    if app.save_to(path) {
                        app.proceed(pending, ctx);
                    }
                } else {
                    app.files.after_save = Some(pending);
                    app.save(true);
                }
            }
            Some(1) => {
                app.files.confirm = None;
                app.clear_recovery();
                app.proceed(pending, ctx);
            }
            Some(2) => app.files.confirm = None,
            _ => {}
        }
    }
    if let Some((purpose, mut text, message)) = app.files.prompt.take() {
        let mut done = None;
        let title = match &purpose {
            Purpose::Open => "Open scenario",
            Purpose::Save => "Save scenario as",
            Purpose::Csv(_) => "Export CSV",
            Purpose::Png(_) => "Export PNG",
        };
        egui::Modal::new(egui::Id::unique("path_prompt")).show(ctx, |ui| {
            ui.heading(title);
            if let Some(m) = &message {
                ui.label(m);
            }
            let label = ui.label("path");
            let response = ui
                .add(egui::TextEdit::singleline(&mut text).desired_width(420.0))
                .labelled_by(label.id);
            if response.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter)) {
                done = Some(true);
            }
            ui.horizontal(|ui| {
                if ui.button("OK").clicked() {
                    done = Some(true);
                }
                if ui.button("Cancel").clicked() {
                    done = Some(false);
                }
            });
        });
        match done {
            Some(true) if !text.trim().is_empty() => {
                app.path_chosen(ctx, purpose, PathBuf::from(text.trim()))
            }
            Some(_) => app.files.after_save = None,
            None => app.files.prompt = Some((purpose, text, message)),
        }
    }
    if let Some((text, original)) = app.files.recovery_offer.clone() {
        let mut answer = None;
        egui::Modal::new(egui::Id::unique("recovery")).show(ctx, |ui| {
            ui.heading("Recover unsaved edits?");
            let title = lamina_scenario::load_str(&text)
                .map(|s| s.title)
                .unwrap_or_default();
            ui.label(format!(
                "Lamina closed last time with edits to “{title}” that were not saved."
            ));
            if let Some(p) = &original {
                ui.label(format!("They belong to {}.", p.display()));
            }
            ui.horizontal(|ui| {
                if ui.button("Recover").clicked() {
                    answer = Some(true);
                }
                if ui.button("Discard them").clicked() {
                    answer = Some(false);
                }
            });
        });
        match answer {
            Some(true) => {
                app.files.recovery_offer = None;
                commands.push(Command::Recover {
                    text,
                    path: original,
                });
            }
            Some(false) => {
                app.files.recovery_offer = None;
                app.clear_recovery();
            }
            None => {}
        }
    }
    if let Some(message) = app.files.alert.clone() {
        let mut open = true;
        egui::Window::new("Problem")
            .collapsible(false)
            .resizable(false)
            .open(&mut open)
            .show(ctx, |ui| {
                ui.label(&message);
            });
        if !open {
            app.files.alert = None;
        }
    }
}

#[cfg(test)]
mod tests {
    use std::path::PathBuf;

    use super::Files;

    #[test]
    fn a_suggested_path_becomes_a_whole_one() {
        let mut files = Files::new(false, false);
        files.last_folder = Some(PathBuf::from("/data/runs"));
        // [common practice] a save dialog starts in the folder used last
        assert_eq!(
            files.in_a_folder(Some(PathBuf::from("cut_points.csv"))),
            PathBuf::from("/data/runs/cut_points.csv")
        );
        assert_eq!(
            files.in_a_folder(Some(PathBuf::from("/tmp/a.csv"))),
            PathBuf::from("/tmp/a.csv")
        );
        let cwd = std::env::current_dir().expect("cwd");
        assert_eq!(
            files.in_a_folder(Some(PathBuf::from("demos/b.csv"))),
            cwd.join("demos/b.csv"),
            "a folder given relative to the working folder, never doubled"
        );
        let folder = files.in_a_folder(None);
        assert_eq!(folder.to_string_lossy(), "/data/runs/");
    }
}
