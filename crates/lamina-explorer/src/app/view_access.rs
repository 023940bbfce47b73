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

    /// The label of the coordinate the first-return map shows (of the cut points when there
    /// are any or the scenario has a cut, else of the strobe samples).
    pub fn first_return_coordinate(&self) -> String {
        let session = &self.session;
        let source_is_cut = !session.results.cut.is_empty() || session.results.strobe.is_empty();
        let fixed = source_is_cut
            .then(|| session.doc.scenario.cut_fixed_state())
            .flatten();
        self.chrome
            .settings
            .map_coordinate
            .shown(session.results.names.len(), fixed)
            .label(&session.axis_labels())
    }
}
