//! The analysis panel: the periodic orbit of the current run (recurrence summary, Newton
//! refinement, multipliers on the unit circle, verdict) and the Lyapunov exponents (spectrum,
//! convergence of the running estimates, Kaplan–Yorke dimension, verdict). It draws from the
//! session and pushes commands; the jobs themselves are in `session/analysis.rs`. Resting
//! points and the Recheck rows are drawn by `rest_panel.rs`.

use egui::{Color32, RichText, Ui};
use egui_plot::{Line, PlotPoints, Points};
use lamina_core::cycle::CycleReport;
use lamina_core::recurrence::{RecurrenceSettings, find_recurrence};

use crate::rest_panel::{recheck_row_ui, resting_points_section_ui};
use crate::session::{Session, map_points};
use crate::views::plot_input;
use crate::vocabulary::{Command, JobKind, OrbitMap, RecheckTarget};
use crate::widgets::{copy_button_ui, unit_suffix};

/// The recurrence summary of the shown cloud, kept with the (map, revision, length) it was
/// made for: the search reads every point, so it is redone only when those change.
#[derive(Default)]
pub struct SummaryCache(Option<((OrbitMap, u64, usize), String)>);

/// A number for the tables: fixed digits, or an exponent for tiny and huge magnitudes.
fn num(v: f64) -> String {
    if v != 0.0 && !(1e-3..1e6).contains(&v.abs()) {
        format!("{v:.6e}")
    } else {
        format!("{v:.9}")
    }
}

fn multiplier_rows_ui(ui: &mut Ui, id: &str, values: &[lamina_core::cycle::Multiplier]) {
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

/// The analysis side panel.
pub fn analysis_panel_ui(
    ui: &mut Ui,
    session: &Session,
    summary: &mut SummaryCache,
    commands: &mut Vec<Command>,
) {
    egui::ScrollArea::vertical()
        .auto_shrink([false, false])
        .show(ui, |ui| {
            egui::CollapsingHeader::new(RichText::new("Periodic orbit").strong())
                .default_open(true)
                .show(ui, |ui| cycle_section_ui(ui, session, summary, commands));
            egui::CollapsingHeader::new(RichText::new("Lyapunov exponents").strong())
                .default_open(true)
                .show(ui, |ui| exponents_section_ui(ui, session, commands));
            egui::CollapsingHeader::new(RichText::new("Resting points").strong())
                .default_open(true)
                .show(ui, |ui| resting_points_section_ui(ui, session, commands));
            egui::CollapsingHeader::new(RichText::new("Follow branch").strong())
                .default_open(true)
                .show(ui, |ui| {
                    crate::branch_panel::branch_section_ui(ui, session, commands)
                });
        });
}

fn cycle_section_ui(
    ui: &mut Ui,
    session: &Session,
    summary: &mut SummaryCache,
    commands: &mut Vec<Command>,
) {
    let mut map = session.analysis.map;
    ui.horizontal(|ui| {
        ui.label("on the");
        ui.selectable_value(&mut map, OrbitMap::Cut, "cut")
            .on_hover_text("Fixed points of the return map of the cut");
        ui.selectable_value(&mut map, OrbitMap::Strobe, "strobe")
            .on_hover_text("Fixed points of the time-T map");
    });
    if map != session.analysis.map {
        commands.push(Command::ChooseOrbitMap(map));
    }
    let cloud = session.orbit_cloud();
    let key = (session.analysis.map, cloud.revision, cloud.len());
    if summary.0.as_ref().is_none_or(|(k, _)| *k != key) {
        let text = if cloud.len() < 2 {
            "run first: the search starts from the points of the run".to_string()
        } else {
            let points = map_points(cloud);
            let settings =
                RecurrenceSettings::for_control(&session.doc.scenario.run_spec().control);
            format!(
                "{} points: {}",
                points.len(),
                find_recurrence(&points, &settings)
            )
        };
        summary.0 = Some((key, text));
    }
    if let Some((_, text)) = &summary.0 {
        ui.label(RichText::new(text).small());
    }
    let points_ready = cloud.len() >= 2 && !session.is_running();
    recheck_row_ui(ui, session, RecheckTarget::Points, points_ready, commands);
    let busy = session.analysis.cycle_running();
    ui.horizontal(|ui| {
        let can = !busy
            && cloud.len() >= 2
            && session.doc.first_error().is_none()
            && !session.is_running();
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
            commands.push(Command::FindOrbit);
        }
        if busy
            && ui
                .button("Stop search")
                .on_hover_text("Stop the orbit search")
                .clicked()
        {
            commands.push(Command::Cancel(JobKind::OrbitSearch));
        }
    });
    let names = &session.results.names;
    let scenario = &session.doc.scenario;
    let time_unit = unit_suffix(scenario.time.unit.as_deref());
    match &session.analysis.cycle {
        None => {}
        Some(Err(e)) => {
            ui.label(RichText::new(e.to_string()).color(crate::widgets::ERROR_COLOUR));
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
            ui.horizontal(|ui| {
                ui.label(RichText::new("multipliers of the map").weak());
                copy_button_ui(ui, "the multipliers of the map", || {
                    crate::tables::multipliers_tsv(&r.multipliers)
                });
            });
            multiplier_rows_ui(ui, "map_multipliers", &r.multipliers);
            if let Some(f) = &r.floquet {
                ui.horizontal(|ui| {
                    ui.label(RichText::new("Floquet multipliers (with the trivial 1)").weak());
                    copy_button_ui(ui, "the Floquet multipliers", || {
                        crate::tables::multipliers_tsv(f)
                    });
                });
                multiplier_rows_ui(ui, "floquet_multipliers", f);
            }
            unit_circle_ui(ui, r);
            recheck_row_ui(ui, session, RecheckTarget::Orbit, !busy, commands);
        }
    }
}

fn exponents_section_ui(ui: &mut Ui, session: &Session, commands: &mut Vec<Command>) {
    let busy = session.analysis.exponents_running();
    ui.horizontal(|ui| {
        let can = !busy && session.doc.first_error().is_none();
        if ui
            .add_enabled(can, egui::Button::new("Compute exponents"))
            .on_hover_text("Benettin's method with QR over the scenario's window")
            .clicked()
        {
            commands.push(Command::ComputeExponents);
        }
        if busy
            && ui
                .button("Stop")
                .on_hover_text("Stop the exponent computation")
                .clicked()
        {
            commands.push(Command::Cancel(JobKind::Exponents));
        }
    });
    match &session.analysis.spectrum {
        None => {
            if busy {
                ui.label("computing…");
            }
        }
        Some(Err(e)) => {
            ui.label(RichText::new(e.to_string()).color(crate::widgets::ERROR_COLOUR));
        }
        Some(Ok(s)) => {
            // exponents are rates: per unit of the model's time
            let per_time = session
                .doc
                .scenario
                .time
                .unit
                .as_deref()
                .map(str::trim)
                .filter(|u| !u.is_empty())
                .map_or(String::new(), |u| format!(" 1/{u}"));
            copy_button_ui(ui, "the exponents", || {
                crate::tables::exponents_tsv(&s.exponents, &s.spread)
            });
            egui::Grid::new("exponents")
                .num_columns(2)
                .striped(true)
                .show(ui, |ui| {
                    for (i, l) in s.exponents.iter().enumerate() {
                        ui.label(format!("λ{}", i + 1));
                        ui.label(
                            RichText::new(format!(
                                "{l:+.5}{per_time}  ± {:.1e}",
                                s.spread.get(i).copied().unwrap_or(f64::NAN)
                            ))
                            .monospace(),
                        )
                        .on_hover_text(
                            "Average rate of growth (+) or shrinking (-) of small \
                             differences along the run, per unit of time; ± is how much the \
                             running estimate still moved over the last part of the run",
                        );
                        ui.end_row();
                    }
                });
            ui.label(format!("verdict: {}", s.verdict));
            recheck_row_ui(ui, session, RecheckTarget::Exponents, !busy, commands);
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
            let traces = convergence_lines(&s.trace);
            // the whole run fitted until the user zooms or pans; then the user's view stays
            let all = || traces.iter().flatten();
            let window = plot_input::range(all().map(|p| p[0]))
                .zip(plot_input::range(all().map(|p| p[1])))
                .and_then(|(t, v)| plot_input::fitted_window(t, v));
            plot_input::plot("exponent_convergence")
                .height(140.0)
                .x_axis_label(session.doc.scenario.time_label())
                .y_axis_label(match session.doc.scenario.time.unit.as_deref() {
                    Some(unit) if !unit.trim().is_empty() => format!("estimate (1/{unit})"),
                    _ => "estimate".to_owned(),
                })
                .show(ui, |plot_ui| {
                    plot_input::fit_until_user_moves(plot_ui, window);
                    plot_input::wheel_zoom(plot_ui);
                    for (series, pts) in traces.into_iter().enumerate() {
                        plot_ui.line(Line::new(format!("λ{}", series + 1), PlotPoints::new(pts)));
                    }
                });
        }
    }
}

/// The lines of the convergence plot: for each exponent its running estimate against time
/// over the whole run (`trace.exponents[i][k]` is exponent i's estimate at `trace.t[k]`).
fn convergence_lines(trace: &lamina_core::lyapunov::Trace) -> Vec<Vec<[f64; 2]>> {
    trace
        .exponents
        .iter()
        .map(|series| trace.t.iter().zip(series).map(|(t, v)| [*t, *v]).collect())
        .collect()
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
    plot_input::plot("unit_circle")
        .height(180.0)
        .data_aspect(1.0)
        .show(ui, |plot_ui| {
            plot_input::wheel_zoom(plot_ui);
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_convergence_plot_draws_every_sample_of_every_exponent() {
        // [analytic] two exponents sampled at t = 10, 20, 30: each line has the three
        // samples of its own exponent, over the whole run
        let mut trace = lamina_core::lyapunov::Trace::new(2);
        trace.push(10.0, &[0.5, -1.5]);
        trace.push(20.0, &[0.4, -1.2]);
        trace.push(30.0, &[0.3, -1.1]);
        let lines = convergence_lines(&trace);
        assert_eq!(lines.len(), 2);
        assert_eq!(lines[0], vec![[10.0, 0.5], [20.0, 0.4], [30.0, 0.3]]);
        assert_eq!(lines[1], vec![[10.0, -1.5], [20.0, -1.2], [30.0, -1.1]]);
    }
}
