//! The regime map in the window: its settings in the model panel (create, edit, remove the
//! map block, so a map naming a parameter the model no longer has can be fixed), and the
//! regime-map tile (run, stop, export, hover a cell for its values, click one to run the
//! model there). The job itself is in `session/map.rs`.

use egui::{RichText, Ui};
use lamina_scenario::{MapAxis, RegimeMap, Scenario, SweepSource};

use crate::document::Document;
use crate::session::Session;
use crate::views::regime_map::regime_map_ui;
use crate::vocabulary::{Command, JobKind, PanelChanges, PointSet, ViewKind};
use crate::widgets::{number_field_ui, parameter_choice_ui, problems_ui};

/// A map block over the scenario's first two parameters, each over its slider range, from
/// the strobe if the scenario has one, else the cut.
pub fn default_map(scenario: &Scenario) -> RegimeMap {
    let axis = |k: usize| {
        let p = scenario.parameters.get(k).or(scenario.parameters.first());
        MapAxis {
            parameter: p.map(|p| p.name.clone()).unwrap_or_default(),
            from: p.map_or(0.0, |p| p.range.0),
            to: p.map_or(1.0, |p| p.range.1),
            values: 16,
        }
    };
    RegimeMap {
        x: axis(0),
        y: axis(1),
        settle: 200.0,
        span: 200.0,
        source: if scenario.strobe.is_some() {
            SweepSource::Strobe
        } else {
            SweepSource::Cut
        },
    }
}

/// The map block's fields in the model panel.
pub fn map_section_ui(ui: &mut Ui, doc: &mut Document, changes: &mut PanelChanges) {
    let parameters: Vec<String> = doc
        .scenario
        .parameters
        .iter()
        .map(|p| p.name.clone())
        .collect();
    let mut enabled = doc.scenario.map.is_some();
    if ui
        .checkbox(&mut enabled, "map two parameters")
        .on_hover_text(
            "Run a grid of two parameters and colour each cell by what the model settles \
             into; unticking removes the map block",
        )
        .changed()
    {
        doc.scenario.map = enabled.then(|| default_map(&doc.scenario));
        changes.view = true;
    }
    let Some(map) = &mut doc.scenario.map else {
        return;
    };
    let mut changed = false;
    let units: Vec<(String, Option<String>)> = doc
        .scenario
        .parameters
        .iter()
        .map(|p| (p.name.clone(), p.unit.clone()))
        .collect();
    let unit_of = |name: &str| {
        units
            .iter()
            .find(|(n, _)| n == name)
            .and_then(|(_, u)| u.as_deref())
            .map(str::trim)
            .filter(|u| !u.is_empty())
            .map(str::to_string)
    };
    let ranges: Vec<(f64, f64)> = doc.scenario.parameters.iter().map(|p| p.range).collect();
    let time_unit = doc
        .scenario
        .time
        .unit
        .clone()
        .filter(|u| !u.trim().is_empty());
    egui::Grid::new("map_grid")
        .num_columns(2)
        .spacing([8.0, 4.0])
        .show(ui, |ui| {
            for (axis, name) in [(&mut map.x, "across"), (&mut map.y, "up")] {
                let label = ui.label(format!("parameter {name}"));
                changed |= parameter_choice_ui(
                    ui,
                    ("map_parameter", name),
                    label.id,
                    &mut axis.parameter,
                    (&parameters, &ranges),
                    (&mut axis.from, &mut axis.to),
                )
                .1;
                ui.end_row();
                ui.label("from … to");
                ui.horizontal(|ui| {
                    changed |= number_field_ui(
                        ui,
                        egui::Id::unique(("map_from", name)),
                        &mut axis.from,
                        64.0,
                    )
                    .on_hover_text("First value")
                    .changed();
                    ui.label("…");
                    changed |=
                        number_field_ui(ui, egui::Id::unique(("map_to", name)), &mut axis.to, 64.0)
                            .on_hover_text("Last value")
                            .changed();
                    if let Some(unit) = unit_of(&axis.parameter) {
                        ui.label(unit);
                    }
                });
                ui.end_row();
                ui.label("values");
                changed |= ui
                    .add(egui::DragValue::new(&mut axis.values).range(1..=2000))
                    .on_hover_text("Number of values, from and to included")
                    .changed();
                ui.end_row();
            }
            ui.label("settle per cell");
            ui.horizontal(|ui| {
                changed |=
                    number_field_ui(ui, egui::Id::unique("map_settle"), &mut map.settle, 64.0)
                        .on_hover_text(
                            "Time integrated at each cell before it is judged, so the \
                             transient dies out; not recorded",
                        )
                        .changed();
                if let Some(unit) = &time_unit {
                    ui.label(unit);
                }
            });
            ui.end_row();
            ui.label("span per cell");
            ui.horizontal(|ui| {
                changed |= number_field_ui(ui, egui::Id::unique("map_span"), &mut map.span, 64.0)
                    .on_hover_text(
                        "Time recorded at each cell after settling: its points decide the \
                         regime (periodic, quasi-periodic, chaotic...)",
                    )
                    .changed();
                if let Some(unit) = &time_unit {
                    ui.label(unit);
                }
            });
            ui.end_row();
            ui.label("judged by");
            ui.horizontal(|ui| {
                changed |= ui
                    .selectable_value(&mut map.source, SweepSource::Cut, "cut")
                    .on_hover_text("Classify each cell by its cut points")
                    .changed();
                changed |= ui
                    .selectable_value(&mut map.source, SweepSource::Strobe, "strobe")
                    .on_hover_text("Classify each cell by its strobe samples")
                    .changed();
            });
            ui.end_row();
        });
    changes.view |= changed;
    for field in ["map", "map.x", "map.y"] {
        problems_ui(ui, doc.problems_at(field));
    }
}

/// The regime-map tile: run, stop and progress, the CSV export, the map itself with hover
/// values, and a click on a cell to set both parameters there and run.
pub fn map_tile_ui(ui: &mut Ui, session: &Session, commands: &mut Vec<Command>) {
    let map = &session.map;
    ui.horizontal(|ui| {
        if map.is_running() {
            if ui
                .button("Stop map")
                .on_hover_text("Stop the regime map; the cells done so far stay")
                .clicked()
            {
                commands.push(Command::Cancel(JobKind::RegimeMap));
            }
            ui.label(format!("{} / {} cells", map.cells.len(), map.total()));
        } else {
            let ok = session.doc.first_error().is_none() && session.doc.scenario.map.is_some();
            if ui
                .add_enabled(ok, egui::Button::new("Run map"))
                .on_hover_text("Run every cell of the regime map set in the model panel")
                .clicked()
            {
                commands.push(Command::StartMap);
            }
            if map.total() > 0 {
                ui.label(
                    RichText::new(format!("{} / {} cells", map.cells.len(), map.total())).weak(),
                );
            }
        }
        if !map.cells.is_empty()
            && ui
                .small_button("CSV")
                .on_hover_text("Export the cells as CSV (the columns of `lamina map --out`)")
                .clicked()
        {
            commands.push(Command::ExportCsv(PointSet::Map));
        }
    });
    let Some(spec) = &map.spec else {
        let text = if session.doc.scenario.map.is_some() {
            "Run the map to fill it."
        } else {
            "No regime map: switch it on in the model panel (Regime map)."
        };
        ui.label(text);
        return;
    };
    let parameters = &session.doc.scenario.parameters;
    let current = parameters
        .get(spec.x.parameter)
        .zip(parameters.get(spec.y.parameter))
        .map(|(x, y)| (x.value, y.value));
    // a click sets the parameters the map was run over: not if the model has renamed them
    let same_parameters = parameters.get(spec.x.parameter).map(|p| &p.name) == Some(&map.names.0)
        && parameters.get(spec.y.parameter).map(|p| &p.name) == Some(&map.names.1);
    let clicked = regime_map_ui(ui, spec, &map.cells, &map.labels, &map.names, current);
    if let Some(cell) = clicked.filter(|_| same_parameters) {
        commands.push(Command::SetParametersAndRun {
            values: vec![(spec.x.parameter, cell.x), (spec.y.parameter, cell.y)],
        });
    }
}

/// Whether the fourth tile shows the regime map rather than the orbit diagram by default:
/// the scenario has a map and no sweep, or only the map has results.
pub fn map_is_default(session: &Session) -> bool {
    let has_map = session.doc.scenario.map.is_some() || session.map.spec.is_some();
    let has_sweep = session.doc.scenario.sweep.is_some() || !session.sweep.columns.is_empty();
    has_map && !has_sweep
}

/// The view shown in the fourth tile.
pub fn fourth_view(session: &Session, chosen: Option<ViewKind>) -> ViewKind {
    chosen.unwrap_or(if map_is_default(session) {
        ViewKind::RegimeMap
    } else {
        ViewKind::Orbit
    })
}
