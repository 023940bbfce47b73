//! The analysis panel's resting points (found by a job, listed with state values, eigenvalues
//! and stability in words) and the Recheck row shown under a result (the digits on which a
//! second computation at tolerances divided by 100 agrees). Draws from the session and pushes
//! commands; the jobs are in `session/rest.rs` and `session/recheck.rs`.

use egui::{RichText, Ui};
use lamina_core::rest::RestError;

use crate::session::{Session, recheck_words, stability_words};
use crate::tables::{fixed, resting_points_tsv};
use crate::vocabulary::{AnalysisError, Command, JobKind, RecheckTarget, unit_suffix};
use crate::widgets::{ERROR_COLOUR, WARNING_COLOUR, copy_button_ui};

/// The "Resting points" section.
pub fn resting_points_section_ui(ui: &mut Ui, session: &Session, commands: &mut Vec<Command>) {
    let rest = &session.analysis.rest;
    let busy = rest.running();
    ui.horizontal(|ui| {
        let can = !busy && session.doc.first_error().is_none();
        if ui
            .add_enabled(can, egui::Button::new("Find resting points"))
            .on_hover_text(
                "Newton's method from the start, from the run and from a spread of states over \
                 the run's box; each point with its eigenvalues",
            )
            .clicked()
        {
            commands.push(Command::FindRestingPoints);
        }
        if busy
            && ui
                .button("Stop finding")
                .on_hover_text("Stop the resting-point search")
                .clicked()
        {
            commands.push(Command::Cancel(JobKind::RestSearch));
        }
    });
    if busy {
        ui.add(egui::ProgressBar::new(rest.progress as f32).show_percentage());
    }
    match &rest.found {
        None => {}
        Some(Err(AnalysisError::Rest(RestError::Forced))) => {
            ui.label(
                "This model is forced (its rates use t): no state stays put, so it has no \
                 resting points. Its steady state is a periodic orbit of the strobe map: use \
                 \"Find periodic orbit\" on the strobe.",
            );
        }
        Some(Err(e)) => {
            ui.label(RichText::new(e.to_string()).color(ERROR_COLOUR));
        }
        Some(Ok(report)) => {
            if rest.stale {
                ui.label(
                    RichText::new("outdated: the scenario changed since; find them again")
                        .color(WARNING_COLOUR),
                );
            }
            let s = if report.points.len() == 1 { "" } else { "s" };
            let scenario = &session.doc.scenario;
            ui.horizontal(|ui| {
                ui.label(
                    RichText::new(format!(
                        "{} resting point{s} ({} of {} starts converged)",
                        report.points.len(),
                        report.n_converged,
                        report.n_seeds
                    ))
                    .strong(),
                );
                copy_button_ui(ui, "the resting points", || {
                    resting_points_tsv(&report.points, scenario)
                });
            });
            for (i, point) in report.points.iter().enumerate() {
                ui.separator();
                ui.label(RichText::new(format!("{}. {}", i + 1, stability_words(point))).strong());
                let state: Vec<String> = scenario
                    .states
                    .iter()
                    .zip(&point.state)
                    .map(|(s, v)| {
                        format!(
                            "{} = {}{}",
                            s.name,
                            fixed(*v, 9),
                            unit_suffix(s.unit.as_deref())
                        )
                    })
                    .collect();
                ui.label(RichText::new(state.join(", ")).monospace().small());
                let eigen: Vec<String> = point
                    .eigenvalues
                    .iter()
                    .map(|e| {
                        if e.im == 0.0 {
                            fixed(e.re, 6)
                        } else {
                            format!(
                                "{} {} {}i",
                                fixed(e.re, 6),
                                if e.im < 0.0 { '-' } else { '+' },
                                fixed(e.im.abs(), 6)
                            )
                        }
                    })
                    .collect();
                ui.label(
                    RichText::new(format!("eigenvalues: {}", eigen.join(", ")))
                        .monospace()
                        .small(),
                );
                if point.reached_by_run {
                    ui.label(RichText::new("the run settles here").small());
                }
            }
        }
    }
}

/// The Recheck button for `target` and its result; `ready` says whether there is a result
/// to recheck.
pub fn recheck_row_ui(
    ui: &mut Ui,
    session: &Session,
    target: RecheckTarget,
    ready: bool,
    commands: &mut Vec<Command>,
) {
    let recheck = &session.analysis.recheck;
    let running = recheck.running();
    ui.horizontal(|ui| {
        let label = match target {
            RecheckTarget::Points => "Recheck points",
            _ => "Recheck",
        };
        if ui
            .add_enabled(ready && running.is_none(), egui::Button::new(label))
            .on_hover_text(
                "Compute it again with both tolerances divided by 100 and count the significant \
                 digits on which the two agree",
            )
            .clicked()
        {
            commands.push(Command::Recheck(target));
        }
        if running == Some(target) {
            ui.label("rechecking…");
            if ui.small_button("Stop").clicked() {
                commands.push(Command::Cancel(JobKind::Recheck));
            }
        }
    });
    match recheck.of(target) {
        None => {}
        Some(Ok(r)) => {
            ui.label(RichText::new(recheck_words(r)).small());
            if let Some(note) = &r.note {
                ui.label(RichText::new(note).small().weak());
            }
        }
        Some(Err(e)) => {
            ui.label(RichText::new(e.to_string()).small().color(ERROR_COLOUR));
        }
    }
}
