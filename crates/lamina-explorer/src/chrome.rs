//! The window's own state around the session: the settings remembered between sessions,
//! which side windows are open, and what the views keep for the current document.

use crate::analysis::SummaryCache;
use crate::settings::Settings;
use crate::views::cloud::CloudView;

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
    /// The 3D view's axes and camera (turn, tilt, zoom) as the document was opened: a save
    /// writes them into the view block only when they have changed since.
    pub space_as_opened: Option<([usize; 3], [f32; 3])>,
}
