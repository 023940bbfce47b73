//! The small views under the main ones: the return-time sequence and the first-return map
//! (s_n against s_n+1 for a chosen coordinate).

use egui::Ui;
use egui_plot::{Line, Plot, PlotPoints, Points};

use crate::results::{AxisLabels, PointCloud};

/// Most points drawn in a small view; longer series are thinned evenly for drawing.
const MAX_SERIES_POINTS: usize = 8_000;

/// Invisible corner points that give a near-constant series a sensible vertical window, so
/// that round-off noise does not fill the view.
fn padded_corners(values: impl Iterator<Item = [f64; 2]>) -> Option<Vec<[f64; 2]>> {
    let mut e = [
        f64::INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NEG_INFINITY,
    ];
    for [x, y] in values {
        e = [e[0].min(x), e[1].min(y), e[2].max(x), e[3].max(y)];
    }
    if e[0] > e[2] {
        return None;
    }
    let scale = e[1].abs().max(e[3].abs()).max(1e-300);
    let pad = if e[3] - e[1] < 1e-6 * scale {
        1e-3 * scale
    } else {
        0.0
    };
    Some(vec![[e[0], e[1] - pad], [e[2], e[3] + pad]])
}

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
    Plot::new("return_times")
        .x_axis_label("n")
        .y_axis_label(format!("return time ({label})"))
        .show(ui, |plot_ui| {
            if let Some(corners) = padded_corners(points.iter().copied()) {
                plot_ui.points(
                    Points::new("window", PlotPoints::new(corners))
                        .radius(0.0)
                        .color(egui::Color32::TRANSPARENT),
                );
            }
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

/// s_n+1 against s_n, with the diagonal for reading fixed points.
pub fn first_return_map_ui(
    ui: &mut Ui,
    cloud: &PointCloud,
    labels: &AxisLabels,
    coordinate: &mut MapCoordinate,
) {
    ui.horizontal(|ui| {
        ui.label("s =");
        let current = match *coordinate {
            MapCoordinate::State(i) => labels.state(i),
            MapCoordinate::ReturnTime => labels.return_time(),
        };
        egui::ComboBox::from_id_salt("map_coordinate")
            .selected_text(current)
            .show_ui(ui, |ui| {
                for (i, n) in labels.states.iter().enumerate() {
                    ui.selectable_value(coordinate, MapCoordinate::State(i), n);
                }
                ui.selectable_value(coordinate, MapCoordinate::ReturnTime, labels.return_time());
            })
            .response
            .on_hover_text("Coordinate s of the first-return map s(n) to s(n+1)");
    });
    let value = |i: usize| match *coordinate {
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
    Plot::new("first_return_map")
        .x_axis_label("s(n)")
        .y_axis_label("s(n+1)")
        .data_aspect(1.0)
        .show(ui, |plot_ui| {
            if lo < hi {
                plot_ui.line(
                    Line::new("diagonal", PlotPoints::new(vec![[lo, lo], [hi, hi]]))
                        .width(0.5)
                        .color(egui::Color32::from_gray(110)),
                );
            }
            if let Some(corners) = padded_corners(
                pairs
                    .iter()
                    .map(|p| [p[0], p[1]])
                    .chain(pairs.iter().map(|p| [p[1], p[0]])),
            ) {
                plot_ui.points(
                    Points::new("window", PlotPoints::new(corners))
                        .radius(0.0)
                        .color(egui::Color32::TRANSPARENT),
                );
            }
            plot_ui.points(Points::new("s(n+1)", PlotPoints::new(pairs)).radius(1.5));
        });
}
