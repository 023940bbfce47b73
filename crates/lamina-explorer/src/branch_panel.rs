//! The analysis panel's "Follow branch" section: follow the current resting point or the
//! orbit found last over the sweep's range (a job with progress and a stop), the ends and the
//! special points in words with their parameter value (a click sets the parameter there and
//! runs); and the branch as the orbit-diagram tile draws it.

use egui::{RichText, Ui};
use lamina_core::branch::{BranchOf, BranchPoint};

use crate::session::Session;
use crate::views::orbit::BranchOverlay;
use crate::vocabulary::{Command, JobKind, unit_suffix};
use crate::widgets::{ERROR_COLOUR, WARNING_COLOUR};

/// The "Follow branch" section.
pub fn branch_section_ui(ui: &mut Ui, session: &Session, commands: &mut Vec<Command>) {
    let branch = &session.analysis.branch;
    let busy = branch.running();
    let range = session.branch_range();
    match &range {
        Ok(r) => {
            let parameter = session.doc.scenario.parameters.get(r.parameter);
            let name = parameter.map_or("?", |p| p.name.as_str());
            let unit = unit_suffix(parameter.and_then(|p| p.unit.as_deref()));
            ui.label(
                RichText::new(format!(
                    "{name} over [{}, {}]{unit} (the sweep's range)",
                    r.from, r.to
                ))
                .small(),
            );
        }
        Err(why) => {
            ui.label(RichText::new(*why).small());
        }
    }
    let ok = range.is_ok() && !busy && session.doc.first_error().is_none();
    ui.horizontal(|ui| {
        if ui
            .add_enabled(
                ok && session.current_resting_point().is_some(),
                egui::Button::new("Follow resting point"),
            )
            .on_hover_text(
                "Continue the resting point the run settles at (or the first stable one) over \
                 the sweep's range",
            )
            .clicked()
        {
            commands.push(Command::FollowBranch(BranchOf::Rest));
        }
        if ui
            .add_enabled(
                ok && matches!(session.analysis.cycle, Some(Ok(_))),
                egui::Button::new("Follow orbit"),
            )
            .on_hover_text("Continue the periodic orbit found above over the sweep's range")
            .clicked()
        {
            commands.push(Command::FollowBranch(BranchOf::Orbit));
        }
        if busy && ui.button("Stop following").clicked() {
            commands.push(Command::Cancel(JobKind::Branch));
        }
    });
    if busy {
        ui.add(egui::ProgressBar::new(branch.progress as f32).show_percentage());
        ui.label(RichText::new(format!("{} points so far", branch.points.len())).small());
    }
    let parameter = branch.following.map(|(_, p)| p);
    let pname = parameter
        .and_then(|p| session.doc.scenario.parameters.get(p))
        .map_or("parameter", |p| p.name.as_str())
        .to_string();
    match &branch.done {
        Some(Err(e)) => {
            ui.label(RichText::new(e.to_string()).color(ERROR_COLOUR));
        }
        Some(Ok(b)) => {
            ui.label(RichText::new(format!("{} points", b.points.len())).strong());
            for end in &b.ends {
                ui.label(RichText::new(end.reason.describe(&pname)).small());
            }
        }
        None => {}
    }
    if branch.is_outdated(&session.doc.scenario) {
        // its points and special points belong to another model: not offered to click
        ui.label(
            RichText::new("outdated: the scenario changed since; follow it again")
                .color(WARNING_COLOUR),
        );
        return;
    }
    if !branch.special.is_empty() {
        ui.label(RichText::new("special points (click to run there)").weak());
    }
    let scenario = &session.doc.scenario;
    let value_unit = unit_suffix(
        scenario
            .parameters
            .iter()
            .find(|p| p.name == pname)
            .and_then(|p| p.unit.as_deref()),
    );
    let time_unit = unit_suffix(scenario.time.unit.as_deref());
    for s in &branch.special {
        let mut text = format!("{} at {pname} = {:.8}{value_unit}", s.kind.words(), s.value);
        if let Some(period) = s.period {
            text.push_str(&format!(", period {period:.6}{time_unit}"));
        }
        if ui
            .link(text)
            .on_hover_text("Set the parameter to this value and run the model there")
            .clicked()
            && let Some(index) = parameter
        {
            commands.push(Command::SetParameterAndRun {
                index,
                value: s.value,
            });
        }
    }
}

/// The values of `coordinate` a branch point shows: each of an orbit's points, or the state.
fn shown(p: &BranchPoint, coordinate: usize) -> Vec<f64> {
    if p.points.is_empty() {
        p.state.get(coordinate).copied().into_iter().collect()
    } else {
        p.points
            .iter()
            .filter_map(|q| q.get(coordinate).copied())
            .collect()
    }
}

/// The branch for the orbit diagram: runs of one stability in branch order (points sorted by
/// their signed arclength, so a growing branch is drawn right too) and the special points.
pub fn branch_overlay(session: &Session, coordinate: usize) -> BranchOverlay {
    let branch = &session.analysis.branch;
    if branch.is_outdated(&session.doc.scenario) {
        return BranchOverlay::default();
    }
    let mut points: Vec<&BranchPoint> = branch.points.iter().collect();
    points.sort_by(|a, b| a.arclength.total_cmp(&b.arclength));
    let mut overlay = BranchOverlay::default();
    for pair in points.windows(2) {
        let (a, b) = (pair[0], pair[1]);
        let (ya, yb) = (shown(a, coordinate), shown(b, coordinate));
        let stable = a.stable && b.stable;
        for (y0, y1) in ya.iter().zip(&yb) {
            let (from, to) = ([a.value, *y0], [b.value, *y1]);
            // extend the run of this track and stability that ends where the segment starts
            match overlay
                .runs
                .iter_mut()
                .rev()
                .find(|(run, s)| *s == stable && run.last() == Some(&from))
            {
                Some((run, _)) => run.push(to),
                None => overlay.runs.push((vec![from, to], stable)),
            }
        }
    }
    overlay.special = branch
        .special
        .iter()
        .filter_map(|s| {
            let y = s
                .points
                .first()
                .and_then(|q| q.get(coordinate))
                .or_else(|| s.state.get(coordinate))?;
            Some(([s.value, *y], s.kind.words()))
        })
        .collect();
    overlay
}
