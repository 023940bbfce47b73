//! The model panel: states, parameters (with sliders), integrator, time window, cut and
//! strobe, each field checked as it is typed with the message shown in place. It edits a
//! copy of the document; the edit reaches the session as a command after drawing.

use egui::{ComboBox, Id, RichText, Ui};
use lamina_scenario::{
    Cut, Direction, MethodChoice, Parameter, Scenario, State, Strobe, Surface, Weights,
};

use crate::document::{Document, rename_everywhere};
use crate::vocabulary::PanelChanges;
use crate::widgets::{
    ERROR_COLOUR, name_for_readers, number_field_ui, problems_ui, unit_field_ui, unit_suffix,
};

/// Draws the whole panel for `doc`, a copy of the session's document: the caller hands the
/// edited scenario to the session as a command when anything changed.
/// `open_notes` unfolds the notes (on opening a demo, whose notes say what to look at).
pub fn model_panel_ui(ui: &mut Ui, doc: &mut Document, open_notes: bool) -> PanelChanges {
    let mut changes = PanelChanges::default();
    // the scroll bar takes its width from the right
    let right = ui.max_rect().right() - ui.spacing().scroll.bar_width;
    ui.data_mut(|d| d.insert_temp(panel_right_id(), right));
    egui::ScrollArea::vertical()
        .auto_shrink([false, false])
        .show(ui, |ui| {
            ui.horizontal(|ui| {
                let label = ui.label("Title");
                if ui
                    .add(
                        egui::TextEdit::singleline(&mut doc.scenario.title)
                            .desired_width(f32::INFINITY),
                    )
                    .labelled_by(label.id)
                    .changed()
                {
                    changes.view = true;
                }
            });
            egui::CollapsingHeader::new(RichText::new("Notes").strong())
                .default_open(false)
                .open(open_notes.then_some(true))
                .show(ui, |ui| {
                    let label = ui.label(RichText::new("what this scenario is about").weak());
                    if ui
                        .add(
                            // less than the room: the field's frame is drawn outside
                            // its width, and the panel would widen to it every frame
                            egui::TextEdit::multiline(&mut doc.scenario.notes)
                                .desired_width(ui.available_width() - 12.0)
                                .desired_rows(6),
                        )
                        .labelled_by(label.id)
                        .changed()
                    {
                        changes.view = true;
                    }
                });
            egui::CollapsingHeader::new(RichText::new("States").strong())
                .default_open(true)
                .show(ui, |ui| states_ui(ui, doc, &mut changes));
            egui::CollapsingHeader::new(RichText::new("Parameters").strong())
                .default_open(true)
                .show(ui, |ui| parameters_ui(ui, doc, &mut changes));
            egui::CollapsingHeader::new(RichText::new("Integrator and time").strong())
                .default_open(true)
                .show(ui, |ui| integrator_ui(ui, doc, &mut changes));
            egui::CollapsingHeader::new(RichText::new("Cut (Poincaré section)").strong())
                .default_open(true)
                .show(ui, |ui| cut_ui(ui, doc, &mut changes));
            egui::CollapsingHeader::new(RichText::new("Strobe (time-T map)").strong())
                .default_open(true)
                .show(ui, |ui| strobe_ui(ui, doc, &mut changes));
            egui::CollapsingHeader::new(RichText::new("Sweep (orbit diagram)").strong())
                .default_open(false)
                .show(ui, |ui| {
                    crate::sweep_panel::sweep_section_ui(ui, doc, &mut changes)
                });
            egui::CollapsingHeader::new(RichText::new("Regime map (two parameters)").strong())
                .default_open(
                    doc.problems_at("map.x").next().is_some()
                        || doc.problems_at("map.y").next().is_some(),
                )
                .show(ui, |ui| {
                    crate::map_panel::map_section_ui(ui, doc, &mut changes)
                });
        });
    changes
}

fn state_names(scenario: &Scenario) -> Vec<String> {
    scenario.states.iter().map(|s| s.name.clone()).collect()
}

/// A name field that renames everywhere when editing ends, if the new name is free and valid.
fn name_field_ui(
    ui: &mut Ui,
    id: Id,
    current: &str,
    scenario: &Scenario,
    what: &str,
) -> Option<String> {
    let buffer_id = id.with("buffer");
    let mut text: String = ui
        .data_mut(|d| d.get_temp(buffer_id))
        .unwrap_or_else(|| current.to_string());
    let response = ui.add(
        egui::TextEdit::singleline(&mut text)
            .id(id)
            .desired_width(56.0),
    );
    name_for_readers(ui, &response, &format!("name of {what} {current}"));
    if ui
        .data_mut(|d| d.remove_temp::<bool>(id.with("focus_when_drawn")))
        .is_some()
    {
        response.request_focus();
        // the whole name selected, so typing replaces it
        if let Some(mut state) = egui::TextEdit::load_state(ui.ctx(), id) {
            let all = egui::text::CCursorRange::two(
                egui::text::CCursor::new(0),
                egui::text::CCursor::new(text.chars().count()),
            );
            state.cursor.set_char_range(Some(all));
            state.store(ui.ctx(), id);
        }
    }
    let taken = text != current
        && (scenario.states.iter().any(|s| s.name == text)
            || scenario.parameters.iter().any(|p| p.name == text));
    let valid =
        lamina_scenario::is_identifier(&text) && !lamina_core::expr::is_reserved(&text) && !taken;
    if response.has_focus() || response.changed() {
        ui.data_mut(|d| d.insert_temp(buffer_id, text.clone()));
    }
    if !valid && text != current {
        let why = if taken {
            "name already used"
        } else {
            "not a usable name"
        };
        response.clone().on_hover_text(why);
        ui.painter().rect_stroke(
            response.rect,
            2.0,
            egui::Stroke::new(1.0, ERROR_COLOUR),
            egui::StrokeKind::Outside,
        );
    }
    if response.lost_focus() {
        ui.data_mut(|d| d.remove::<String>(buffer_id));
        if valid && text != current {
            return Some(text);
        }
    }
    None
}

fn states_ui(ui: &mut Ui, doc: &mut Document, changes: &mut PanelChanges) {
    let mut remove = None;
    let mut rename = None;
    let n_states = doc.scenario.states.len();
    egui::Grid::new("states_grid")
        .num_columns(5)
        .spacing([6.0, 4.0])
        .show(ui, |ui| {
            ui.label(RichText::new("name").weak());
            ui.label(RichText::new("start").weak());
            ui.label(RichText::new("unit").weak());
            ui.label(RichText::new("rate").weak());
            ui.end_row();
            for idx in 0..n_states {
                let name = doc.scenario.states[idx].name.clone();
                if let Some(new) = name_field_ui(
                    ui,
                    Id::unique(("state_name", idx)),
                    &name,
                    &doc.scenario,
                    "state",
                ) {
                    rename = Some((name.clone(), new));
                }
                let start = &mut doc.scenario.states[idx].start;
                if number_field_ui(ui, Id::unique(("state_start", idx)), start, 64.0)
                    .on_hover_text(format!("Value of {name} at the start time"))
                    .changed()
                {
                    changes.model = true;
                }
                changes.view |= unit_field_ui(
                    ui,
                    &mut doc.scenario.states[idx].unit,
                    &format!("Unit of {name}, shown beside its values and on axes (free text)"),
                );
                ui.horizontal(|ui| {
                    let label = ui.label(format!("d{name}/dt ="));
                    let state = &mut doc.scenario.states[idx];
                    // as wide as the panel allows (the menu button after it keeps its room),
                    // so the panel's width is the user's, not the longest rate's
                    let edit = egui::TextEdit::singleline(&mut state.rate)
                        .desired_width(room_to_panel_edge(ui, 40.0))
                        .code_editor();
                    if ui
                        .add(edit)
                        .labelled_by(label.id)
                        .on_hover_text(
                            "Rate of change: ordinary math in states, parameters, t, pi, e",
                        )
                        .changed()
                    {
                        changes.model = true;
                    }
                    if n_states > 1 && row_menu_ui(ui, "state", &name, &doc.scenario) {
                        remove = Some(idx);
                    }
                });
                ui.end_row();
                let field = format!("states[{idx}]");
                if doc.problems_at(&field).next().is_some() {
                    ui.label("");
                    ui.label("");
                    ui.label("");
                    ui.vertical(|ui| problems_ui(ui, doc.problems_at(&field)));
                    ui.end_row();
                }
            }
        });
    if ui
        .button("+ state")
        .on_hover_text("Add a state variable")
        .clicked()
    {
        let name = free_name(&doc.scenario, "s");
        focus_new_name(ui, Id::unique(("state_name", doc.scenario.states.len())));
        doc.scenario.states.push(State {
            name,
            start: 0.0,
            rate: "0".into(),
            unit: None,
        });
        changes.model = true;
    }
    if let Some(idx) = remove {
        let name = doc.scenario.states.remove(idx).name;
        if let Some(cut) = &mut doc.scenario.cut
            && let Surface::Plane { normal, .. } = &mut cut.surface
        {
            normal.0.retain(|(n, _)| *n != name);
        }
        changes.model = true;
    }
    if let Some((old, new)) = rename {
        rename_everywhere(&mut doc.scenario, &old, &new);
        changes.model = true;
    }
}

/// Whether `expression` uses the name `name` (as a whole word).
fn uses_name(expression: &str, name: &str) -> bool {
    crate::document::rename_in_expression(expression, name, "\u{1}") != expression
}

/// Where the model panel's right edge was when its drawing began.
fn panel_right_id() -> Id {
    Id::unique("model_panel_right_edge")
}

/// The width from the cursor to the panel's right edge, less `keep` for what follows:
/// measured against the edge as it was before the content was laid out (a width taken from
/// the room the content itself makes would grow the panel a little every frame).
fn room_to_panel_edge(ui: &Ui, keep: f32) -> f32 {
    let right = ui
        .data(|d| d.get_temp::<f32>(panel_right_id()))
        .unwrap_or(ui.cursor().min.x + 200.0);
    (right - ui.cursor().min.x - keep).clamp(90.0, 600.0)
}

/// A row's menu ("…") with Remove in it; true when Remove was chosen. Remove sits in a
/// menu, not on a button of its own, so the row that slides up under the pointer after a
/// removal is not removed by the next click.
fn row_menu_ui(ui: &mut Ui, what: &str, name: &str, scenario: &Scenario) -> bool {
    let mut remove = false;
    let users: Vec<String> = scenario
        .states
        .iter()
        .filter(|s| s.name != name && uses_name(&s.rate, name))
        .map(|s| format!("d{}/dt", s.name))
        .collect();
    let tip = if users.is_empty() {
        "Edit ▸ Undo (Ctrl+Z) brings it back".to_string()
    } else {
        format!(
            "{name} is used in {}: they will show an error until it is replaced or brought \
             back with Edit ▸ Undo (Ctrl+Z)",
            users.join(", ")
        )
    };
    let response = ui
        .menu_button("…", |ui| {
            if ui
                .button(format!("Remove {what} {name}"))
                .on_hover_text(tip)
                .clicked()
            {
                remove = true;
                ui.close();
            }
        })
        .response;
    let named = format!("Remove {what} {name}…");
    response.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, &named));
    response.on_hover_text(named);
    remove
}

/// Asks for the keyboard on the name field `id` when it is next drawn (a row just added).
fn focus_new_name(ui: &Ui, id: Id) {
    ui.data_mut(|d| d.insert_temp(id.with("focus_when_drawn"), true));
}

fn free_name(scenario: &Scenario, stem: &str) -> String {
    (1..)
        .map(|k| format!("{stem}{k}"))
        .find(|n| {
            !scenario.states.iter().any(|s| &s.name == n)
                && !scenario.parameters.iter().any(|p| &p.name == n)
        })
        .unwrap_or_else(|| stem.to_string())
}

fn parameters_ui(ui: &mut Ui, doc: &mut Document, changes: &mut PanelChanges) {
    let mut remove = None;
    let mut rename = None;
    let n = doc.scenario.parameters.len();
    for idx in 0..n {
        let name = doc.scenario.parameters[idx].name.clone();
        ui.horizontal(|ui| {
            if let Some(new) = name_field_ui(
                ui,
                Id::unique(("parameter_name", idx)),
                &name,
                &doc.scenario,
                "parameter",
            ) {
                rename = Some((name.clone(), new));
            }
            let label = ui.label("=");
            let p = &mut doc.scenario.parameters[idx];
            let (lo, hi) = p.range;
            if lo < hi {
                let slider = egui::Slider::new(&mut p.value, lo..=hi)
                    .clamping(egui::SliderClamping::Never)
                    .suffix(unit_suffix(p.unit.as_deref()));
                let response = ui
                    .add(slider)
                    .labelled_by(label.id)
                    .on_hover_text(format!("Value of {name}; drag to explore, the run follows"));
                if response.changed() {
                    changes.slider = true;
                }
                if response.dragged() {
                    changes.slider_held = true;
                }
            } else if number_field_ui(ui, Id::unique(("parameter_value", idx)), &mut p.value, 80.0)
                .labelled_by(label.id)
                .changed()
            {
                changes.model = true;
            }
            if row_menu_ui(ui, "parameter", &name, &doc.scenario) {
                remove = Some(idx);
            }
        });
        ui.horizontal(|ui| {
            ui.add_space(62.0);
            ui.label(RichText::new("range").weak());
            let p = &mut doc.scenario.parameters[idx];
            let lo = number_field_ui(ui, Id::unique(("parameter_lo", idx)), &mut p.range.0, 56.0)
                .on_hover_text("Slider minimum");
            ui.label("…");
            let hi = number_field_ui(ui, Id::unique(("parameter_hi", idx)), &mut p.range.1, 56.0)
                .on_hover_text("Slider maximum");
            if lo.changed() || hi.changed() {
                changes.view = true;
            }
            changes.view |= unit_field_ui(
                ui,
                &mut p.unit,
                &format!(
                    "Unit of {name}, shown beside its value, on axes and in captions (free text)"
                ),
            );
        });
        problems_ui(ui, doc.problems_at(&format!("parameters[{idx}]")));
    }
    if ui
        .button("+ parameter")
        .on_hover_text("Add a named parameter")
        .clicked()
    {
        let name = free_name(&doc.scenario, "p");
        focus_new_name(
            ui,
            Id::unique(("parameter_name", doc.scenario.parameters.len())),
        );
        doc.scenario.parameters.push(Parameter {
            name,
            value: 1.0,
            range: (0.0, 2.0),
            unit: None,
        });
        changes.model = true;
    }
    if let Some(idx) = remove {
        doc.scenario.parameters.remove(idx);
        changes.model = true;
    }
    if let Some((old, new)) = rename {
        rename_everywhere(&mut doc.scenario, &old, &new);
        changes.model = true;
    }
}

fn integrator_ui(ui: &mut Ui, doc: &mut Document, changes: &mut PanelChanges) {
    let s = &mut doc.scenario;
    egui::Grid::new("integrator_grid").num_columns(2).spacing([8.0, 4.0]).show(ui, |ui| {
        let label = ui.label("method");
        let before = s.integrator.method;
        ComboBox::from_id_salt("method")
            .selected_text(method_label(s.integrator.method))
            .show_ui(ui, |ui| {
                for m in [MethodChoice::Automatic, MethodChoice::Dp853, MethodChoice::Dp5, MethodChoice::Stiff] {
                    ui.selectable_value(&mut s.integrator.method, m, method_label(m));
                }
            })
            .response
            .labelled_by(label.id)
            .on_hover_text("automatic starts with the explicit Dormand–Prince 8(5,3) and changes to the stiff Rodas4 where the model turns stiff (and back); stiff uses Rodas4 throughout");
        if s.integrator.method != before {
            changes.model = true;
        }
        ui.end_row();
        let time_unit = s.time.unit.clone().filter(|u| !u.trim().is_empty());
        let unit_label = |ui: &mut Ui| {
            if let Some(unit) = &time_unit {
                ui.label(unit);
            }
        };
        ui.label("rtol").on_hover_text(RTOL_TIP);
        changes.model |= number_field_ui(ui, Id::unique("rtol"), &mut s.integrator.rtol, 80.0).on_hover_text(RTOL_TIP).changed();
        ui.end_row();
        ui.label("atol").on_hover_text(ATOL_TIP);
        changes.model |= number_field_ui(ui, Id::unique("atol"), &mut s.integrator.atol, 80.0).on_hover_text(ATOL_TIP).changed();
        ui.end_row();
        ui.label("max step").on_hover_text(MAX_STEP_TIP);
        ui.horizontal(|ui| {
            let mut limited = s.integrator.max_step.is_some();
            if ui.checkbox(&mut limited, "").on_hover_text(MAX_STEP_TIP).changed() {
                s.integrator.max_step = limited.then_some(0.1);
                changes.model = true;
            }
            if let Some(max) = &mut s.integrator.max_step {
                changes.model |= number_field_ui(ui, Id::unique("max_step"), max, 64.0).on_hover_text(MAX_STEP_TIP).changed();
                unit_label(ui);
            }
        });
        ui.end_row();
        ui.label("start time");
        ui.horizontal(|ui| {
            changes.model |= number_field_ui(ui, Id::unique("t_start"), &mut s.time.start, 80.0).on_hover_text("Time at the start state (where the rates' t begins)").changed();
            unit_label(ui);
        });
        ui.end_row();
        ui.label("settle").on_hover_text(SETTLE_TIP);
        ui.horizontal(|ui| {
            changes.model |= number_field_ui(ui, Id::unique("settle"), &mut s.time.settle, 80.0)
                .on_hover_text(SETTLE_TIP)
                .changed();
            unit_label(ui);
        });
        ui.end_row();
        ui.label("span").on_hover_text(SPAN_TIP);
        ui.horizontal(|ui| {
            changes.model |= number_field_ui(ui, Id::unique("span"), &mut s.time.span, 80.0).on_hover_text(SPAN_TIP).changed();
            unit_label(ui);
        });
        ui.end_row();
        ui.label("most points").on_hover_text(MAX_POINTS_TIP);
        changes.model |= ui
            .add(egui::DragValue::new(&mut s.limits.max_points).range(1..=100_000_000))
            .on_hover_text(MAX_POINTS_TIP)
            .changed();
        ui.end_row();
        ui.label("escape size").on_hover_text(ESCAPE_TIP);
        changes.model |= number_field_ui(ui, Id::unique("escape"), &mut s.limits.escape, 80.0)
            .on_hover_text(ESCAPE_TIP)
            .changed();
        ui.end_row();
        ui.label("time unit");
        changes.view |= unit_field_ui(ui, &mut s.time.unit, "Unit of time, shown beside times, on axes and in captions (free text)");
        ui.end_row();
    });
    problems_ui(
        ui,
        doc.problems_at("integrator")
            .chain(doc.problems_at("time"))
            .chain(doc.problems_at("limits")),
    );
}

/// What rtol means.
const RTOL_TIP: &str = "Relative tolerance: the error each step may make, as a fraction of the \
    state's size (1e-9: about nine digits per step). Smaller is more accurate and slower";
/// What atol means.
const ATOL_TIP: &str = "Absolute tolerance: the error each step may make where a state is near \
    zero, in the state's own units. Set it well below the smallest size that matters";
/// What the step limit is for.
const MAX_STEP_TIP: &str = "Longest step the integrator may take, in the model's time. Set it \
    below the shortest feature of a drive (a pulse, a ramp) the steps could step over";
/// What the point limit does.
const MAX_POINTS_TIP: &str = "A run stops after this many cut points or strobe samples (it says \
    so in the log): a bound on memory for long spans";
/// What the escape size does.
const ESCAPE_TIP: &str = "A run stops as escaped when any state's magnitude passes this size: \
    the model is running away (unbounded), and the rest of the run would say nothing";
/// What settle means.
const SETTLE_TIP: &str = "Time integrated first and not recorded, so the start-up transient \
    dies out before cut points and strobe samples are kept";
/// What span means.
const SPAN_TIP: &str = "Length of the recorded window after settling: cut points and strobe \
    samples come from it (Run on adds another span)";

fn method_label(m: MethodChoice) -> &'static str {
    match m {
        MethodChoice::Automatic => "automatic (explicit / stiff)",
        MethodChoice::Dp5 => "Dormand–Prince 5(4)",
        MethodChoice::Dp853 => "Dormand–Prince 8(5,3)",
        MethodChoice::Stiff => "stiff (Rodas4)",
    }
}

/// The two axes a cloud view starts with (`what`: "cut" or "strobe").
fn axes_ui(
    ui: &mut Ui,
    id: &str,
    what: &str,
    names: &[String],
    axes: &mut (String, String),
) -> bool {
    let mut changed = false;
    ui.horizontal(|ui| {
        ui.label("axes");
        for (k, axis) in [&mut axes.0, &mut axes.1].into_iter().enumerate() {
            let response = ComboBox::from_id_salt((id, k))
                .selected_text(axis.as_str())
                .width(64.0)
                .show_ui(ui, |ui| {
                    for n in names {
                        changed |= ui.selectable_value(axis, n.clone(), n).changed();
                    }
                })
                .response;
            let which = if k == 0 { "horizontal" } else { "vertical" };
            name_for_readers(ui, &response, &format!("{which} axis of the {what} view"));
        }
    });
    changed
}

fn cut_ui(ui: &mut Ui, doc: &mut Document, changes: &mut PanelChanges) {
    let names = state_names(&doc.scenario);
    let mut enabled = doc.scenario.cut.is_some();
    if ui
        .checkbox(&mut enabled, "cut the flow")
        .on_hover_text("Record where the trajectory crosses a surface")
        .changed()
    {
        doc.scenario.cut = enabled.then(|| default_cut(&names));
        changes.cut = true;
    }
    let Some(cut) = &mut doc.scenario.cut else {
        return;
    };
    ui.horizontal(|ui| {
        let is_plane = matches!(cut.surface, Surface::Plane { .. });
        if ui
            .selectable_label(is_plane, "plane")
            .on_hover_text("sum of weight × state = offset")
            .clicked()
            && !is_plane
        {
            cut.surface = Surface::Plane {
                normal: Weights(vec![(
                    names.get(1).or(names.first()).cloned().unwrap_or_default(),
                    1.0,
                )]),
                offset: 0.0,
            };
            changes.cut = true;
        }
        if ui
            .selectable_label(!is_plane, "level surface")
            .on_hover_text("g(states, t) = 0 for an expression g")
            .clicked()
            && is_plane
        {
            cut.surface = Surface::Level(names.first().cloned().unwrap_or_default());
            changes.cut = true;
        }
    });
    match &mut cut.surface {
        Surface::Plane { normal, offset } => {
            ui.horizontal_wrapped(|ui| {
                for name in &names {
                    let mut w = normal
                        .0
                        .iter()
                        .find(|(n, _)| n == name)
                        .map_or(0.0, |(_, w)| *w);
                    ui.label(format!("{name} ×"));
                    if number_field_ui(ui, Id::unique(("normal", name.as_str())), &mut w, 40.0)
                        .on_hover_text(format!("Weight of {name} in the plane"))
                        .changed()
                    {
                        normal.0.retain(|(n, _)| n != name);
                        if w != 0.0 {
                            normal.0.push((name.clone(), w));
                        }
                        changes.cut = true;
                    }
                }
            });
            ui.horizontal(|ui| {
                let label = ui.label("= offset");
                let speed = (offset.abs() * 0.01).max(0.01);
                if ui
                    .add(egui::DragValue::new(offset).speed(speed))
                    .labelled_by(label.id)
                    .on_hover_text("Drag to move the plane along its normal; the cut points follow without a new run")
                    .changed()
                {
                    changes.cut = true;
                }
            });
        }
        Surface::Level(expr) => {
            ui.horizontal(|ui| {
                let label = ui.label("g =");
                changes.cut |= ui
                    .add(
                        egui::TextEdit::singleline(expr)
                            .desired_width(room_to_panel_edge(ui, 12.0))
                            .code_editor(),
                    )
                    .labelled_by(label.id)
                    .on_hover_text("The cut is where this expression is zero")
                    .changed();
            });
        }
    }
    ui.horizontal(|ui| {
        ui.label("direction").on_hover_text(
            "Which crossings of the cut are recorded: g is the plane's left side minus its \
             offset, or the level expression",
        );
        for (d, text, tip) in [
            (
                Direction::Rising,
                "rising",
                "count crossings where g goes from negative to positive",
            ),
            (
                Direction::Falling,
                "falling",
                "count crossings where g goes from positive to negative",
            ),
            (Direction::Both, "both", "count every crossing"),
        ] {
            if ui
                .selectable_label(cut.direction == d, text)
                .on_hover_text(tip)
                .clicked()
                && cut.direction != d
            {
                cut.direction = d;
                changes.cut = true;
            }
        }
    });
    changes.view |= axes_ui(ui, "cut_axes", "cut", &names, &mut cut.axes);
    problems_ui(ui, doc.problems_at("cut"));
}

fn default_cut(names: &[String]) -> Cut {
    let first = names.first().cloned().unwrap_or_default();
    let second = names.get(1).cloned().unwrap_or_else(|| first.clone());
    Cut {
        surface: Surface::Plane {
            normal: Weights(vec![(second.clone(), 1.0)]),
            offset: 0.0,
        },
        direction: Direction::Falling,
        axes: (first, second),
    }
}

fn strobe_ui(ui: &mut Ui, doc: &mut Document, changes: &mut PanelChanges) {
    let names = state_names(&doc.scenario);
    let mut enabled = doc.scenario.strobe.is_some();
    if ui
        .checkbox(&mut enabled, "sample at a fixed period")
        .on_hover_text("Record the state at first at + k × period")
        .changed()
    {
        let first = names.first().cloned().unwrap_or_default();
        let second = names.get(1).cloned().unwrap_or_else(|| first.clone());
        doc.scenario.strobe = enabled.then(|| Strobe {
            period: "1".into(),
            first_at: 0.0,
            axes: (first, second),
        });
        changes.strobe = true;
    }
    let time_unit = doc.scenario.time.unit.clone();
    let Some(strobe) = &mut doc.scenario.strobe else {
        return;
    };
    ui.horizontal(|ui| {
        let label = ui.label("period");
        changes.strobe |= ui
            .add(
                egui::TextEdit::singleline(&mut strobe.period)
                    .desired_width(120.0)
                    .code_editor(),
            )
            .labelled_by(label.id)
            .on_hover_text("An expression in parameters and constants, e.g. 2*pi/w")
            .changed();
        ui.label("first at");
        changes.strobe |= number_field_ui(
            ui,
            Id::unique("strobe_first_at"),
            &mut strobe.first_at,
            56.0,
        )
        .on_hover_text(
            "Time of sample 0 (the phase of the sampling); the samples are at first at + k × \
             period, only those in the recorded window are kept",
        )
        .changed();
        if let Some(unit) = time_unit.as_deref().filter(|u| !u.trim().is_empty()) {
            ui.label(unit);
        }
    });
    changes.view |= axes_ui(ui, "strobe_axes", "strobe", &names, &mut strobe.axes);
    problems_ui(ui, doc.problems_at("strobe"));
}
