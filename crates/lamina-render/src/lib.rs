//! Lamina's headless pictures: the trajectory (3D projection), point clouds (cut points and
//! strobe samples), the time plot, orbit diagrams and branches over them, and regime maps,
//! drawn with plotters into PNG bytes, with labelled axes, a title and a caption, ready to
//! paste into a report. No window and no GPU are needed; the text uses a font embedded in the
//! binary.

mod branch;
mod dense;
mod figure;
mod map;
mod orbit;
mod plots;
pub mod span;
mod time_plot;

pub use branch::{BranchLine, BranchMark, branch_png};
pub use dense::{MAX_DENSE_SAMPLES, dense_path};
pub use figure::{Figure, RenderError, picture_title, view_names};
pub use map::{GridAxis, MapTile, regime_colour, regime_legend, regime_map_png};
pub use orbit::{orbit_diagram_png, recurrence_colour, recurrence_order};
pub use plots::{
    ColourKey, one_point_note, scatter_png, split_where_it_wraps, thousands, trajectory_png,
};
pub use time_plot::{
    CUT_MARK, STROBE_MARK, TimeSeries, min_max_thinned, series_colour, time_plot_png,
};
