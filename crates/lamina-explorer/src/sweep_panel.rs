//! The sweep in the window: its settings in the model panel, the sweep job (start, stop,
//! streamed values), the orbit-diagram tile, and picking a value from it.

use egui::{ComboBox, RichText, Ui};
use lamina_core::model::Model;
use lamina_core::recurrence::{RecurrenceKind, RecurrenceSettings};
use lamina_core::run::Cut;
use lamina_core::sweep::{SweepColumn, column_recurrence, describe};
use lamina_scenario::{Sweep, SweepSource};

use crate::app::ExplorerApp;
use crate::document::Document;
use crate::model_panel::PanelChanges;
use crate::sweep_worker::{SweepEvent, SweepJob, SweepWorker};
use crate::views::orbit::orbit_diagram_ui;
use crate::widgets::{number_field, problems_ui};

/// The sweep's job and what it has produced.
#[derive(Default)]
pub struct SweepState {
    /// The background job.
    pub worker: SweepWorker,
    /// Finished values with their label from the recurrence detector, in parameter order.
    pub columns: Vec<(SweepColumn, RecurrenceKind)>,
    /// The recurrence detector's settings for the running or last sweep (its integrator
    /// tolerances).
    pub recurrence: RecurrenceSettings,
    /// Number of values of the running or last sweep.
    pub total: usize,
    /// Parameter and coordinate of the last sweep (indices).
    pub axes: (usize, usize),
}

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
            changed |= number_field(ui, egui::Id::unique("sweep_from"), &mut sweep.from, 64.0).on_hover_text("First value").changed();
            ui.label("…");
            changed |= number_field(ui, egui::Id::unique("sweep_to"), &mut sweep.to, 64.0).on_hover_text("Last value").changed();
        });
        ui.end_row();
        ui.label("values");
        changed |= ui.add(egui::DragValue::new(&mut sweep.values).range(2..=100_001)).on_hover_text("Number of parameter values, from and to included").changed();
        ui.end_row();
        ui.label("settle per value");
        changed |= number_field(ui, egui::Id::unique("sweep_settle"), &mut sweep.settle, 64.0).on_hover_text("Transient at each value, not kept").changed();
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

impl ExplorerApp {
    /// Name of the parameter of the last (or running) sweep.
    pub(crate) fn swept_parameter_name(&self) -> String {
        self.doc
            .scenario
            .parameters
            .get(self.sweep.axes.0)
            .map(|p| p.name.clone())
            .unwrap_or_default()
    }

    /// The swept parameter's name with its unit, for axes.
    pub(crate) fn swept_parameter_label(&self) -> String {
        self.doc.scenario.parameter_label(self.sweep.axes.0)
    }

    /// Starts the scenario's sweep.
    pub(crate) fn start_sweep(&mut self, ctx: &egui::Context) {
        if self.sweep.worker.is_running() {
            self.note("a sweep is already going: stop it first");
            return;
        }
        if let Some(problem) = self.doc.first_error() {
            self.note(format!("cannot sweep: {problem}"));
            return;
        }
        let scenario = &self.doc.scenario;
        let (Some(spec), Some(coordinate)) =
            (scenario.sweep_spec(), scenario.sweep_coordinate_index())
        else {
            self.note("no sweep: switch it on in the model panel");
            return;
        };
        let parameter = spec.parameter;
        let Ok(model) = Model::compile(&scenario.model_spec()) else {
            return;
        };
        let cut = scenario
            .cut_spec()
            .and_then(|s| Cut::compile(&s, &model).ok());
        let job = SweepJob {
            model,
            run: scenario.run_spec(),
            cut,
            strobe: scenario.strobe_spec(),
            spec,
        };
        self.sweep.columns.clear();
        self.sweep.recurrence = RecurrenceSettings::for_control(&job.run.control);
        self.sweep.total = job.spec.n_values();
        self.sweep.axes = (parameter, coordinate);
        let repaint = ctx.clone();
        if self
            .sweep
            .worker
            .start(job, move || repaint.request_repaint())
        {
            self.note(format!("sweep started: {} values", self.sweep.total));
        }
    }

    /// Takes the sweep worker's values.
    pub(crate) fn drain_sweep(&mut self) {
        for event in self.sweep.worker.drain() {
            match event {
                SweepEvent::Column(column) => {
                    let kind = column_recurrence(&column, &self.sweep.recurrence).kind();
                    let at = self
                        .sweep
                        .columns
                        .partition_point(|(c, _)| c.index < column.index);
                    self.sweep.columns.insert(at, (column, kind));
                }
                SweepEvent::Finished { error } => match error {
                    Some(e) => self.note(format!("the sweep could not run: {e}")),
                    None => {
                        let labels: Vec<(f64, RecurrenceKind)> = self
                            .sweep
                            .columns
                            .iter()
                            .map(|(c, k)| (c.value, *k))
                            .collect();
                        self.note(format!(
                            "sweep done: {} of {} values, {} change(s) of behaviour",
                            self.sweep.columns.len(),
                            self.sweep.total,
                            lamina_core::sweep::changes(&labels).len()
                        ));
                        let name = self.swept_parameter_name();
                        for line in describe(&name, &labels).into_iter().take(14) {
                            self.note(format!("  {line}"));
                        }
                    }
                },
            }
        }
    }

    /// The orbit-diagram tile.
    pub(crate) fn orbit_tile_ui(&mut self, ui: &mut Ui) {
        let running = self.sweep.worker.is_running();
        let mut start = false;
        ui.horizontal(|ui| {
            if running {
                if ui
                    .button("Stop sweep")
                    .on_hover_text("Stop the sweep; the values done so far stay")
                    .clicked()
                {
                    self.sweep.worker.stop();
                }
                ui.label(format!(
                    "{} / {} values",
                    self.sweep.columns.len(),
                    self.sweep.total
                ));
            } else {
                let ok = self.doc.first_error().is_none();
                start = ui
                    .add_enabled(ok, egui::Button::new("Run sweep"))
                    .on_hover_text("Run every value of the sweep set in the model panel")
                    .clicked();
                if self.sweep.total > 0 {
                    ui.label(RichText::new(format!("{} values", self.sweep.columns.len())).weak());
                }
            }
        });
        if start {
            let ctx = ui.ctx().clone();
            self.start_sweep(&ctx);
        }
        if self.sweep.total == 0
            && let (Some(p), Some(c)) = (
                self.doc.scenario.sweep_parameter_index(),
                self.doc.scenario.sweep_coordinate_index(),
            )
        {
            self.sweep.axes = (p, c);
        }
        let (parameter, coordinate) = self.sweep.axes;
        let pname = self.swept_parameter_name();
        let plabel = self.swept_parameter_label();
        let clabel = self.doc.scenario.state_label(coordinate);
        let current = self.doc.scenario.parameters.get(parameter).map(|p| p.value);
        let clicked = orbit_diagram_ui(
            ui,
            &self.sweep.columns,
            coordinate,
            (&plabel, &clabel),
            current,
        );
        if let Some(value) = clicked
            && let Some(p) = self.doc.scenario.parameters.get_mut(parameter)
        {
            p.value = value;
            self.doc.changed();
            self.note(format!("{pname} = {value}: running the model there"));
            let ctx = ui.ctx().clone();
            self.start_run(&ctx);
        }
    }
}
