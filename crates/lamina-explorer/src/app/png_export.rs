//! PNG export of a view: the view's data (with its axes and colouring as chosen on screen) is
//! drawn again by `lamina-render` at the size asked for, on a helper thread, and written
//! atomically. The picture is the report form (white background, labelled axes, title and a
//! caption with the parameter values), the same as `lamina render` draws.

use std::path::PathBuf;

use lamina_render::{
    ColourKey, Figure, GridAxis, MapTile, orbit_diagram_png, picture_title, regime_map_png,
    scatter_png, split_where_it_wraps, trajectory_png,
};

use super::ExplorerApp;
use crate::results::PointCloud;
use crate::views::cloud::ColourBy;
use crate::views::series::MapCoordinate;
use crate::views::space::{axis_name, axis_value};
use crate::views::time_plot::{TimeScene, time_series};
use crate::vocabulary::{PngError, ViewKind};

/// What a picture draws.
enum Drawing {
    /// Points, coloured by arrival or by values (with the values' label) if given.
    Scatter {
        points: Vec<(f64, f64)>,
        colour: Option<ScatterColour>,
    },
    /// Pieces of a 3D line.
    Trajectory {
        z_label: String,
        pieces: Vec<Vec<(f64, f64, f64)>>,
    },
    /// Columns of an orbit diagram with their labels from the recurrence detector.
    Orbit {
        columns: Vec<(f64, Vec<f64>)>,
        kinds: Vec<lamina_core::recurrence::RecurrenceKind>,
    },
    /// The time plot's lines.
    Time {
        series: Vec<lamina_render::TimeSeries>,
    },
    /// The cells of a regime map on their grid.
    Map {
        x_axis: GridAxis,
        y_axis: GridAxis,
        tiles: Vec<MapTile>,
    },
}

/// How a scatter picture colours its points, with its key.
enum ScatterColour {
    /// By arrival order.
    Arrival,
    /// By these values, named by the label.
    Value(Vec<f64>, String),
}

/// A picture to draw and where to write it.
pub(crate) struct PngJob {
    path: PathBuf,
    figure: Figure,
    drawing: Drawing,
}

impl PngJob {
    /// Draws the picture and writes it; the message for the log, or why it failed.
    pub(crate) fn run(self) -> Result<String, PngError> {
        let bytes = match &self.drawing {
            Drawing::Scatter { points, colour } => {
                let key = colour.as_ref().map(|c| match c {
                    ScatterColour::Arrival => ColourKey::Arrival,
                    ScatterColour::Value(keys, label) => ColourKey::Value { keys, label },
                });
                scatter_png(&self.figure, points, key)
            }
            Drawing::Trajectory { z_label, pieces } => {
                trajectory_png(&self.figure, z_label, pieces)
            }
            Drawing::Time { series } => lamina_render::time_plot_png(&self.figure, series),
            Drawing::Orbit { columns, kinds } => {
                orbit_diagram_png(&self.figure, columns, Some(kinds))
            }
            Drawing::Map {
                x_axis,
                y_axis,
                tiles,
            } => regime_map_png(&self.figure, *x_axis, *y_axis, tiles),
        }?;
        lamina_export::write_bytes_atomically(&self.path, &bytes)?;
        let (w, h) = self.figure.size;
        Ok(format!("wrote {} ({w}×{h})", self.path.display()))
    }
}

impl ExplorerApp {
    /// The picture of `view` as it is on screen, at the chosen export size; why not, if the
    /// view has nothing to draw.
    pub(crate) fn png_job(&self, view: ViewKind, path: PathBuf) -> Result<PngJob, PngError> {
        let labels = self.session.axis_labels();
        let session = &self.session;
        let scenario = &session.doc.scenario;
        let title = |view: ViewKind| picture_title(&scenario.title, view.title());
        let [w, h] = self.chrome.settings.png_size;
        let figure = |title: String, x_label: String, y_label: String| Figure {
            size: (w, h),
            title,
            caption: scenario.caption(),
            x_label,
            y_label,
        };
        let (figure, drawing) = match view {
            ViewKind::Cut | ViewKind::Strobe => {
                let (cloud, axes, colour) = if view == ViewKind::Cut {
                    (
                        &session.results.cut,
                        session.cut_axes(),
                        self.chrome.settings.cut_colour,
                    )
                } else {
                    (
                        &session.results.strobe,
                        session.strobe_axes(),
                        self.chrome.settings.strobe_colour,
                    )
                };
                let [a, b] = axes.ok_or(PngError::Empty(
                    "the view has no axes: switch the cut or strobe on",
                ))?;
                nonempty(cloud)?;
                let points = (0..cloud.len())
                    .map(|i| (cloud.value(i, a), cloud.value(i, b)))
                    .collect();
                let colour = match colour {
                    ColourBy::Arrival => ScatterColour::Arrival,
                    ColourBy::ReturnTime => {
                        ScatterColour::Value(cloud.return_time.clone(), labels.return_time())
                    }
                };
                (
                    figure(title(view), a.label(&labels), b.label(&labels)),
                    Drawing::Scatter {
                        points,
                        colour: Some(colour),
                    },
                )
            }
            ViewKind::ReturnTimes | ViewKind::ReturnMap => {
                let cloud = if session.results.cut.is_empty() {
                    &session.results.strobe
                } else {
                    &session.results.cut
                };
                nonempty(cloud)?;
                if view == ViewKind::ReturnTimes {
                    let points = (0..cloud.len())
                        .map(|i| (i as f64, cloud.return_time[i]))
                        .collect();
                    (
                        figure(title(view), "n".into(), labels.return_time()),
                        Drawing::Scatter {
                            points,
                            colour: None,
                        },
                    )
                } else {
                    let fixed = if session.results.cut.is_empty() {
                        None
                    } else {
                        scenario.cut_fixed_state()
                    };
                    let coordinate = self
                        .chrome
                        .settings
                        .map_coordinate
                        .shown(cloud.dim(), fixed);
                    let value = |i: usize| match coordinate {
                        MapCoordinate::State(k) if k < cloud.dim() => cloud.coord(i, k),
                        MapCoordinate::State(_) => f64::NAN,
                        MapCoordinate::ReturnTime => cloud.return_time[i],
                    };
                    let name = coordinate.label(&labels);
                    let points = (1..cloud.len()).map(|i| (value(i - 1), value(i))).collect();
                    (
                        figure(title(view), format!("{name}, n"), format!("{name}, n+1")),
                        Drawing::Scatter {
                            points,
                            colour: None,
                        },
                    )
                }
            }
            ViewKind::TimePlot => {
                let path = crate::dense_path::path_of(&session.results);
                if path.is_empty() {
                    return Err(PngError::Empty("run the model first"));
                }
                let shown = self
                    .chrome
                    .view
                    .time_plot
                    .shown_states(session.results.names.len());
                if shown.is_empty() {
                    return Err(PngError::Empty("choose a state to show"));
                }
                let scene = TimeScene {
                    labels: &labels,
                    path: &path,
                    cut: &session.results.cut,
                    strobe: &session.results.strobe,
                };
                let y_label = shown
                    .iter()
                    .map(|&k| labels.state(k))
                    .collect::<Vec<_>>()
                    .join(", ");
                (
                    figure(title(view), labels.time(), y_label),
                    Drawing::Time {
                        series: time_series(&scene, &shown),
                    },
                )
            }
            ViewKind::Trajectory => {
                let traj = &*crate::dense_path::path_of(&session.results);
                if traj.is_empty() {
                    return Err(PngError::Empty("run the model first"));
                }
                let axes = self.chrome.settings.space.axes;
                let period = session.results.strobe_period;
                let points = (0..traj.len()).map(|i| {
                    let (s, t) = (traj.state(i), traj.t[i]);
                    let [a, b, c] = axes.map(|axis| axis_value(axis, s, t, period));
                    (a, b, c)
                });
                // a new piece of line wherever the time within the period wraps around
                let wrapping_axis = axes.iter().position(|&a| a == traj.dim() + 1);
                let pieces = split_where_it_wraps(points, wrapping_axis.zip(period));
                (
                    figure(
                        title(view),
                        axis_name(axes[0], &labels),
                        axis_name(axes[1], &labels),
                    ),
                    Drawing::Trajectory {
                        z_label: axis_name(axes[2], &labels),
                        pieces,
                    },
                )
            }
            ViewKind::Orbit => {
                let (Some((_, coordinate)), false) =
                    (session.sweep.axes, session.sweep.columns.is_empty())
                else {
                    return Err(PngError::Empty("run the sweep first"));
                };
                let columns: Vec<(f64, Vec<f64>)> = session
                    .sweep
                    .columns
                    .iter()
                    .map(|(c, _)| {
                        let values = c
                            .points
                            .iter()
                            .filter_map(|p| p.get(coordinate).copied())
                            .collect();
                        (c.value, values)
                    })
                    .collect();
                let kinds = session.sweep.columns.iter().map(|(_, k)| *k).collect();
                let mut figure = figure(
                    title(view),
                    session.swept_parameter_label(),
                    labels.state(coordinate),
                );
                if let Some(spec) = &session.sweep.spec {
                    figure.caption = scenario.sweep_caption(spec);
                }
                (figure, Drawing::Orbit { columns, kinds })
            }
            ViewKind::RegimeMap => {
                let (Some(spec), false) = (&session.map.spec, session.map.cells.is_empty()) else {
                    return Err(PngError::Empty("run the regime map first"));
                };
                let axis = |a: &lamina_core::regime_map::MapAxisSpec| GridAxis {
                    from: a.from,
                    to: a.to,
                    values: a.values,
                };
                let tiles = (session.map.cells.iter())
                    .map(|c| MapTile {
                        x: c.x,
                        y: c.y,
                        regime: c.regime,
                    })
                    .collect();
                let mut figure = figure(
                    title(view),
                    session.map.labels.0.clone(),
                    session.map.labels.1.clone(),
                );
                figure.caption = scenario.map_caption(spec);
                (
                    figure,
                    Drawing::Map {
                        x_axis: axis(&spec.x),
                        y_axis: axis(&spec.y),
                        tiles,
                    },
                )
            }
        };
        Ok(PngJob {
            path,
            figure,
            drawing,
        })
    }
}

/// An error if `cloud` has no points.
fn nonempty(cloud: &PointCloud) -> Result<(), PngError> {
    if cloud.is_empty() {
        Err(PngError::Empty("run the model first"))
    } else {
        Ok(())
    }
}
