//! The orbit-diagram view: for each parameter value of a sweep its kept points of one
//! coordinate, coloured by the recurrence detector's label (the colours of the PNG export and
//! of `lamina sweep --png`), filling in live; the model's current value marked; a click picks
//! a value. A followed branch is drawn over the cloud (stable solid, unstable dashed, special
//! points marked, legend in words).

use egui::{Color32, Mesh, Rect, Ui, vec2};
use egui_plot::{Legend, Line, LineStyle, PlotPoint, PlotPoints, Points};
use lamina_core::recurrence::RecurrenceKind;
use lamina_core::sweep::SweepColumn;

use super::plot_input;

/// Colour of a label: Lamina's one fixed colour per repeat period 1 to 12, coral for no
/// repeat, grey for not settled (`lamina_render::recurrence_colour`, as in every picture).
pub fn recurrence_colour(kind: RecurrenceKind) -> Color32 {
    let [r, g, b] = lamina_render::recurrence_colour(kind);
    Color32::from_rgb(r, g, b)
}

/// A followed branch as the diagram draws it.
#[derive(Default)]
pub struct BranchOverlay {
    /// Runs of (parameter, coordinate) points of one stability: (points, stable).
    pub runs: Vec<(Vec<[f64; 2]>, bool)>,
    /// Special points: where, and their kind in words.
    pub special: Vec<([f64; 2], &'static str)>,
}

/// Colour of a special point's mark, by its kind in words.
fn special_colour(words: &str) -> Color32 {
    match words {
        "fold" => Color32::from_rgb(250, 200, 60),
        "Hopf" => Color32::from_rgb(240, 100, 180),
        "period doubling" => Color32::from_rgb(90, 200, 250),
        "torus birth" => Color32::from_rgb(170, 130, 250),
        _ => Color32::from_rgb(250, 120, 90),
    }
}

/// Draws the diagram with `branch` over it; returns the parameter value clicked, if any.
pub fn orbit_diagram_ui(
    ui: &mut Ui,
    columns: &[(SweepColumn, RecurrenceKind)],
    coordinate: usize,
    labels: (&str, &str),
    current: Option<f64>,
    branch: &BranchOverlay,
) -> Option<f64> {
    let mut extent = [
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    for (c, _) in columns {
        for p in &c.points {
            let y = p.get(coordinate).copied().unwrap_or(f64::NAN);
            if y.is_finite() {
                extent = [
                    extent[0].min(c.value),
                    extent[1].min(y),
                    extent[2].max(c.value),
                    extent[3].max(y),
                ];
            }
        }
    }
    for p in branch.runs.iter().flat_map(|(r, _)| r) {
        if p[0].is_finite() && p[1].is_finite() {
            extent = [
                extent[0].min(p[0]),
                extent[1].min(p[1]),
                extent[2].max(p[0]),
                extent[3].max(p[1]),
            ];
        }
    }
    let branch_colour = Color32::from_rgb(235, 235, 235);
    let mut kinds: Vec<RecurrenceKind> = Vec::new();
    for (c, kind) in columns {
        if !c.points.is_empty() && !kinds.contains(kind) {
            kinds.push(*kind);
        }
    }
    kinds.sort_by_key(lamina_render::recurrence_order);
    let window = (extent[0] <= extent[2])
        .then(|| plot_input::fitted_window((extent[0], extent[2]), (extent[1], extent[3])))
        .flatten();
    let response = plot_input::plot("orbit_diagram")
        .x_axis_label(labels.0)
        .y_axis_label(labels.1)
        .legend(Legend::default())
        .show(ui, |plot_ui| {
            plot_input::wheel_zoom(plot_ui);
            // the key: one entry per label present, in the one fixed colour of its period
            for kind in &kinds {
                // added directly: `points` leaves out an empty item
                plot_ui.add(
                    Points::new(kind.to_string(), PlotPoints::new(Vec::new()))
                        .radius(3.0)
                        .color(recurrence_colour(*kind)),
                );
            }
            for (run, stable) in &branch.runs {
                let (name, style) = if *stable {
                    ("stable branch", LineStyle::Solid)
                } else {
                    ("unstable branch", LineStyle::dashed_loose())
                };
                plot_ui.line(
                    Line::new(name, PlotPoints::new(run.clone()))
                        .style(style)
                        .width(2.0)
                        .color(branch_colour),
                );
            }
            for (at, words) in &branch.special {
                plot_ui.points(
                    Points::new(*words, PlotPoints::new(vec![*at]))
                        .radius(5.0)
                        .color(special_colour(words)),
                );
            }
            plot_input::fit_to(plot_ui, window);
        });
    let transform = response.transform;
    let frame = *transform.frame();
    let painter = ui.painter_at(frame);
    let mut mesh = Mesh::default();
    for (c, kind) in columns {
        let colour = recurrence_colour(*kind);
        for p in &c.points {
            let y = p.get(coordinate).copied().unwrap_or(f64::NAN);
            let at = transform.position_from_point(&PlotPoint::new(c.value, y));
            if frame.contains(at) {
                mesh.add_colored_rect(Rect::from_center_size(at, vec2(2.0, 2.0)), colour);
            }
        }
    }
    painter.add(mesh);
    if let Some(v) = current {
        let x = transform.position_from_point(&PlotPoint::new(v, 0.0)).x;
        if frame.x_range().contains(x) {
            painter.line_segment(
                [egui::pos2(x, frame.top()), egui::pos2(x, frame.bottom())],
                egui::Stroke::new(1.0, Color32::from_rgb(240, 240, 240)),
            );
        }
    }
    let mut clicked = None;
    if response.response.clicked()
        && let Some(pointer) = response.response.interact_pointer_pos()
    {
        let value = transform.value_from_position(pointer).x;
        clicked = columns
            .iter()
            .map(|(c, _)| c.value)
            .min_by(|a, b| (a - value).abs().total_cmp(&(b - value).abs()));
    }
    clicked
}
