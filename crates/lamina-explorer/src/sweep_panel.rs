//! The sweep in the window: its settings in the model panel, and the orbit-diagram tile
//! (start, stop, picking a value from it). The job itself is in `session/sweep.rs`.

use egui::{ComboBox, RichText, Ui};
use lamina_scenario::{Sweep, SweepSource};

use crate::document::Document;
use crate::session::Session;
use crate::views::orbit::orbit_diagram_ui;
use crate::vocabulary::{Command, JobKind, PanelChanges};
use crate::widgets::{number_field_ui, problems_ui};

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
    egui::Grid::new("sweep_grid").num_columns(2).spacing([8.0, 4.0]).show(ui, |ui| {
        ui.label("parameter");
        ComboBox::from_id_salt("sweep_parameter").selected_text(sweep.parameter.as_str()).show_ui(ui, |ui| {
            for p in &parameters {
                changed |= ui.selectable_value(&mut sweep.parameter, p.clone(), p).changed();
            }
        });
        ui.end_row();
        ui.label("from … to");
        ui.horizontal(|ui| {
            changed |= number_field_ui(ui, egui::Id::unique("sweep_from"), &mut sweep.from, 64.0).on_hover_text("First value").changed();
            ui.label("…");
            changed |= number_field_ui(ui, egui::Id::unique("sweep_to"), &mut sweep.to, 64.0).on_hover_text("Last value").changed();
        });
        ui.end_row();
        ui.label("values");
        changed |= ui.add(egui::DragValue::new(&mut sweep.values).range(2..=100_001)).on_hover_text("Number of parameter values, from and to included").changed();
        ui.end_row();
        ui.label("settle per value");
        changed |= number_field_ui(ui, egui::Id::unique("sweep_settle"), &mut sweep.settle, 64.0).on_hover_text("Transient at each value, not kept").changed();
        ui.end_row();
        ui.label("keep");
        changed |= ui.add(egui::DragValue::new(&mut sweep.keep).range(1..=100_000)).on_hover_text("Points kept per value").changed();
        ui.end_row();
        ui.label("points from");
        ui.horizontal(|ui| {
            changed |= ui.selectable_value(&mut sweep.source, SweepSource::Cut, "cut").changed();
            changed |= ui.selectable_value(&mut sweep.source, SweepSource::Strobe, "strobe").changed();
        });
        ui.end_row();
        ui.label("plotted");
        ComboBox::from_id_salt("sweep_coordinate").selected_text(sweep.coordinate.as_str()).show_ui(ui, |ui| {
            for s in &states {
                changed |= ui.selectable_value(&mut sweep.coordinate, s.clone(), s).changed();
            }
        });
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
