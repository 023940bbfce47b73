//! What the views hold, read from outside the window (tests): the recorded steps, the 3D
//! view's zoom, the first-return map's coordinate.

use super::ExplorerApp;

impl ExplorerApp {
    /// Number of step ends the run recorded (what the views draw while it runs).
    pub fn n_recorded_steps(&self) -> usize {
        self.session.results.trajectory.len()
    }

    /// The 3D view's magnification (1 fits the box).
    pub fn space_zoom(&self) -> f32 {
        self.chrome.settings.space.zoom
    }
}
