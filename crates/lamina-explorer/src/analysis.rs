//! The analysis panel: the periodic orbit of the current run (recurrence summary, Newton
//! refinement, multipliers on the unit circle, verdict) and the Lyapunov exponents (spectrum,
//! convergence of the running estimates, Kaplan–Yorke dimension, verdict). Both are computed
//! on background threads from the scenario as it stands.

use std::sync::Arc;
use std::sync::mpsc::{Receiver, channel};

use egui::{Color32, RichText, Ui};
use egui_plot::{Line, Plot, PlotPoints, Points};
use lamina_core::Interrupt;
use lamina_core::cycle::{
    CycleReport, FlowMap, MapKind, MapPoint, MapSettings, NewtonSettings, find_cycle,
};
use lamina_core::lyapunov::{ExponentSettings, Spectrum, spectrum};
use lamina_core::model::Model;
use lamina_core::recurrence::{RecurrenceSettings, close_returns, find_recurrence};
use lamina_core::run::{Cut, Strobe};

use crate::app::ExplorerApp;
use crate::results::PointCloud;
use crate::widgets::unit_suffix;

/// Which map the orbit is sought on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OrbitMap {
    /// The cut (Poincaré) map.
    Cut,
    /// The strobe (time-T) map.
    Strobe,
}

/// A periodic orbit and its path over one period.
type FoundOrbit = (CycleReport, Vec<MapPoint>);

/// A running exponent computation: its stop flag and where its result arrives.
type ExponentJob = (Arc<Interrupt>, Receiver<Result<Spectrum, String>>);

/// The panel's jobs and results.
pub struct AnalysisState {
    /// Map for the orbit search.
    pub map: OrbitMap,
    cycle_job: Option<Receiver<Result<FoundOrbit, String>>>,
    /// The found orbit over one period, for the 3D view.
    pub orbit_path: Vec<MapPoint>,
    /// The last orbit found (or why not).
    pub cycle: Option<Result<CycleReport, String>>,
    exponents_job: Option<ExponentJob>,
    /// The last spectrum (or why not).
    pub spectrum: Option<Result<Spectrum, String>>,
    /// Recurrence summary of the shown cloud, with the (map, revision, length) it belongs to.
    summary: Option<((OrbitMap, u64, usize), String)>,
}

impl Default for AnalysisState {
    fn default() -> Self {
        Self {
            map: OrbitMap::Cut,
            cycle_job: None,
            orbit_path: Vec::new(),
            cycle: None,
            exponents_job: None,
            spectrum: None,
            summary: None,
        }
    }
}

impl AnalysisState {
    /// Whether the orbit search is going.
    pub fn cycle_running(&self) -> bool {
        self.cycle_job.is_some()
    }

    /// Whether the exponents are being computed.
    pub fn exponents_running(&self) -> bool {
        self.exponents_job.is_some()
    }
}

fn map_points(cloud: &PointCloud) -> Vec<MapPoint> {
    (0..cloud.len())
        .map(|i| MapPoint {
            t: cloud.t[i],
            state: cloud.state(i).to_vec(),
        })
        .collect()
}

/// A number for the tables: fixed digits, or an exponent for tiny and huge magnitudes.
fn num(v: f64) -> String {
    if v != 0.0 && !(1e-3..1e6).contains(&v.abs()) {
        format!("{v:.6e}")
    } else {
        format!("{v:.9}")
    }
}

fn multiplier_rows(ui: &mut Ui, id: &str, values: &[lamina_core::cycle::Multiplier]) {
    egui::Grid::new(id)
        .num_columns(3)
        .striped(true)
        .show(ui, |ui| {
            ui.label(RichText::new("re").weak());
            ui.label(RichText::new("im").weak());
            ui.label(RichText::new("|m|").weak());
            ui.end_row();
            for m in values {
                ui.label(RichText::new(num(m.re)).monospace());
                ui.label(RichText::new(num(m.im)).monospace());
                ui.label(RichText::new(num(m.re.hypot(m.im))).monospace());
                ui.end_row();
            }
        });
}

impl ExplorerApp {
    /// Collects finished analysis jobs.
    pub(crate) fn drain_analysis(&mut self) {
        if let Some(rx) = &self.analysis.cycle_job
            && let Ok(result) = rx.try_recv()
        {
            self.analysis.cycle_job = None;
            match &result {
                Ok((r, _)) => {
                    let time_unit = unit_suffix(self.doc.scenario.time.unit.as_deref());
                    self.note(format!(
                        "{}-return orbit, period {}{time_unit}, {}",
                        r.k, r.period, r.verdict
                    ));
                }
                Err(e) => self.note(format!("no periodic orbit: {e}")),
            }
            self.analysis.orbit_path = result
                .as_ref()
                .map(|(_, path)| path.clone())
                .unwrap_or_default();
            self.analysis.cycle = Some(result.map(|(r, _)| r));
        }
        if let Some((_, rx)) = &self.analysis.exponents_job
            && let Ok(result) = rx.try_recv()
        {
            self.analysis.exponents_job = None;
            match &result {
                Ok(s) => self.note(format!(
                    "Lyapunov exponents: {:?} ({})",
                    s.exponents, s.verdict
                )),
                Err(e) => self.note(format!("exponents: {e}")),
            }
            self.analysis.spectrum = Some(result);
        }
    }

    fn start_cycle_search(&mut self, ctx: &egui::Context) {
        let scenario = &self.doc.scenario;
        let Ok(model) = Model::compile(&scenario.model_spec()) else {
            return;
        };
        let (kind, cloud) = match self.analysis.map {
            OrbitMap::Cut => (
                scenario
                    .cut_spec()
                    .and_then(|s| Cut::compile(&s, &model).ok())
                    .map(MapKind::Cut),
                &self.results.cut,
            ),
            OrbitMap::Strobe => (
                scenario
                    .strobe_spec()
                    .and_then(|s| Strobe::compile(&s, &model).ok())
                    .map(MapKind::Strobe),
                &self.results.strobe,
            ),
        };
        let Some(kind) = kind else {
            self.analysis.cycle = Some(Err("the scenario has no such map".into()));
            return;
        };
        let points = map_points(cloud);
        let run = scenario.run_spec();
        let recurrence = find_recurrence(&points, &RecurrenceSettings::for_control(&run.control));
        let k = recurrence.search_k().unwrap_or(1);
        let seeds: Vec<MapPoint> = close_returns(&points, k, 4)
            .iter()
            .map(|r| points[r.index].clone())
            .collect();
        let longest = cloud
            .return_time
            .iter()
            .copied()
            .filter(|r| r.is_finite())
            .fold(0.0, f64::max);
        let max_return = if longest > 0.0 {
            4.0 * longest * k as f64
        } else {
            run.span
        };
        let (tx, rx) = channel();
        let repaint = ctx.clone();
        let spawned = std::thread::Builder::new()
            .name("lamina-cycle".into())
            .spawn(move || {
                let result = (|| {
                    let mut map =
                        FlowMap::new(model, kind, MapSettings::from_run(&run, max_return))
                            .map_err(|e| e.to_string())?;
                    let report = find_cycle(
                        &mut map,
                        &seeds,
                        k,
                        &NewtonSettings::for_rtol(run.control.rtol),
                    )
                    .map_err(|e| e.to_string())?;
                    // the orbit over one period for the 3D view (drawn without it if that fails)
                    let path = map
                        .trace(&report.point, report.period, 4)
                        .unwrap_or_default();
                    Ok((report, path))
                })();
                let _ = tx.send(result);
                repaint.request_repaint();
            });
        if spawned.is_ok() {
            self.analysis.cycle_job = Some(rx);
            self.note(format!("looking for a {k}-return orbit ({recurrence})"));
        }
    }

    fn start_exponents(&mut self, ctx: &egui::Context) {
        let scenario = &self.doc.scenario;
        let Ok(model) = Model::compile(&scenario.model_spec()) else {
            return;
        };
        let run = scenario.run_spec();
        let interrupt = Arc::new(Interrupt::new());
        let flag = Arc::clone(&interrupt);
        let (tx, rx) = channel();
        let repaint = ctx.clone();
        let spawned = std::thread::Builder::new()
            .name("lamina-exponents".into())
            .spawn(move || {
                let result = spectrum(model, &run, &ExponentSettings::all(), &mut (), &flag)
                    .map_err(|e| e.to_string());
                let _ = tx.send(result);
                repaint.request_repaint();
            });
        if spawned.is_ok() {
            self.analysis.exponents_job = Some((interrupt, rx));
            self.note("computing Lyapunov exponents over the scenario's window");
        }
    }

    /// The analysis side panel.
    pub(crate) fn analysis_panel_ui(&mut self, ui: &mut Ui) {
        let ctx = ui.ctx().clone();
        if self.analysis.cycle_running() || self.analysis.exponents_running() {
            ctx.request_repaint_after(std::time::Duration::from_millis(100));
        }
        egui::ScrollArea::vertical()
            .auto_shrink([false, false])
            .show(ui, |ui| {
                egui::CollapsingHeader::new(RichText::new("Periodic orbit").strong())
                    .default_open(true)
                    .show(ui, |ui| self.cycle_section_ui(ui, &ctx));
                egui::CollapsingHeader::new(RichText::new("Lyapunov exponents").strong())
                    .default_open(true)
                    .show(ui, |ui| self.exponents_section_ui(ui, &ctx));
            });
    }

    fn cycle_section_ui(&mut self, ui: &mut Ui, ctx: &egui::Context) {
        ui.horizontal(|ui| {
            ui.label("on the");
            ui.selectable_value(&mut self.analysis.map, OrbitMap::Cut, "cut")
                .on_hover_text("Fixed points of the return map of the cut");
            ui.selectable_value(&mut self.analysis.map, OrbitMap::Strobe, "strobe")
                .on_hover_text("Fixed points of the time-T map");
        });
        let cloud = match self.analysis.map {
            OrbitMap::Cut => &self.results.cut,
            OrbitMap::Strobe => &self.results.strobe,
        };
        // the recurrence search reads every point: redo it only when the cloud or map changes
        let key = (self.analysis.map, cloud.revision, cloud.len());
        if self
            .analysis
            .summary
            .as_ref()
            .is_none_or(|(k, _)| *k != key)
        {
            let text = if cloud.len() < 2 {
                "run first: the search starts from the points of the run".to_string()
            } else {
                let points = map_points(cloud);
                let settings =
                    RecurrenceSettings::for_control(&self.doc.scenario.run_spec().control);
                format!(
                    "{} points: {}",
                    points.len(),
                    find_recurrence(&points, &settings)
                )
            };
            self.analysis.summary = Some((key, text));
        }
        if let Some((_, text)) = &self.analysis.summary {
            ui.label(RichText::new(text).small());
        }
        let busy = self.analysis.cycle_running();
        let can =
            !busy && cloud.len() >= 2 && self.doc.first_error().is_none() && !self.is_running();
        if ui
            .add_enabled(
                can,
                egui::Button::new(if busy {
                    "searching…"
                } else {
                    "Find periodic orbit"
                }),
            )
            .on_hover_text(
                "Refine the closest return by Newton's method and measure its multipliers",
            )
            .clicked()
        {
            self.start_cycle_search(ctx);
        }
        let names = self.results.names.clone();
        let scenario = &self.doc.scenario;
        let time_unit = unit_suffix(scenario.time.unit.as_deref());
        match &self.analysis.cycle {
            None => {}
            Some(Err(e)) => {
                ui.label(RichText::new(e).color(crate::widgets::ERROR_COLOUR));
            }
            Some(Ok(r)) => {
                ui.label(
                    RichText::new(format!(
                        "{}-return orbit, period {:.10}{time_unit}",
                        r.k, r.period
                    ))
                    .strong(),
                );
                let point: Vec<String> = names
                    .iter()
                    .zip(&r.point.state)
                    .map(|(n, v)| {
                        let unit = scenario
                            .state_index(n)
                            .and_then(|i| scenario.states[i].unit.as_deref());
                        format!("{n} = {v:.10}{}", unit_suffix(unit))
                    })
                    .collect();
                ui.label(RichText::new(point.join(", ")).monospace().small());
                ui.label(format!("verdict: {}", r.verdict));
                ui.label(RichText::new(r.outlook.to_string()).small());
                if let Some(note) = r.search_note() {
                    ui.label(RichText::new(note).small());
                }
                ui.label(
                    RichText::new(format!(
                        "residual {:.2e}, {} Newton step(s)",
                        r.residual, r.iterations
                    ))
                    .small(),
                );
                ui.label(RichText::new("multipliers of the map").weak());
                multiplier_rows(ui, "map_multipliers", &r.multipliers);
                if let Some(f) = &r.floquet {
                    ui.label(RichText::new("Floquet multipliers (with the trivial 1)").weak());
                    multiplier_rows(ui, "floquet_multipliers", f);
                }
                unit_circle_ui(ui, r);
            }
        }
    }

    fn exponents_section_ui(&mut self, ui: &mut Ui, ctx: &egui::Context) {
        let busy = self.analysis.exponents_running();
        ui.horizontal(|ui| {
            let can = !busy && self.doc.first_error().is_none();
            if ui
                .add_enabled(can, egui::Button::new("Compute exponents"))
                .on_hover_text("Benettin's method with QR over the scenario's window")
                .clicked()
            {
                self.start_exponents(ctx);
            }
            if busy
                && ui
                    .button("Stop")
                    .on_hover_text("Stop; the estimates so far are kept")
                    .clicked()
                && let Some((flag, _)) = &self.analysis.exponents_job
            {
                flag.raise();
            }
        });
        match &self.analysis.spectrum {
            None => {
                if busy {
                    ui.label("computing…");
                }
            }
            Some(Err(e)) => {
                ui.label(RichText::new(e).color(crate::widgets::ERROR_COLOUR));
            }
            Some(Ok(s)) => {
                egui::Grid::new("exponents")
                    .num_columns(2)
                    .striped(true)
                    .show(ui, |ui| {
                        for (i, l) in s.exponents.iter().enumerate() {
                            ui.label(format!("λ{}", i + 1));
                            ui.label(
                                RichText::new(format!(
                                    "{l:+.5}  ± {:.1e}",
                                    s.spread.get(i).copied().unwrap_or(f64::NAN)
                                ))
                                .monospace(),
                            );
                            ui.end_row();
                        }
                    });
                ui.label(format!("verdict: {}", s.verdict));
                if let Some(d) = s.kaplan_yorke {
                    ui.label(format!("Kaplan–Yorke dimension {d:.3}"));
                }
                if s.time_direction_omitted {
                    ui.label(
                        RichText::new(
                            "forced model: the zero exponent of the time direction is not listed",
                        )
                        .small(),
                    );
                }
                if s.rates_jump {
                    ui.label(
                        RichText::new("rates jump with the states: the exponents miss the jumps")
                            .small()
                            .color(crate::widgets::WARNING_COLOUR),
                    );
                }
                Plot::new("exponent_convergence")
                    .height(140.0)
                    .x_axis_label("t")
                    .y_axis_label("estimate")
                    .show(ui, |plot_ui| {
                        for series in 0..s.exponents.len() {
                            let pts: Vec<[f64; 2]> = s
                                .trace
                                .t
                                .iter()
                                .zip(&s.trace.exponents)
                                .filter_map(|(t, e)| e.get(series).map(|v| [*t, *v]))
                                .collect();
                            plot_ui
                                .line(Line::new(format!("λ{}", series + 1), PlotPoints::new(pts)));
                        }
                    });
            }
        }
    }
}

/// The multipliers drawn with the unit circle.
fn unit_circle_ui(ui: &mut Ui, report: &CycleReport) {
    let circle: Vec<[f64; 2]> = (0..=128)
        .map(|i| {
            let a = std::f64::consts::TAU * f64::from(i) / 128.0;
            [a.cos(), a.sin()]
        })
        .collect();
    let shown = report.floquet.as_ref().unwrap_or(&report.multipliers);
    let points: Vec<[f64; 2]> = shown.iter().map(|m| [m.re, m.im]).collect();
    Plot::new("unit_circle")
        .height(180.0)
        .data_aspect(1.0)
        .show(ui, |plot_ui| {
            plot_ui.line(
                Line::new("unit circle", PlotPoints::new(circle)).color(Color32::from_gray(140)),
            );
            plot_ui.points(
                Points::new("multipliers", PlotPoints::new(points))
                    .radius(4.0)
                    .color(Color32::from_rgb(240, 112, 84)),
            );
        });
}
