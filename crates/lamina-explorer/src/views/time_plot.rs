//! The time plot: the chosen states against time over the recorded window, drawn from the
//! stored run's dense output (see `dense_path.rs`), with the strobe instants (squares) and
//! the cut crossings (diamonds) marked on the lines. The wheel zooms the time axis (Ctrl and
//! the wheel both axes), dragging pans, a double click fits the whole window again. The lines, marks and colours are those of
//! `lamina_render::time_plot_png`, so the PNG shows what the screen shows.

use egui::{Color32, RichText, Ui};
use egui_plot::{Legend, Line, MarkerShape, PlotPoints, Points};

use super::plot_input::{self, fitted_window};
use crate::results::{AxisLabels, PointCloud, Trajectory};

/// Most states shown at first.
const FIRST_SHOWN: usize = 3;

/// Most marks of each kind drawn per line in the picture; more are thinned evenly.
const MAX_MARKS: usize = 4_000;

/// Least room, in points of width, per mark on screen: with more marks in the time window
/// they would hide the lines, and the key asks to zoom in instead.
const MARK_SPACING: usize = 6;

/// Which states the time plot shows.
#[derive(Clone, Debug, Default)]
pub struct TimePlotView {
    shown: Vec<bool>,
}

/// What the time plot draws.
pub struct TimeScene<'a> {
    /// Labels of the states and the time.
    pub labels: &'a AxisLabels,
    /// The path: the dense path of the finished run, or the step ends while it runs.
    pub path: &'a Trajectory,
    /// Cut points, marked on the lines.
    pub cut: &'a PointCloud,
    /// Strobe samples, marked on the lines.
    pub strobe: &'a PointCloud,
}

/// What the user asked of the time plot.
#[derive(Default)]
pub struct TimePlotResponse {
    /// The CSV of the lines drawn was asked for.
    pub export_csv: bool,
}

impl TimePlotView {
    /// The indices of the states shown (the first three until the user chooses).
    pub fn shown_states(&self, dim: usize) -> Vec<usize> {
        if self.shown.len() != dim {
            return (0..dim.min(FIRST_SHOWN)).collect();
        }
        (0..dim).filter(|&i| self.shown[i]).collect()
    }

    /// Draws the state picker and the plot into the available space.
    pub fn ui(&mut self, ui: &mut Ui, scene: &TimeScene<'_>) -> TimePlotResponse {
        let mut out = TimePlotResponse::default();
        let dim = scene.labels.states.len();
        if self.shown.len() != dim {
            self.shown = (0..dim).map(|i| i < FIRST_SHOWN).collect();
        }
        ui.horizontal_wrapped(|ui| {
            ui.label(RichText::new("show").small());
            for (i, label) in scene.labels.states.iter().enumerate() {
                let [r, g, b] = lamina_render::series_colour(self.shown_position(i));
                let text = RichText::new(label).small().color(if self.shown[i] {
                    Color32::from_rgb(r, g, b).gamma_multiply(1.4)
                } else {
                    Color32::GRAY
                });
                ui.toggle_value(&mut self.shown[i], text)
                    .on_hover_text(format!("Show or hide {label} in the time plot"));
            }
            if ui
                .small_button("CSV")
                .on_hover_text("Export the lines drawn here as CSV: t and the states shown")
                .clicked()
            {
                out.export_csv = true;
            }
        });
        let shown = self.shown_states(dim);
        let path = scene.path;
        if path.is_empty() {
            ui.centered_and_justified(|ui| {
                ui.label(RichText::new("no run yet — press Run").weak());
            });
            return out;
        }
        let t_range = plot_input::range(path.t.iter().copied());
        let v_range = plot_input::range(
            shown
                .iter()
                .flat_map(|&k| (0..path.len()).map(move |i| path.state(i)[k])),
        );
        let window = t_range.zip(v_range).and_then(|(t, v)| fitted_window(t, v));
        let y_label = shown
            .iter()
            .map(|&k| scene.labels.state(k))
            .collect::<Vec<_>>()
            .join(", ");
        plot_input::plot("time_plot")
            .x_axis_label(scene.labels.time())
            .y_axis_label(y_label)
            .legend(Legend::default())
            .show(ui, |plot_ui| {
                plot_input::wheel_zoom_time(plot_ui);
                plot_input::fit_to(plot_ui, window);
                let bounds = plot_ui.plot_bounds();
                let columns = plot_ui.response().rect.width().max(100.0) as usize;
                for (position, &k) in shown.iter().enumerate() {
                    let [r, g, b] = lamina_render::series_colour(position);
                    let colour = Color32::from_rgb(r, g, b).gamma_multiply(1.3);
                    let line = visible_line(path, k, (bounds.min()[0], bounds.max()[0]), columns);
                    plot_ui.line(
                        Line::new(scene.labels.state(k), PlotPoints::new(line))
                            .color(colour)
                            .width(1.5),
                    );
                }
                // the marks inside the time window, when they are few enough to tell apart
                // (at most one per MARK_SPACING points of width); else the key says to zoom
                let (t0, t1) = (bounds.min()[0], bounds.max()[0]);
                let room = columns / MARK_SPACING;
                let marks = |cloud: &PointCloud| -> Option<Vec<[f64; 2]>> {
                    let first = cloud.t.partition_point(|&t| t < t0);
                    let last = cloud.t.partition_point(|&t| t <= t1);
                    (last - first <= room).then(|| {
                        shown
                            .iter()
                            .filter(|&&k| k < cloud.dim())
                            .flat_map(|&k| {
                                (first..last).map(move |i| [cloud.t[i], cloud.coord(i, k)])
                            })
                            .collect()
                    })
                };
                let kinds = [
                    (scene.strobe, "strobe instant", MarkerShape::Square, 2.5, {
                        let [r, g, b] = lamina_render::STROBE_MARK;
                        Color32::from_rgb(r, g, b).lerp_to_gamma(Color32::WHITE, 0.8)
                    }),
                    (scene.cut, "cut crossing", MarkerShape::Diamond, 3.5, {
                        let [r, g, b] = lamina_render::CUT_MARK;
                        Color32::from_rgb(r, g, b)
                    }),
                ];
                for (cloud, name, shape, radius, colour) in kinds {
                    if cloud.is_empty() {
                        continue;
                    }
                    let (name, points) = match marks(cloud) {
                        Some(points) => (name.to_owned(), points),
                        None => (format!("{name}s (zoom in)"), Vec::new()),
                    };
                    // added directly: `points` leaves out an empty item, whose key entry
                    // is wanted here
                    plot_ui.add(
                        Points::new(name, PlotPoints::new(points))
                            .shape(shape)
                            .radius(radius)
                            .color(colour),
                    );
                }
            });
        out
    }

    /// Where state `i` is among the states shown (its colour), or its own index if hidden.
    fn shown_position(&self, i: usize) -> usize {
        if self.shown.get(i).copied().unwrap_or(false) {
            self.shown[..i].iter().filter(|&&s| s).count()
        } else {
            i
        }
    }
}

/// The points of state `k` of `path` inside the time range `(t0, t1)` (with one point either
/// side), thinned to the smallest and largest value per screen column when there are more
/// than four per column, so ramps and spikes stay.
fn visible_line(
    path: &Trajectory,
    k: usize,
    (t0, t1): (f64, f64),
    columns: usize,
) -> Vec<[f64; 2]> {
    let first = path.t.partition_point(|&t| t < t0).saturating_sub(1);
    let last = (path.t.partition_point(|&t| t <= t1) + 1).min(path.len());
    let points: Vec<(f64, f64)> = (first..last)
        .map(|i| (path.t[i], path.state(i)[k]))
        .collect();
    lamina_render::min_max_thinned(&points, 4 * columns.max(1))
        .into_iter()
        .map(|(t, v)| [t, v])
        .collect()
}

/// The lines of the time plot as `lamina_render` draws them: for each state shown its label,
/// its points along `path`, and its values at the strobe instants and the cut crossings.
pub fn time_series(scene: &TimeScene<'_>, shown: &[usize]) -> Vec<lamina_render::TimeSeries> {
    let path = scene.path;
    shown
        .iter()
        .map(|&k| lamina_render::TimeSeries {
            label: scene.labels.state(k),
            points: (0..path.len())
                .map(|i| (path.t[i], path.state(i)[k]))
                .collect(),
            strobe: marks_of(scene.strobe, k),
            cut: marks_of(scene.cut, k),
        })
        .collect()
}

/// `(t, value of state k)` of the points of `cloud`, thinned to [`MAX_MARKS`].
fn marks_of(cloud: &PointCloud, k: usize) -> Vec<(f64, f64)> {
    if k >= cloud.dim() {
        return Vec::new();
    }
    let stride = cloud.len().div_ceil(MAX_MARKS).max(1);
    (0..cloud.len())
        .step_by(stride)
        .map(|i| (cloud.t[i], cloud.coord(i, k)))
        .collect()
}
