//! The window's layout: menu bar with the run buttons, status line, the main views side by
//! side or in two rows (resizable, each can be enlarged), and the small views below them.

use egui::{Color32, Rect, RichText, Sense, Ui, vec2};
use lamina_scenario::Surface;

use crate::chrome::{Chrome, LowerTab};
use crate::document::DEMOS;
use crate::results::{AxisLabels, RunState};
use crate::session::Session;
use crate::settings::Settings;
use crate::views::cloud::ColourBy;
use crate::views::series;
use crate::views::space::{PlaneGeometry, SpaceColours, SpaceScene};
use crate::vocabulary::{CloudAxis, Command, DragPhase, PointSet, ViewKind};
use crate::widgets::unit_suffix;

const MAIN_VIEWS: [ViewKind; 5] = [
    ViewKind::Trajectory,
    ViewKind::Cut,
    ViewKind::Strobe,
    ViewKind::Orbit,
    ViewKind::TimePlot,
];

/// The relative width of main view `i` (the time plot's is kept apart from the four older
/// ones, so remembered settings still load).
fn tile_weight(settings: &mut Settings, i: usize) -> &mut f32 {
    match settings.tile_weights.get_mut(i) {
        Some(w) => w,
        None => &mut settings.time_plot_weight,
    }
}

/// Two axis pickers: states, t, return time. Returns the new choice if changed.
fn cloud_axes_ui(
    ui: &mut Ui,
    id: &str,
    labels: &AxisLabels,
    axes: [CloudAxis; 2],
) -> Option<[CloudAxis; 2]> {
    let mut chosen = axes;
    let mut options: Vec<CloudAxis> = (0..labels.states.len()).map(CloudAxis::State).collect();
    options.push(CloudAxis::Time);
    options.push(CloudAxis::ReturnTime);
    for (k, tip) in [(0, "Horizontal coordinate"), (1, "Vertical coordinate")] {
        egui::ComboBox::from_id_salt((id, k))
            .selected_text(chosen[k].label(labels))
            .width(70.0)
            .show_ui(ui, |ui| {
                for o in &options {
                    ui.selectable_value(&mut chosen[k], *o, o.label(labels));
                }
            })
            .response
            .on_hover_text(tip);
    }
    (chosen != axes).then_some(chosen)
}

/// The menu bar and the run buttons.
pub fn menu_bar_ui(
    ui: &mut Ui,
    session: &Session,
    chrome: &mut Chrome,
    commands: &mut Vec<Command>,
) {
    egui::Panel::top("menu_bar").show(ui, |ui| {
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                if ui
                    .button("New")
                    .on_hover_text("Start a new scenario (Ctrl+N)")
                    .clicked()
                {
                    commands.push(Command::New);
                }
                if ui
                    .button("Open…")
                    .on_hover_text("Open a scenario file (Ctrl+O)")
                    .clicked()
                {
                    commands.push(Command::Open);
                }
                ui.menu_button("Open recent", |ui| {
                    if chrome.settings.recent.is_empty() {
                        ui.label("no recent files");
                    }
                    for path in chrome.settings.recent.clone() {
                        if ui.button(path.display().to_string()).clicked() {
                            commands.push(Command::OpenPath(path));
                        }
                    }
                });
                ui.menu_button("Demo scenarios", |ui| {
                    for (name, _) in DEMOS {
                        if ui.button(*name).clicked() {
                            commands.push(Command::LoadDemo(name));
                        }
                    }
                });
                ui.separator();
                if ui
                    .button("Save")
                    .on_hover_text("Save the scenario (Ctrl+S)")
                    .clicked()
                {
                    commands.push(Command::Save);
                }
                if ui
                    .button("Save as…")
                    .on_hover_text("Save under a new name (Ctrl+Shift+S)")
                    .clicked()
                {
                    commands.push(Command::SaveAs);
                }
                ui.separator();
                ui.menu_button("Export CSV", |ui| {
                    for (set, text) in [
                        (PointSet::Cut, "Cut points"),
                        (PointSet::Strobe, "Strobe samples"),
                        (PointSet::Trajectory, "Trajectory"),
                        (PointSet::Sweep, "Sweep (orbit diagram)"),
                        (PointSet::Map, "Regime map"),
                        (PointSet::TimeSeries, "Time plot (lines shown)"),
                    ] {
                        if ui.button(text).clicked() {
                            commands.push(Command::ExportCsv(set));
                        }
                    }
                });
                ui.menu_button("Export PNG", |ui| {
                    ui.horizontal(|ui| {
                        ui.label("size");
                        ui.add(
                            egui::DragValue::new(&mut chrome.settings.png_size[0])
                                .range(16..=8000)
                                .suffix(" px"),
                        );
                        ui.label("×");
                        ui.add(
                            egui::DragValue::new(&mut chrome.settings.png_size[1])
                                .range(16..=8000)
                                .suffix(" px"),
                        );
                    });
                    for view in [
                        ViewKind::Trajectory,
                        ViewKind::Cut,
                        ViewKind::Strobe,
                        ViewKind::ReturnTimes,
                        ViewKind::ReturnMap,
                        ViewKind::TimePlot,
                        ViewKind::Orbit,
                        ViewKind::RegimeMap,
                    ] {
                        if ui.button(view.title()).clicked() {
                            commands.push(Command::ExportPng(view));
                        }
                    }
                });
            });
            edit_menu_ui(ui, session, commands);
            ui.menu_button("Run", |ui| {
                if ui.button("Run from the start   F5").clicked() {
                    commands.push(Command::Run);
                }
                if ui.button("Stop   Esc").clicked() {
                    commands.push(Command::Stop);
                }
                run_on_ui(ui, session, "Run on   F6", commands);
            });
            ui.menu_button("Help", |ui| {
                if ui.button("Keyboard shortcuts   F1").clicked() {
                    chrome.show_shortcuts = true;
                }
                if ui.button("About Lamina").clicked() {
                    chrome.show_about = true;
                }
            });
            ui.separator();
            run_buttons_ui(ui, session, commands);
            ui.separator();
            ui.toggle_value(&mut chrome.show_model, "Model")
                .on_hover_text("Show or fold away the model panel (its width: drag its edge)");
            ui.toggle_value(&mut chrome.show_analysis, "Analysis")
                .on_hover_text(
                    "Periodic orbit (Floquet multipliers) and Lyapunov exponents of the scenario",
                );
        });
    });
}

/// The Edit menu: Undo and Redo, each naming the change it acts on.
fn edit_menu_ui(ui: &mut Ui, session: &Session, commands: &mut Vec<Command>) {
    ui.menu_button("Edit", |ui| {
        let undo = session.history.undo_label();
        if history_item_ui(ui, "Undo", undo, "Ctrl+Z") {
            commands.push(Command::Undo);
        }
        let redo = session.history.redo_label();
        if history_item_ui(ui, "Redo", redo, "Ctrl+Shift+Z") {
            commands.push(Command::Redo);
        }
    });
}

/// One item of the Edit menu, `verb` naming the change it acts on (`label`; disabled with
/// none); whether it was clicked.
fn history_item_ui(ui: &mut Ui, verb: &str, label: Option<&str>, shortcut: &str) -> bool {
    let text = label.map_or(verb.to_string(), |l| format!("{verb}: {l}"));
    ui.add_enabled(
        label.is_some(),
        egui::Button::new(text).shortcut_text(shortcut),
    )
    .on_disabled_hover_text(format!("Nothing to {}", verb.to_lowercase()))
    .clicked()
}

/// What "Run on" does.
const RUN_ON_TIP: &str =
    "Run on: integrate another span from where the run ended, keeping what it found (F6)";

/// The first problem of the scenario, as the Run controls name it.
fn first_error(session: &Session) -> Option<String> {
    session
        .doc
        .first_error()
        .map(|p| format!("{}: {}", p.field, p.message))
}

/// A "Run on" control labelled `text` (the menu item or the toolbar button): disabled with
/// the reason while a run cannot go on.
fn run_on_ui(ui: &mut Ui, session: &Session, text: &str, commands: &mut Vec<Command>) {
    let error = first_error(session);
    let off = run_on_off_reason(session, error.as_deref());
    let item = ui.add_enabled(off.is_none(), egui::Button::new(text));
    let item = match &off {
        Some(reason) => item.on_disabled_hover_text(format!("Run on is off: {reason}")),
        None => item.on_hover_text(RUN_ON_TIP),
    };
    if item.clicked() {
        commands.push(Command::RunOn);
    }
}

fn run_buttons_ui(ui: &mut Ui, session: &Session, commands: &mut Vec<Command>) {
    let running = session.is_running();
    let error = first_error(session);
    let run = ui.add_enabled(
        error.is_none(),
        egui::Button::new(RichText::new("Run").strong()),
    );
    let run = match &error {
        Some(reason) => run.on_disabled_hover_text(format!("Fix this first — {reason}")),
        None => run.on_hover_text(
            "Integrate from the start and record cut points and strobe samples (F5)",
        ),
    };
    if run.clicked() {
        commands.push(Command::Run);
    }
    if ui
        .add_enabled(running, egui::Button::new("Stop"))
        .on_hover_text("Stop the run (Esc)")
        .clicked()
    {
        commands.push(Command::Stop);
    }
    run_on_ui(ui, session, "Run on", commands);
    if let Some(reason) = error {
        let first_line = reason.lines().next().unwrap_or("").to_string();
        ui.label(
            RichText::new(format!("Run is off: {first_line}")).color(crate::widgets::ERROR_COLOUR),
        );
    } else if session.runs.stale && !running {
        ui.label(
            RichText::new("model changed — press Run to see it")
                .color(crate::widgets::WARNING_COLOUR),
        );
    }
}

/// Why "Run on" cannot go now, or `None` when it can.
fn run_on_off_reason(session: &Session, error: Option<&str>) -> Option<String> {
    if let Some(reason) = error {
        let first_line = reason.lines().next().unwrap_or("");
        return Some(format!("fix this first — {first_line}"));
    }
    if session.is_running() {
        return Some("the run is still going".into());
    }
    if session.results.run.is_none() {
        return Some("there is no finished run yet: press Run".into());
    }
    if session.runs.stale {
        return Some("the model changed since this run: press Run".into());
    }
    None
}

/// The status line: run state, points, steps, times.
pub fn status_bar_ui(ui: &mut Ui, session: &Session) {
    egui::Panel::bottom("status_bar").show(ui, |ui| {
        ui.horizontal(|ui| {
            let r = &session.results;
            let (text, colour) = match &r.state {
                RunState::Idle => ("idle".to_string(), Color32::GRAY),
                RunState::Running => (
                    format!("running {:.0}%", 100.0 * r.fraction),
                    Color32::from_rgb(120, 190, 240),
                ),
                RunState::Finished => ("finished".to_string(), Color32::from_rgb(120, 200, 140)),
                RunState::Stopped => (
                    format!("stopped at t = {:.6}", r.t_reached),
                    Color32::from_rgb(220, 180, 90),
                ),
                RunState::EndedEarly(reason) => (
                    format!("ended early: {reason}"),
                    crate::widgets::ERROR_COLOUR,
                ),
                RunState::Lost => (
                    "failed: the run stopped without a result".to_string(),
                    crate::widgets::ERROR_COLOUR,
                ),
            };
            ui.label(RichText::new(text).color(colour).strong());
            ui.separator();
            ui.label(format!("{} cut points", r.cut.len()));
            ui.separator();
            ui.label(format!("{} strobe samples", r.strobe.len()));
            ui.separator();
            ui.label(format!("{} steps", r.n_steps));
            ui.separator();
            let time_unit = unit_suffix(session.doc.scenario.time.unit.as_deref());
            ui.label(format!("t = {:.6}{time_unit}", r.t_reached));
            ui.separator();
            let total = r.elapsed.as_secs_f64();
            match session.runs.parts {
                0 | 1 => ui.label(format!("{total:.2} s")),
                parts => ui
                    .label(format!(
                        "{:.2} s ({total:.2} s in all, {parts} parts)",
                        session.runs.last_part.as_secs_f64()
                    ))
                    .on_hover_text(
                        "The last part (Run on) took the first time; the run and every Run on since took the second",
                    ),
            };
        });
    });
}

/// Narrowest a lower view is laid out beside the others; below this they become tabs.
const MIN_LOWER_WIDTH: f32 = 260.0;

/// The return-time sequence, the first-return map and the message log: side by side, or as
/// tabs where the row is too narrow for three.
pub fn lower_views_ui(ui: &mut Ui, session: &Session, chrome: &mut Chrome) {
    egui::Panel::bottom("lower_views")
        .resizable(true)
        .default_size(200.0)
        .min_size(120.0)
        .show(ui, |ui| {
            let width = ui.available_width();
            if width < 3.0 * MIN_LOWER_WIDTH {
                ui.horizontal(|ui| {
                    for (tab, text) in [
                        (LowerTab::ReturnTimes, return_times_title(session)),
                        (LowerTab::ReturnMap, "First-return map"),
                        (LowerTab::Messages, "Messages"),
                    ] {
                        ui.selectable_value(&mut chrome.lower_tab, tab, text);
                    }
                });
                let height = ui.available_height();
                ui.allocate_ui_with_layout(
                    vec2(width, height),
                    egui::Layout::top_down(egui::Align::Min),
                    |ui| match chrome.lower_tab {
                        LowerTab::ReturnTimes => return_times_body_ui(ui, session),
                        LowerTab::ReturnMap => first_return_body_ui(ui, session, chrome),
                        LowerTab::Messages => messages_body_ui(ui, session),
                    },
                );
                return;
            }
            let height = ui.available_height();
            ui.horizontal(|ui| {
                // two separators between three columns, each with spacing on both sides
                let third = (width - 2.0 * (2.0 * ui.spacing().item_spacing.x + 6.0)) / 3.0;
                let column = |ui: &mut Ui, add: &mut dyn FnMut(&mut Ui)| {
                    ui.allocate_ui_with_layout(
                        vec2(third, height),
                        egui::Layout::top_down(egui::Align::Min),
                        |ui| {
                            ui.set_max_width(third);
                            add(ui);
                        },
                    );
                };
                column(ui, &mut |ui| {
                    ui.label(RichText::new(return_times_title(session)).strong());
                    return_times_body_ui(ui, session);
                });
                ui.separator();
                column(ui, &mut |ui| {
                    ui.label(RichText::new("First-return map").strong());
                    first_return_body_ui(ui, session, chrome);
                });
                ui.separator();
                column(ui, &mut |ui| {
                    ui.label(RichText::new("Messages").strong());
                    messages_body_ui(ui, session);
                });
            });
        });
}

/// Whether the lower views show the cut's points (else the strobe's).
fn lower_source_is_cut(session: &Session) -> bool {
    !session.results.cut.is_empty() || session.results.strobe.is_empty()
}

fn return_times_title(session: &Session) -> &'static str {
    if lower_source_is_cut(session) {
        "Return times (cut)"
    } else {
        "Sample spacing (strobe)"
    }
}

fn return_times_body_ui(ui: &mut Ui, session: &Session) {
    let source_is_cut = lower_source_is_cut(session);
    let cloud = if source_is_cut {
        &session.results.cut
    } else {
        &session.results.strobe
    };
    let source = if source_is_cut { "cut" } else { "strobe" };
    let unit = session.doc.scenario.time.unit.as_deref();
    let label = unit.map_or(source.to_owned(), |u| format!("{source}, {u}"));
    series::return_times_ui(ui, cloud, &label);
}

fn first_return_body_ui(ui: &mut Ui, session: &Session, chrome: &mut Chrome) {
    let source_is_cut = lower_source_is_cut(session);
    let cloud = if source_is_cut {
        &session.results.cut
    } else {
        &session.results.strobe
    };
    // the coordinate a plane cut fixes is one value at every point: not worth a map
    let fixed = source_is_cut
        .then(|| session.doc.scenario.cut_fixed_state())
        .flatten();
    series::first_return_map_ui(
        ui,
        cloud,
        &session.axis_labels(),
        &mut chrome.settings.map_coordinate,
        fixed,
    );
}

/// The message log, newest at the bottom, each line wrapped to the width.
fn messages_body_ui(ui: &mut Ui, session: &Session) {
    egui::ScrollArea::vertical()
        .stick_to_bottom(true)
        .auto_shrink([false, false])
        .show(ui, |ui| {
            let start = session.log.first().map(|(t, _)| *t);
            for (t, line) in &session.log {
                let secs = start.map_or(0.0, |s| t.duration_since(s).as_secs_f64());
                ui.add(
                    egui::Label::new(RichText::new(format!("{secs:7.1} s  {line}")).monospace())
                        .wrap(),
                );
            }
        });
}

/// The plane of the scenario's cut as seen in the 3D view's coordinates, with the part of the
/// offset owed to states that are not shown (taken at their mean along the trajectory).
fn plane_in_view(session: &Session, settings: &Settings) -> Option<(PlaneGeometry, f64)> {
    let cut = session.doc.scenario.cut.as_ref()?;
    let Surface::Plane { normal, offset } = &cut.surface else {
        return None;
    };
    let names = &session.results.names;
    let axes = settings.space.axes;
    let weight = |idx: usize| {
        names
            .get(idx)
            .and_then(|n| normal.0.iter().find(|(m, _)| m == n))
            .map_or(0.0, |(_, w)| *w)
    };
    let traj = &session.results.trajectory;
    let mut hidden = 0.0;
    for (idx, name) in names.iter().enumerate() {
        if axes.contains(&idx) {
            continue;
        }
        let w = normal
            .0
            .iter()
            .find(|(m, _)| m == name)
            .map_or(0.0, |(_, w)| *w);
        if w != 0.0 && !traj.is_empty() {
            hidden += w * traj.mean(idx);
        }
    }
    Some((
        PlaneGeometry {
            normal: [weight(axes[0]), weight(axes[1]), weight(axes[2])],
            offset: offset - hidden,
        },
        hidden,
    ))
}

/// Narrowest a main view is laid out side by side with all the others; below this the views
/// go into two rows.
const MIN_TILE_WIDTH: f32 = 330.0;

/// Narrowest a main view is laid out two to a row; below this the views become tabs.
const MIN_TWO_ROW_TILE_WIDTH: f32 = 260.0;

/// Narrowest the 3D view is laid out while its neighbours can spare the room (its axis
/// pickers and reset button fit in one line).
const MIN_TRAJECTORY_WIDTH: f32 = 330.0;

/// Narrowest the 3D view's neighbours are made to give it [`MIN_TRAJECTORY_WIDTH`] (a plot
/// with two axis pickers still reads at this width).
const MIN_NEIGHBOUR_WIDTH: f32 = 220.0;

/// Height of one line of tabs over the main views when they are tabs.
const TAB_BAR_HEIGHT: f32 = 28.0;

/// How the main views share the central area.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Arrangement {
    /// All in one row.
    OneRow,
    /// Two rows (the first two above, the rest below).
    TwoRows,
    /// One view at a time, chosen by tabs.
    Tabs,
}

/// The arrangement of `n` views across `width`: one row while each keeps
/// [`MIN_TILE_WIDTH`], else two rows while two side by side keep
/// [`MIN_TWO_ROW_TILE_WIDTH`], else tabs.
fn arrangement(width: f32, n: usize) -> Arrangement {
    if n <= 1 || width / n as f32 >= MIN_TILE_WIDTH {
        Arrangement::OneRow
    } else if n >= 3 && width / 2.0 >= MIN_TWO_ROW_TILE_WIDTH {
        Arrangement::TwoRows
    } else {
        Arrangement::Tabs
    }
}

/// The tabs over the main views when they are too narrow to share the area (on as many lines
/// as they need); returns the view to show and where the tabs end.
fn main_tabs_ui(
    ui: &mut Ui,
    session: &Session,
    chrome: &mut Chrome,
    shown: &[usize],
    full: Rect,
) -> (usize, f32) {
    if !shown.contains(&chrome.main_tab) {
        chrome.main_tab = shown[0];
    }
    let bar = Rect::from_min_size(full.min, vec2(full.width(), TAB_BAR_HEIGHT));
    let mut bar_ui = ui.new_child(egui::UiBuilder::new().max_rect(bar).id_salt("main_tabs"));
    bar_ui.horizontal_wrapped(|ui| {
        for &i in shown {
            let kind = if MAIN_VIEWS[i] == ViewKind::Orbit {
                crate::map_panel::fourth_view(session, chrome.view.fourth)
            } else {
                MAIN_VIEWS[i]
            };
            ui.selectable_value(&mut chrome.main_tab, i, kind.title())
                .on_hover_text(
                    "The window is too narrow for the views side by side: one at a time",
                );
        }
    });
    (chrome.main_tab, bar_ui.min_rect().bottom())
}

/// The main views side by side (or, when four would be too narrow, in two rows of two),
/// resizable, each with an enlarge button.
pub fn main_views_ui(
    ui: &mut Ui,
    session: &Session,
    chrome: &mut Chrome,
    commands: &mut Vec<Command>,
) {
    egui::CentralPanel::default().show(ui, |ui| {
        let full = ui.available_rect_before_wrap();
        let shown: Vec<usize> = match chrome.settings.maximised {
            Some(m) if m < MAIN_VIEWS.len() => vec![m],
            _ if session.doc.scenario.sweep.is_some()
                || !session.sweep.columns.is_empty()
                || crate::map_panel::map_is_default(session) =>
            {
                vec![0, 4, 1, 2, 3]
            }
            _ => vec![0, 4, 1, 2],
        };
        let gap = 8.0;
        let (full, shown) = match arrangement(full.width(), shown.len()) {
            Arrangement::Tabs => {
                let (tab, bar_bottom) = main_tabs_ui(ui, session, chrome, &shown, full);
                (full.with_min_y(bar_bottom + gap / 2.0), vec![tab])
            }
            _ => (full, shown),
        };
        let rows: Vec<&[usize]> = match arrangement(full.width(), shown.len()) {
            Arrangement::TwoRows => vec![&shown[..2], &shown[2..]],
            _ => vec![&shown[..]],
        };
        let row_height = (full.height() - gap * (rows.len() as f32 - 1.0)) / rows.len() as f32;
        let mut rects = Vec::new();
        for (r, row) in rows.iter().enumerate() {
            let top = full.top() + r as f32 * (row_height + gap);
            let band =
                Rect::from_min_size(egui::pos2(full.left(), top), vec2(full.width(), row_height));
            rects.extend(row_ui(ui, &mut chrome.settings, row, band, gap));
        }
        for (i, rect) in rects {
            let mut tile = ui.new_child(egui::UiBuilder::new().max_rect(rect).id_salt(("tile", i)));
            tile.set_clip_rect(rect);
            // the views' zoom lives in egui's memory under their ids: a new document gets
            // new ids, so it starts fitted to its own data
            tile.push_id(("document", session.generation), |tile| {
                let kind = if MAIN_VIEWS[i] == ViewKind::Orbit {
                    crate::map_panel::fourth_view(session, chrome.view.fourth)
                } else {
                    MAIN_VIEWS[i]
                };
                tile_ui(tile, session, chrome, kind, i, commands);
            });
        }
    });
}

/// Lays the views `row` out across `band` by their weights, with a draggable splitter between
/// neighbours; returns each view's rectangle.
fn row_ui(
    ui: &mut Ui,
    settings: &mut Settings,
    row: &[usize],
    band: Rect,
    gap: f32,
) -> Vec<(usize, Rect)> {
    let total_weight: f32 = row
        .iter()
        .map(|&i| tile_weight(settings, i).max(0.05))
        .sum();
    let usable = band.width() - gap * (row.len() as f32 - 1.0);
    let mut widths: Vec<f32> = row
        .iter()
        .map(|&i| usable * tile_weight(settings, i).max(0.05) / total_weight)
        .collect();
    // the 3D view's row of axis pickers needs more room than a plot's: give it that much
    // where the others keep a readable width
    if let Some(k) = row
        .iter()
        .position(|&i| MAIN_VIEWS[i] == ViewKind::Trajectory)
        && row.len() > 1
        && widths[k] < MIN_TRAJECTORY_WIDTH
        && usable - MIN_TRAJECTORY_WIDTH >= MIN_NEIGHBOUR_WIDTH * (row.len() - 1) as f32
    {
        let others = usable - MIN_TRAJECTORY_WIDTH;
        let rest: f32 = widths
            .iter()
            .enumerate()
            .filter(|(j, _)| *j != k)
            .map(|(_, w)| w)
            .sum();
        for (j, w) in widths.iter_mut().enumerate() {
            *w = if j == k {
                MIN_TRAJECTORY_WIDTH
            } else {
                *w * others / rest
            };
        }
    }
    let mut x = band.left();
    let mut rects = Vec::new();
    for (&i, &w) in row.iter().zip(&widths) {
        rects.push((
            i,
            Rect::from_min_size(egui::pos2(x, band.top()), vec2(w, band.height())),
        ));
        x += w + gap;
    }
    for pair in rects.windows(2) {
        let (a, ra) = pair[0];
        let (b, _) = pair[1];
        let handle = Rect::from_min_max(
            egui::pos2(ra.right(), band.top()),
            egui::pos2(ra.right() + gap, band.bottom()),
        );
        let response = ui.interact(handle, ui.scope_id().with(("splitter", a)), Sense::drag());
        if response.hovered() || response.dragged() {
            ui.ctx().set_cursor_icon(egui::CursorIcon::ResizeHorizontal);
        }
        ui.painter().line_segment(
            [handle.center_top(), handle.center_bottom()],
            egui::Stroke::new(
                if response.dragged() { 2.0 } else { 1.0 },
                Color32::from_gray(70),
            ),
        );
        if response.dragged() {
            let dx = response.drag_delta().x / usable * total_weight;
            let (wa, wb) = (
                *tile_weight(settings, a) + dx,
                *tile_weight(settings, b) - dx,
            );
            if wa > 0.15 && wb > 0.15 {
                *tile_weight(settings, a) = wa;
                *tile_weight(settings, b) = wb;
            }
        }
    }
    rects
}

fn tile_ui(
    ui: &mut Ui,
    session: &Session,
    chrome: &mut Chrome,
    kind: ViewKind,
    index: usize,
    commands: &mut Vec<Command>,
) {
    // the buttons from the right first, then the title in the room left (cut with "…"), so
    // the two never overlap however narrow the tile
    ui.horizontal(|ui| {
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            tile_buttons_ui(ui, chrome, kind, index, commands);
            ui.allocate_ui_with_layout(
                vec2(ui.available_width(), ui.spacing().interact_size.y),
                egui::Layout::left_to_right(egui::Align::Center),
                |ui| {
                    ui.add(egui::Label::new(RichText::new(kind.title()).strong()).truncate())
                        .on_hover_text(kind.title());
                },
            );
        });
    });
    tile_body_ui(ui, session, chrome, kind, commands);
}

/// A tile narrower than this puts its less used buttons in a menu.
const COMPACT_TILE_WIDTH: f32 = 420.0;

/// The tile's buttons, laid out right to left: enlarge (or restore), then PNG, the other view
/// of the fourth tile and the colouring, in a menu when the tile is narrow.
fn tile_buttons_ui(
    ui: &mut Ui,
    chrome: &mut Chrome,
    kind: ViewKind,
    index: usize,
    commands: &mut Vec<Command>,
) {
    let compact = ui.available_width() < COMPACT_TILE_WIDTH;
    {
        {
            let maximised = chrome.settings.maximised == Some(index);
            if ui
                .small_button(if maximised { "restore" } else { "enlarge" })
                .on_hover_text(if maximised {
                    "Back to all the views"
                } else {
                    "Fill the window with this view"
                })
                .clicked()
            {
                chrome.settings.maximised = if maximised { None } else { Some(index) };
            }
            if compact {
                ui.menu_button("…", |ui| {
                    tile_extra_buttons_ui(ui, chrome, kind, commands)
                })
                .response
                .on_hover_text("PNG export and more for this view");
            } else {
                tile_extra_buttons_ui(ui, chrome, kind, commands);
            }
        }
    }
}

/// PNG export, the switch of the fourth tile and the colouring of a cloud view.
fn tile_extra_buttons_ui(
    ui: &mut Ui,
    chrome: &mut Chrome,
    kind: ViewKind,
    commands: &mut Vec<Command>,
) {
    {
        {
            if ui
                .small_button("PNG")
                .on_hover_text("Export this view as a PNG at the size set in File ▸ Export PNG")
                .clicked()
            {
                commands.push(Command::ExportPng(kind));
            }
            if matches!(kind, ViewKind::Orbit | ViewKind::RegimeMap) {
                let other = if kind == ViewKind::Orbit {
                    ViewKind::RegimeMap
                } else {
                    ViewKind::Orbit
                };
                if ui
                    .small_button(other.title())
                    .on_hover_text(format!("Show the {} in this tile", other.title()))
                    .clicked()
                {
                    chrome.view.fourth = Some(other);
                }
            }
            let colour = match kind {
                ViewKind::Cut => Some(&mut chrome.settings.cut_colour),
                ViewKind::Strobe => Some(&mut chrome.settings.strobe_colour),
                _ => None,
            };
            if let Some(colour) = colour {
                let text = match colour {
                    ColourBy::Arrival => "by order",
                    ColourBy::ReturnTime => "by return time",
                };
                if ui
                    .small_button(text)
                    .on_hover_text("Colour points by order of arrival or by return time")
                    .clicked()
                {
                    *colour = match colour {
                        ColourBy::Arrival => ColourBy::ReturnTime,
                        ColourBy::ReturnTime => ColourBy::Arrival,
                    };
                }
            }
        }
    }
}

/// The view itself, under the tile's header.
fn tile_body_ui(
    ui: &mut Ui,
    session: &Session,
    chrome: &mut Chrome,
    kind: ViewKind,
    commands: &mut Vec<Command>,
) {
    match kind {
        ViewKind::Trajectory => {
            let plane = plane_in_view(session, &chrome.settings);
            let colours = SpaceColours {
                background: Color32::from_rgb(18, 22, 30),
                trajectory: Color32::from_rgb(150, 200, 230),
                surface: Color32::from_rgba_unmultiplied(236, 150, 70, 48),
                cut_points: Color32::from_rgb(250, 210, 120),
            };
            let orbit: Vec<(f64, Vec<f64>)> = session
                .analysis
                .orbit_path
                .iter()
                .map(|p| (p.t, p.state.clone()))
                .collect();
            let resting = session.analysis.rest.marks();
            let labels = session.axis_labels();
            let scene = SpaceScene {
                labels: &labels,
                trajectory: chrome.view.dense.of(&session.results),
                cut_points: &session.results.cut,
                plane: plane.as_ref().map(|(p, _)| p),
                colours: &colours,
                period: session.results.strobe_period,
                orbit: &orbit,
                resting: &resting,
            };
            let response = chrome.settings.space.ui(ui, &scene);
            if let Some((geometry, hidden)) = &plane {
                let offset = response.new_offset.unwrap_or(geometry.offset) + hidden;
                if response.drag_ended {
                    commands.push(Command::MoveCut {
                        offset,
                        drag: DragPhase::Ends,
                    });
                } else if response.new_offset.is_some() {
                    commands.push(Command::MoveCut {
                        offset,
                        drag: DragPhase::Continues,
                    });
                }
            }
        }
        ViewKind::Cut | ViewKind::Strobe => {
            let scenario_axes = if kind == ViewKind::Cut {
                session.cut_axes()
            } else {
                session.strobe_axes()
            };
            let picker_id = if kind == ViewKind::Cut {
                "cut_axes_pick"
            } else {
                "strobe_axes_pick"
            };
            let labels = session.axis_labels();
            let axes = scenario_axes.map(|axes| {
                let picked = ui
                    .horizontal(|ui| cloud_axes_ui(ui, picker_id, &labels, axes))
                    .inner;
                if let Some(new) = picked {
                    commands.push(Command::ChooseCloudAxes(kind, new));
                }
                picked.unwrap_or(axes)
            });
            let marks = orbit_marks(session, kind, axes);
            let (cloud, colour, view) = if kind == ViewKind::Cut {
                (
                    &session.results.cut,
                    chrome.settings.cut_colour,
                    &mut chrome.view.cut_view,
                )
            } else {
                (
                    &session.results.strobe,
                    chrome.settings.strobe_colour,
                    &mut chrome.view.strobe_view,
                )
            };
            let Some(axes) = axes else {
                ui.label(if kind == ViewKind::Cut {
                    "No cut: switch it on in the model panel."
                } else {
                    "No strobe: switch it on in the model panel."
                });
                return;
            };
            let id = if kind == ViewKind::Cut {
                "cut_view"
            } else {
                "strobe_view"
            };
            let height = ui.available_height() - 22.0;
            let mut clicked = None;
            ui.allocate_ui(vec2(ui.available_width(), height.max(40.0)), |ui| {
                clicked = view
                    .ui(ui, id, &labels, cloud, axes, colour, &marks)
                    .clicked;
            });
            let selected = clicked.or(view.selected).filter(|&s| s < cloud.len());
            ui.horizontal(|ui| match selected {
                Some(k) => {
                    let text = cloud.readout(k, &session.results.names, &session.doc.scenario);
                    // the button first: a long line is cut, never the button
                    if ui
                        .small_button("copy")
                        .on_hover_text("Copy this point's values to the clipboard")
                        .clicked()
                    {
                        ui.ctx().copy_text(text.clone());
                    }
                    ui.add(egui::Label::new(RichText::new(&text).monospace().small()).truncate());
                }
                None => {
                    ui.label(
                        RichText::new("click a point to see its values")
                            .weak()
                            .small(),
                    );
                }
            });
        }
        ViewKind::Orbit => crate::sweep_panel::orbit_tile_ui(ui, session, commands),
        ViewKind::TimePlot => {
            crate::time_plot_tile::time_plot_tile_ui(ui, session, chrome, commands)
        }
        ViewKind::RegimeMap => crate::map_panel::map_tile_ui(ui, session, commands),
        ViewKind::ReturnTimes | ViewKind::ReturnMap => {}
    }
}

/// The found orbit's points, marked in the cloud view of its map.
fn orbit_marks(
    session: &Session,
    kind: ViewKind,
    axes: Option<[CloudAxis; 2]>,
) -> Vec<crate::views::cloud::Mark> {
    let (Some(Ok(report)), Some(axes)) = (&session.analysis.cycle, axes) else {
        return Vec::new();
    };
    let same_map = matches!(
        (report.map, kind),
        (lamina_core::cycle::MapChoice::Cut, ViewKind::Cut)
            | (lamina_core::cycle::MapChoice::Strobe, ViewKind::Strobe)
    );
    if !same_map {
        return Vec::new();
    }
    let coord = |p: &lamina_core::cycle::MapPoint, a: CloudAxis| match a {
        CloudAxis::State(i) => p.state.get(i).copied(),
        CloudAxis::Time => Some(p.t),
        CloudAxis::ReturnTime => Some(report.period / report.k as f64),
    };
    report
        .orbit
        .iter()
        .filter_map(|p| {
            Some(crate::views::cloud::Mark {
                at: [coord(p, axes[0])?, coord(p, axes[1])?],
                colour: Color32::WHITE,
            })
        })
        .collect()
}
