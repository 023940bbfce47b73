//! The small views under the main ones: the return-time sequence and the first-return map
//! (s_n against s_n+1 for a chosen coordinate).

use egui::Ui;
use egui_plot::{Line, PlotPoints, Points};

use super::plot_input;

use crate::results::{AxisLabels, PointCloud};

/// Most points drawn in a small view; longer series are thinned evenly for drawing.
const MAX_SERIES_POINTS: usize = 8_000;

/// Return time against point number.
pub fn return_times_ui(ui: &mut Ui, cloud: &PointCloud, label: &str) {
    let stride = cloud.len().div_ceil(MAX_SERIES_POINTS).max(1);
    let points: Vec<[f64; 2]> = cloud
        .return_time
        .iter()
        .enumerate()
        .step_by(stride)
        .filter(|(_, r)| r.is_finite())
        .map(|(k, r)| [k as f64, *r])
        .collect();
    let window = plot_input::range(points.iter().map(|p| p[0]))
        .zip(plot_input::range(points.iter().map(|p| p[1])))
        .and_then(|(x, y)| plot_input::fitted_window(x, y));
    plot_input::plot("return_times")
        .x_axis_label("n")
        .y_axis_label(format!("return time ({label})"))
        .show(ui, |plot_ui| {
            plot_input::wheel_zoom(plot_ui);
            plot_input::fit_to(plot_ui, window);
            plot_ui.points(Points::new("return time", PlotPoints::new(points)).radius(1.5));
        });
}

/// The coordinate of the first-return map: a state, or the return time.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum MapCoordinate {
    /// State with this index.
    State(usize),
    /// The return time.
    ReturnTime,
}

impl MapCoordinate {
    /// The coordinate the map shows when `self` is chosen for `dim` states of which the cut
    /// fixes `fixed` (a plane on one state): a coordinate the cut leaves free, since the fixed
    /// one is the same at every cut point and its map one point. The first free state
    /// replaces a fixed or missing one; with none free, the return time.
    pub fn shown(self, dim: usize, fixed: Option<usize>) -> Self {
        match self {
            Self::State(i) if i < dim && Some(i) != fixed => self,
            Self::State(_) => (0..dim)
                .find(|&i| Some(i) != fixed)
                .map_or(Self::ReturnTime, Self::State),
            Self::ReturnTime => self,
        }
    }

    /// Its label: the state's with its unit, or the return time's.
    pub fn label(self, labels: &AxisLabels) -> String {
        match self {
            Self::State(i) => labels.state(i),
            Self::ReturnTime => labels.return_time(),
        }
    }
}

/// s_n+1 against s_n, with the diagonal for reading fixed points. `fixed` is the state the
/// cut fixes when the points are cut points (not offered: its map is one point).
pub fn first_return_map_ui(
    ui: &mut Ui,
    cloud: &PointCloud,
    labels: &AxisLabels,
    coordinate: &mut MapCoordinate,
    fixed: Option<usize>,
) {
    let dim = labels.states.len();
    let shown = coordinate.shown(dim, fixed);
    ui.horizontal(|ui| {
        ui.label("s =");
        egui::ComboBox::from_id_salt("map_coordinate")
            .selected_text(shown.label(labels))
            .show_ui(ui, |ui| {
                for (i, n) in labels.states.iter().enumerate() {
                    if Some(i) == fixed {
                        ui.add_enabled(false, egui::Button::selectable(false, n))
                            .on_disabled_hover_text(
                                "The cut fixes this coordinate: its map is one point",
                            );
                    } else {
                        ui.selectable_value(coordinate, MapCoordinate::State(i), n);
                    }
                }
                ui.selectable_value(coordinate, MapCoordinate::ReturnTime, labels.return_time());
            })
            .response
            .on_hover_text("Coordinate s of the first-return map s(n) to s(n+1)");
    });
    let value = |i: usize| match shown {
        MapCoordinate::State(k) if k < cloud.dim() => cloud.coord(i, k),
        MapCoordinate::State(_) => f64::NAN,
        MapCoordinate::ReturnTime => cloud.return_time[i],
    };
    let stride = cloud.len().div_ceil(MAX_SERIES_POINTS).max(1);
    let pairs: Vec<[f64; 2]> = (1..cloud.len())
        .step_by(stride)
        .map(|i| [value(i - 1), value(i)])
        .filter(|p| p[0].is_finite() && p[1].is_finite())
        .collect();
    let (lo, hi) = pairs
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), p| {
            (lo.min(p[0]).min(p[1]), hi.max(p[0]).max(p[1]))
        });
    let window = plot_input::range(pairs.iter().flat_map(|p| [p[0], p[1]]))
        .and_then(|r| plot_input::fitted_window(r, r));
    let name = shown.label(labels);
    plot_input::plot("first_return_map")
        .x_axis_label(format!("{name}, n"))
        .y_axis_label(format!("{name}, n+1"))
        .data_aspect(1.0)
        .show(ui, |plot_ui| {
            plot_input::wheel_zoom(plot_ui);
            if lo < hi {
                plot_ui.line(
                    Line::new("diagonal", PlotPoints::new(vec![[lo, lo], [hi, hi]]))
                        .width(0.5)
                        .color(egui::Color32::from_gray(110)),
                );
            }
            plot_input::fit_to(plot_ui, window);
            plot_ui.points(Points::new("s(n+1)", PlotPoints::new(pairs)).radius(1.5));
        });
}
