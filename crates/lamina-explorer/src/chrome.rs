//! The window's own state around the session: the settings remembered between sessions,
//! which side windows are open, and what the views keep for the current document.

use crate::analysis::SummaryCache;
use crate::dense_path::DensePath;
use crate::settings::Settings;
use crate::views::cloud::CloudView;
use crate::views::time_plot::TimePlotView;

/// What the views keep between frames for the current document and results: the cloud
/// views' selections and density images, and the analysis summary. Reset when the document
/// is replaced (its `generation`) and, for selections, when new results come.
#[derive(Default)]
pub struct ViewState {
    /// The session generation this state was made for.
    pub generation: u64,
    /// The results serial the selections were made in.
    pub results_serial: u64,
    /// The cut view's state.
    pub cut_view: CloudView,
    /// The strobe view's state.
    pub strobe_view: CloudView,
    /// The analysis panel's recurrence summary.
    pub summary: SummaryCache,
    /// The view picked for the orbit diagram's tile (orbit diagram or regime map; `None`:
    /// chosen from the scenario).
    pub fourth: Option<crate::vocabulary::ViewKind>,
    /// The states the time plot shows.
    pub time_plot: TimePlotView,
    /// The finished run's dense path, which the 3D view and the time plot draw.
    pub dense: DensePath,
    /// Open the model panel's notes on the next frame (a demo was just opened).
    pub open_notes: bool,
}

/// The window's own state around the session: settings, the views' state and which of the
/// side windows are open.
pub struct Chrome {
    /// Remembered between sessions.
    pub settings: Settings,
    /// What the views keep for the current document.
    pub view: ViewState,
    /// The About box is open.
    pub show_about: bool,
    /// The shortcuts window is open.
    pub show_shortcuts: bool,
    /// The analysis panel is open.
    pub show_analysis: bool,
    /// The model panel is open (it can be folded away to give the views the room).
    pub show_model: bool,
    /// The main view shown when the views are too narrow to stand side by side and become
    /// tabs (an index into the main views).
    pub main_tab: usize,
    /// The lower view shown when the lower row is too narrow and becomes tabs.
    pub lower_tab: LowerTab,
    /// The 3D view's axes and camera (turn, tilt, zoom) as the document was opened: a save
    /// writes them into the view block only when they have changed since.
    pub space_as_opened: Option<([usize; 3], [f32; 3])>,
}

/// The views of the lower row.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum LowerTab {
    /// The return times (or the strobe's sample spacing).
    #[default]
    ReturnTimes,
    /// The first-return map.
    ReturnMap,
    /// The message log.
    Messages,
}
