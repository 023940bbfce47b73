//! The views: the 3D trajectory, the point clouds, and the small series views.

pub mod cloud;
pub mod orbit;
pub mod palette;
pub mod regime_map;
pub mod series;
pub mod space;
