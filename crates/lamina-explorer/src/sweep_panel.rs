//! The sweep in the window: its settings in the model panel, and the orbit-diagram tile
//! (start, stop, picking a value from it). The job itself is in `session/sweep.rs`.

use egui::{ComboBox, RichText, Ui};
use lamina_scenario::{Sweep, SweepSource};

use crate::document::Document;
use crate::session::Session;
use crate::views::orbit::orbit_diagram_ui;
use crate::vocabulary::{Command, JobKind, PanelChanges};
use crate::widgets::{number_field_ui, parameter_choice_ui, problems_ui, unit_suffix};

/// The sweep block's fields in the model panel.
pub fn sweep_section_ui(ui: &mut Ui, doc: &mut Document, changes: &mut PanelChanges) {
    let parameters: Vec<String> = doc
        .scenario
        .parameters
        .iter()
        .map(|p| p.name.clone())
        .collect();
    let states: Vec<String> = doc.scenario.states.iter().map(|s| s.name.clone()).collect();
    let mut enabled = doc.scenario.sweep.is_some();
    if ui
        .checkbox(&mut enabled, "sweep a parameter")
        .on_hover_text("Vary one parameter and draw an orbit diagram")
        .changed()
    {
        doc.scenario.sweep = enabled.then(|| {
            let p = doc.scenario.parameters.first();
            Sweep {
                parameter: p.map(|p| p.name.clone()).unwrap_or_default(),
                from: p.map_or(0.0, |p| p.range.0),
                to: p.map_or(1.0, |p| p.range.1),
                values: 201,
                settle: 200.0,
                keep: 32,
                follow: true,
                source: if doc.scenario.strobe.is_some() {
                    SweepSource::Strobe
                } else {
                    SweepSource::Cut
                },
                coordinate: states.first().cloned().unwrap_or_default(),
            }
        });
        changes.view = true;
    }
    let Some(sweep) = &mut doc.scenario.sweep else {
        return;
    };
    let mut changed = false;
    let unit_of_parameter = |name: &str| {
        doc.scenario
            .parameters
            .iter()
            .find(|p| p.name == name)
            .and_then(|p| p.unit.clone())
    };
    let time_unit = unit_suffix(doc.scenario.time.unit.as_deref());
    let ranges: Vec<(f64, f64)> = doc.scenario.parameters.iter().map(|p| p.range).collect();
    let parameter_unit = unit_suffix(unit_of_parameter(&sweep.parameter).as_deref());
    egui::Grid::new("sweep_grid").num_columns(2).spacing([8.0, 4.0]).show(ui, |ui| {
        let label = ui.label("parameter");
        let (response, chosen) = parameter_choice_ui(ui, "sweep_parameter", label.id, &mut sweep.parameter, (&parameters, &ranges), (&mut sweep.from, &mut sweep.to));
        response.on_hover_text("The parameter the sweep varies");
        changed |= chosen;
        ui.end_row();
        ui.label("from … to");
        ui.horizontal(|ui| {
            changed |= number_field_ui(ui, egui::Id::unique("sweep_from"), &mut sweep.from, 64.0).on_hover_text("First value").changed();
            ui.label("…");
            changed |= number_field_ui(ui, egui::Id::unique("sweep_to"), &mut sweep.to, 64.0).on_hover_text("Last value (may be below the first: the sweep runs downwards)").changed();
            if !parameter_unit.is_empty() {
                ui.label(parameter_unit.trim());
            }
        });
        ui.end_row();
        ui.label("values");
        changed |= ui.add(egui::DragValue::new(&mut sweep.values).range(2..=100_001)).on_hover_text("Number of parameter values, from and to included").changed();
        ui.end_row();
        ui.label("settle per value");
        ui.horizontal(|ui| {
            changed |= number_field_ui(ui, egui::Id::unique("sweep_settle"), &mut sweep.settle, 64.0).on_hover_text("Time integrated at each value before points are kept, so the transient after the change dies out; in the model's time").changed();
            if !time_unit.is_empty() {
                ui.label(time_unit.trim());
            }
        });
        ui.end_row();
        ui.label("keep");
        changed |= ui.add(egui::DragValue::new(&mut sweep.keep).range(1..=100_000)).on_hover_text("Cut points or strobe samples kept per value after settling: the dots drawn above each value in the orbit diagram").changed();
        ui.end_row();
        ui.label("points from");
        ui.horizontal(|ui| {
            changed |= ui.selectable_value(&mut sweep.source, SweepSource::Cut, "cut").on_hover_text("Keep the crossings of the cut").changed();
            changed |= ui.selectable_value(&mut sweep.source, SweepSource::Strobe, "strobe").on_hover_text("Keep the strobe samples (one per period of the drive)").changed();
        });
        ui.end_row();
        let label = ui.label("plotted");
        ComboBox::from_id_salt("sweep_coordinate").selected_text(sweep.coordinate.as_str()).show_ui(ui, |ui| {
            for s in &states {
                changed |= ui.selectable_value(&mut sweep.coordinate, s.clone(), s).changed();
            }
        }).response.labelled_by(label.id).on_hover_text("The state drawn upwards in the orbit diagram");
        ui.end_row();
        ui.label("each value");
        ui.horizontal(|ui| {
            changed |= ui.selectable_value(&mut sweep.follow, true, "follows the last").on_hover_text("Start where the previous value ended: follows a branch (run up and down to see hysteresis)").changed();
            changed |= ui.selectable_value(&mut sweep.follow, false, "restarts").on_hover_text("Start every value from the scenario's start; values run in parallel").changed();
        });
        ui.end_row();
    });
    changes.view |= changed;
    problems_ui(ui, doc.problems_at("sweep"));
}

/// The orbit-diagram tile: the sweep's start and stop, the diagram, and a click on a value
/// to run the model there.
pub fn orbit_tile_ui(ui: &mut Ui, session: &Session, commands: &mut Vec<Command>) {
    let sweep = &session.sweep;
    ui.horizontal(|ui| {
        if sweep.is_running() {
            if ui
                .button("Stop sweep")
                .on_hover_text("Stop the sweep; the values done so far stay")
                .clicked()
            {
                commands.push(Command::Cancel(JobKind::Sweep));
            }
            ui.label(format!("{} / {} values", sweep.columns.len(), sweep.total));
        } else {
            let ok = session.doc.first_error().is_none();
            if ui
                .add_enabled(ok, egui::Button::new("Run sweep"))
                .on_hover_text("Run every value of the sweep set in the model panel")
                .clicked()
            {
                commands.push(Command::StartSweep);
            }
            if sweep.total > 0 {
                ui.label(RichText::new(format!("{} values", sweep.columns.len())).weak());
            }
        }
    });
    let Some((parameter, coordinate)) = session.sweep_axes() else {
        ui.label("No sweep: switch it on in the model panel.");
        return;
    };
    if sweep.columns.is_empty() && !sweep.is_running() {
        empty_orbit_tile_ui(ui, session);
        return;
    }
    let scenario = &session.doc.scenario;
    let plabel = session.swept_parameter_label();
    let clabel = scenario.state_label(coordinate);
    let current = scenario.parameters.get(parameter).map(|p| p.value);
    let branch = crate::branch_panel::branch_overlay(session, coordinate);
    let clicked = orbit_diagram_ui(
        ui,
        &sweep.columns,
        coordinate,
        (&plabel, &clabel),
        current,
        &branch,
    );
    if let Some(value) = clicked {
        commands.push(Command::SetParameterAndRun {
            index: parameter,
            value,
        });
    }
}

/// What the orbit-diagram tile says before a sweep has run: what it will do and how to start.
fn empty_orbit_tile_ui(ui: &mut Ui, session: &Session) {
    let Some(sweep) = &session.doc.scenario.sweep else {
        return;
    };
    ui.add_space(12.0);
    ui.label(RichText::new("No orbit diagram yet.").strong());
    let unit = session
        .doc
        .scenario
        .parameters
        .iter()
        .find(|p| p.name == sweep.parameter)
        .map(|p| unit_suffix(p.unit.as_deref()))
        .unwrap_or_default();
    ui.label(format!(
        "Run sweep varies {} from {}{unit} to {}{unit} in {} values and draws {} kept points of {} above each value.",
        sweep.parameter, sweep.from, sweep.to, sweep.values, sweep.keep, sweep.coordinate
    ));
    ui.label(
        RichText::new("Its settings are under Sweep (orbit diagram) in the model panel.").weak(),
    );
}
