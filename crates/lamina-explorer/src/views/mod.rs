//! The views: the 3D trajectory, the time plot, the point clouds, and the small series
//! views.

pub mod cloud;
pub mod orbit;
pub mod palette;
pub mod plot_input;
pub mod regime_map;
pub mod series;
pub mod space;
pub mod time_plot;
