//! The window's layout: menu bar with the run buttons, status line, the main views side by
//! side or in two rows (resizable, each can be enlarged), and the small views below them.

use egui::{Color32, Rect, RichText, Sense, Ui, vec2};
use lamina_scenario::Surface;

use crate::app::{Action, ExplorerApp};
use crate::document::DEMOS;
use crate::export::PointSet;
use crate::results::{AxisLabels, CloudAxis, RunState};
use crate::views::cloud::{CloudView, ColourBy};
use crate::views::series;
use crate::views::space::{PlaneGeometry, SpaceColours, SpaceScene};
use crate::widgets::unit_suffix;

/// The views that can be exported.
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
        }
    }
}

const MAIN_VIEWS: [ViewKind; 4] = [
    ViewKind::Trajectory,
    ViewKind::Cut,
    ViewKind::Strobe,
    ViewKind::Orbit,
];

/// Per-frame layout state that is not persisted.
#[derive(Default)]
pub struct Layout {
    /// A PNG export being drawn and written on a helper thread: its outcome.
    pub png_export: Option<std::sync::mpsc::Receiver<Result<String, String>>>,
    /// The cut view's state.
    pub cut_view: CloudView,
    /// The strobe view's state.
    pub strobe_view: CloudView,
    /// Axes of the cut view chosen in the view (None: from the scenario).
    pub cut_axes: Option<[CloudAxis; 2]>,
    /// Axes of the strobe view chosen in the view (None: from the scenario).
    pub strobe_axes: Option<[CloudAxis; 2]>,
}

/// The cut view's axes from the scenario; a coordinate that is constant on a plane cut
/// (the plane's normal is that one state) is replaced by the return time.
fn default_cut_axes(app: &ExplorerApp) -> Option<[CloudAxis; 2]> {
    let [a, b] = app.doc.scenario.cut_axes()?;
    let fixed = app.doc.scenario.cut_fixed_state();
    Some(if fixed == Some(b) {
        [CloudAxis::State(a), CloudAxis::ReturnTime]
    } else if fixed == Some(a) {
        [CloudAxis::State(b), CloudAxis::ReturnTime]
    } else {
        [CloudAxis::State(a), CloudAxis::State(b)]
    })
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
pub fn menu_bar(app: &mut ExplorerApp, ui: &mut Ui, actions: &mut Vec<Action>) {
    egui::Panel::top("menu_bar").show(ui, |ui| {
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                if ui
                    .button("New")
                    .on_hover_text("Start a new scenario (Ctrl+N)")
                    .clicked()
                {
                    actions.push(Action::New);
                }
                if ui
                    .button("Open…")
                    .on_hover_text("Open a scenario file (Ctrl+O)")
                    .clicked()
                {
                    actions.push(Action::Open);
                }
                ui.menu_button("Open recent", |ui| {
                    if app.settings.recent.is_empty() {
                        ui.label("no recent files");
                    }
                    for path in app.settings.recent.clone() {
                        if ui.button(path.display().to_string()).clicked() {
                            actions.push(Action::OpenPath(path));
                        }
                    }
                });
                ui.menu_button("Demo scenarios", |ui| {
                    for (name, _) in DEMOS {
                        if ui.button(*name).clicked() {
                            actions.push(Action::LoadDemo(name));
                        }
                    }
                });
                ui.separator();
                if ui
                    .button("Save")
                    .on_hover_text("Save the scenario (Ctrl+S)")
                    .clicked()
                {
                    actions.push(Action::Save);
                }
                if ui
                    .button("Save as…")
                    .on_hover_text("Save under a new name (Ctrl+Shift+S)")
                    .clicked()
                {
                    actions.push(Action::SaveAs);
                }
                ui.separator();
                ui.menu_button("Export CSV", |ui| {
                    for (set, text) in [
                        (PointSet::Cut, "Cut points"),
                        (PointSet::Strobe, "Strobe samples"),
                        (PointSet::Trajectory, "Trajectory"),
                        (PointSet::Sweep, "Sweep (orbit diagram)"),
                    ] {
                        if ui.button(text).clicked() {
                            actions.push(Action::ExportCsv(set));
                        }
                    }
                });
                ui.menu_button("Export PNG", |ui| {
                    ui.horizontal(|ui| {
                        ui.label("size");
                        ui.add(
                            egui::DragValue::new(&mut app.settings.png_size[0])
                                .range(16..=8000)
                                .suffix(" px"),
                        );
                        ui.label("×");
                        ui.add(
                            egui::DragValue::new(&mut app.settings.png_size[1])
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
                        ViewKind::Orbit,
                    ] {
                        if ui.button(view.title()).clicked() {
                            actions.push(Action::ExportPng(view));
                        }
                    }
                });
            });
            ui.menu_button("Run", |ui| {
                if ui.button("Run from the start   F5").clicked() {
                    actions.push(Action::Run);
                }
                if ui.button("Stop   Esc").clicked() {
                    actions.push(Action::Stop);
                }
                if ui.button("Run on   F6").on_hover_text(RUN_ON_TIP).clicked() {
                    actions.push(Action::RunOn);
                }
            });
            ui.menu_button("Help", |ui| {
                if ui.button("Keyboard shortcuts   F1").clicked() {
                    app.show_shortcuts = true;
                }
                if ui.button("About Lamina").clicked() {
                    app.show_about = true;
                }
            });
            ui.separator();
            run_buttons(app, ui, actions);
            ui.separator();
            ui.toggle_value(&mut app.show_analysis, "Analysis")
                .on_hover_text(
                    "Periodic orbit (Floquet multipliers) and Lyapunov exponents of the scenario",
                );
        });
    });
}

/// What "Run on" does.
const RUN_ON_TIP: &str =
    "Run on: integrate another span from where the run ended, keeping what it found (F6)";

fn run_buttons(app: &mut ExplorerApp, ui: &mut Ui, actions: &mut Vec<Action>) {
    let running = app.is_running();
    let error = app
        .doc
        .first_error()
        .map(|p| format!("{}: {}", p.field, p.message));
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
        actions.push(Action::Run);
    }
    if ui
        .add_enabled(running, egui::Button::new("Stop"))
        .on_hover_text("Stop the run (Esc)")
        .clicked()
    {
        actions.push(Action::Stop);
    }
    let can_run_on = !running && app.results.run.is_some();
    if ui
        .add_enabled(can_run_on, egui::Button::new("Run on"))
        .on_hover_text(RUN_ON_TIP)
        .clicked()
    {
        actions.push(Action::RunOn);
    }
    if let Some(reason) = error {
        let first_line = reason.lines().next().unwrap_or("").to_string();
        ui.label(
            RichText::new(format!("Run is off: {first_line}")).color(crate::widgets::ERROR_COLOUR),
        );
    } else if app.execution.stale && !running {
        ui.label(
            RichText::new("model changed — press Run to see it")
                .color(crate::widgets::WARNING_COLOUR),
        );
    }
}

/// The status line: run state, points, steps, times.
pub fn status_bar(app: &ExplorerApp, ui: &mut Ui) {
    egui::Panel::bottom("status_bar").show(ui, |ui| {
        ui.horizontal(|ui| {
            let r = &app.results;
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
            };
            ui.label(RichText::new(text).color(colour).strong());
            ui.separator();
            ui.label(format!("{} cut points", r.cut.len()));
            ui.separator();
            ui.label(format!("{} strobe samples", r.strobe.len()));
            ui.separator();
            ui.label(format!("{} steps", r.n_steps));
            ui.separator();
            let time_unit = unit_suffix(app.doc.scenario.time.unit.as_deref());
            ui.label(format!("t = {:.6}{time_unit}", r.t_reached));
            ui.separator();
            ui.label(format!("{:.2} s", r.elapsed.as_secs_f64()));
        });
    });
}

/// The return-time sequence, the first-return map and the message log.
pub fn lower_views(app: &mut ExplorerApp, ui: &mut Ui) {
    egui::Panel::bottom("lower_views")
        .resizable(true)
        .default_size(200.0)
        .min_size(120.0)
        .show(ui, |ui| {
            let width = ui.available_width();
            let height = ui.available_height();
            ui.horizontal(|ui| {
                let third = (width - 16.0) / 3.0;
                let source_is_cut = !app.results.cut.is_empty() || app.results.strobe.is_empty();
                ui.allocate_ui_with_layout(
                    vec2(third, height),
                    egui::Layout::top_down(egui::Align::Min),
                    |ui| {
                        ui.label(
                            RichText::new(if source_is_cut {
                                "Return times (cut)"
                            } else {
                                "Sample spacing (strobe)"
                            })
                            .small()
                            .strong(),
                        );
                        let cloud = if source_is_cut {
                            &app.results.cut
                        } else {
                            &app.results.strobe
                        };
                        let source = if source_is_cut { "cut" } else { "strobe" };
                        let unit = app.doc.scenario.time.unit.as_deref();
                        let label = unit.map_or(source.to_owned(), |u| format!("{source}, {u}"));
                        series::return_times_ui(ui, cloud, &label);
                    },
                );
                ui.separator();
                ui.allocate_ui_with_layout(
                    vec2(third, height),
                    egui::Layout::top_down(egui::Align::Min),
                    |ui| {
                        ui.label(RichText::new("First-return map").small().strong());
                        let cloud = if source_is_cut {
                            &app.results.cut
                        } else {
                            &app.results.strobe
                        };
                        series::first_return_map_ui(
                            ui,
                            cloud,
                            &app.axis_labels(),
                            &mut app.settings.map_coordinate,
                        );
                    },
                );
                ui.separator();
                ui.allocate_ui_with_layout(
                    vec2(third, height),
                    egui::Layout::top_down(egui::Align::Min),
                    |ui| {
                        ui.label(RichText::new("Messages").small().strong());
                        egui::ScrollArea::vertical()
                            .stick_to_bottom(true)
                            .auto_shrink([false, false])
                            .show(ui, |ui| {
                                let start = app.log.first().map(|(t, _)| *t);
                                for (t, line) in &app.log {
                                    let secs =
                                        start.map_or(0.0, |s| t.duration_since(s).as_secs_f64());
                                    ui.label(
                                        RichText::new(format!("{secs:7.1} s  {line}"))
                                            .monospace()
                                            .small(),
                                    );
                                }
                            });
                    },
                );
            });
        });
}

/// The plane of the scenario's cut as seen in the 3D view's coordinates, with the part of the
/// offset owed to states that are not shown (taken at their mean along the trajectory).
fn plane_in_view(app: &ExplorerApp) -> Option<(PlaneGeometry, f64)> {
    let cut = app.doc.scenario.cut.as_ref()?;
    let Surface::Plane { normal, offset } = &cut.surface else {
        return None;
    };
    let names = &app.results.names;
    let axes = app.settings.space.axes;
    let weight = |idx: usize| {
        names
            .get(idx)
            .and_then(|n| normal.0.iter().find(|(m, _)| m == n))
            .map_or(0.0, |(_, w)| *w)
    };
    let traj = &app.results.trajectory;
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

/// Narrowest a main view is laid out side by side with the others; below this the four views
/// of a sweep go into two rows of two.
const MIN_TILE_WIDTH: f32 = 330.0;

/// The main views side by side (or, when four would be too narrow, in two rows of two),
/// resizable, each with an enlarge button.
pub fn main_views(app: &mut ExplorerApp, ui: &mut Ui, actions: &mut Vec<Action>) {
    egui::CentralPanel::default().show(ui, |ui| {
        let full = ui.available_rect_before_wrap();
        let shown: Vec<usize> = match app.settings.maximised {
            Some(m) if m < 4 => vec![m],
            _ if app.doc.scenario.sweep.is_some() || !app.sweep.columns.is_empty() => {
                vec![0, 1, 2, 3]
            }
            _ => vec![0, 1, 2],
        };
        let gap = 8.0;
        let rows: Vec<&[usize]> = if shown.len() == 4 && full.width() / 4.0 < MIN_TILE_WIDTH {
            vec![&shown[..2], &shown[2..]]
        } else {
            vec![&shown[..]]
        };
        let row_height = (full.height() - gap * (rows.len() as f32 - 1.0)) / rows.len() as f32;
        let mut rects = Vec::new();
        for (r, row) in rows.iter().enumerate() {
            let top = full.top() + r as f32 * (row_height + gap);
            let band =
                Rect::from_min_size(egui::pos2(full.left(), top), vec2(full.width(), row_height));
            rects.extend(row_ui(app, ui, row, band, gap));
        }
        for (i, rect) in rects {
            let mut tile = ui.new_child(egui::UiBuilder::new().max_rect(rect).id_salt(("tile", i)));
            tile.set_clip_rect(rect);
            tile_ui(app, &mut tile, MAIN_VIEWS[i], i, actions);
        }
    });
    app.drain_png_export();
}

/// Lays the views `row` out across `band` by their weights, with a draggable splitter between
/// neighbours; returns each view's rectangle.
fn row_ui(
    app: &mut ExplorerApp,
    ui: &mut Ui,
    row: &[usize],
    band: Rect,
    gap: f32,
) -> Vec<(usize, Rect)> {
    let total_weight: f32 = row
        .iter()
        .map(|&i| app.settings.tile_weights[i].max(0.05))
        .sum();
    let usable = band.width() - gap * (row.len() as f32 - 1.0);
    let mut x = band.left();
    let mut rects = Vec::new();
    for &i in row {
        let w = usable * app.settings.tile_weights[i].max(0.05) / total_weight;
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
                app.settings.tile_weights[a] + dx,
                app.settings.tile_weights[b] - dx,
            );
            if wa > 0.15 && wb > 0.15 {
                app.settings.tile_weights[a] = wa;
                app.settings.tile_weights[b] = wb;
            }
        }
    }
    rects
}

fn tile_ui(
    app: &mut ExplorerApp,
    ui: &mut Ui,
    kind: ViewKind,
    index: usize,
    actions: &mut Vec<Action>,
) {
    ui.horizontal(|ui| {
        ui.add(egui::Label::new(RichText::new(kind.title()).strong()).truncate());
        ui.with_layout(egui::Layout::right_to_left(egui::Align::Center), |ui| {
            let maximised = app.settings.maximised == Some(index);
            if ui
                .small_button(if maximised { "restore" } else { "enlarge" })
                .on_hover_text(if maximised {
                    "Back to all the views"
                } else {
                    "Fill the window with this view"
                })
                .clicked()
            {
                app.settings.maximised = if maximised { None } else { Some(index) };
            }
            if ui
                .small_button("PNG")
                .on_hover_text("Export this view as a PNG at the size set in File ▸ Export PNG")
                .clicked()
            {
                actions.push(Action::ExportPng(kind));
            }
            let colour = match kind {
                ViewKind::Cut => Some(&mut app.settings.cut_colour),
                ViewKind::Strobe => Some(&mut app.settings.strobe_colour),
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
        });
    });
    match kind {
        ViewKind::Trajectory => {
            let plane = plane_in_view(app);
            let colours = SpaceColours {
                background: Color32::from_rgb(18, 22, 30),
                trajectory: Color32::from_rgb(150, 200, 230),
                surface: Color32::from_rgba_unmultiplied(236, 150, 70, 48),
                cut_points: Color32::from_rgb(250, 210, 120),
            };
            let orbit: Vec<(f64, Vec<f64>)> = app
                .analysis
                .orbit_path
                .iter()
                .map(|p| (p.t, p.state.clone()))
                .collect();
            let labels = app.axis_labels();
            let scene = SpaceScene {
                labels: &labels,
                trajectory: &app.results.trajectory,
                cut_points: &app.results.cut,
                plane: plane.as_ref().map(|(p, _)| p),
                colours: &colours,
                period: app.results.strobe_period,
                orbit: &orbit,
            };
            let response = app.settings.space.ui(ui, &scene);
            if let (Some(new_offset), Some((_, hidden))) = (response.new_offset, plane)
                && let Some(cut) = &mut app.doc.scenario.cut
                && let Surface::Plane { offset, .. } = &mut cut.surface
            {
                *offset = new_offset + hidden;
                app.doc.changed();
                app.reslice_now_or_later();
            }
        }
        ViewKind::Cut | ViewKind::Strobe => {
            let scenario_axes = if kind == ViewKind::Cut {
                app.cut_axes()
            } else {
                app.strobe_axes()
            };
            let picker_id = if kind == ViewKind::Cut {
                "cut_axes_pick"
            } else {
                "strobe_axes_pick"
            };
            let labels = app.axis_labels();
            let axes = scenario_axes.map(|axes| {
                let picked = ui
                    .horizontal(|ui| cloud_axes_ui(ui, picker_id, &labels, axes))
                    .inner;
                if let Some(new) = picked {
                    app.choose_cloud_axes(kind, new);
                }
                picked.unwrap_or(axes)
            });
            let marks = orbit_marks(app, kind, axes);
            let (cloud, colour, view) = if kind == ViewKind::Cut {
                (
                    &app.results.cut,
                    app.settings.cut_colour,
                    &mut app.layout.cut_view,
                )
            } else {
                (
                    &app.results.strobe,
                    app.settings.strobe_colour,
                    &mut app.layout.strobe_view,
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
                    let text = cloud.readout(k, &app.results.names, &app.doc.scenario);
                    ui.label(RichText::new(&text).monospace().small());
                    if ui
                        .small_button("copy")
                        .on_hover_text("Copy this point's values to the clipboard")
                        .clicked()
                    {
                        ui.ctx().copy_text(text);
                    }
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
        ViewKind::Orbit => {
            app.orbit_tile_ui(ui);
        }
        ViewKind::ReturnTimes | ViewKind::ReturnMap => {}
    }
}

impl ExplorerApp {
    /// The axes of the cut view: as picked, else from the scenario.
    pub(crate) fn cut_axes(&self) -> Option<[CloudAxis; 2]> {
        self.layout.cut_axes.or_else(|| default_cut_axes(self))
    }

    /// The axes of the strobe view: as picked, else from the scenario.
    pub(crate) fn strobe_axes(&self) -> Option<[CloudAxis; 2]> {
        self.layout.strobe_axes.or_else(|| {
            self.doc
                .scenario
                .strobe_axes()
                .map(|[a, b]| [CloudAxis::State(a), CloudAxis::State(b)])
        })
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
            ViewKind::Cut => self.layout.cut_axes = Some(axes),
            _ => self.layout.strobe_axes = Some(axes),
        }
    }
}

/// The found orbit's points, marked in the cloud view of its map.
fn orbit_marks(
    app: &ExplorerApp,
    kind: ViewKind,
    axes: Option<[CloudAxis; 2]>,
) -> Vec<crate::views::cloud::Mark> {
    let (Some(Ok(report)), Some(axes)) = (&app.analysis.cycle, axes) else {
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
