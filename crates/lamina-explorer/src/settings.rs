//! What the window remembers between sessions (eframe persistence): recent files, layout
//! and view choices. Worker handles and results are never persisted.

use std::path::PathBuf;

use crate::views::cloud::ColourBy;
use crate::views::series::MapCoordinate;
use crate::views::space::SpaceView;

/// Key under which the settings are stored.
const KEY: &str = "lamina-explorer-settings";
/// How many recent files are remembered.
const MAX_RECENT: usize = 10;

/// Remembered between sessions.
#[derive(Clone, Debug, serde::Serialize, serde::Deserialize)]
#[serde(default)]
pub struct Settings {
    /// Most recent first.
    pub recent: Vec<PathBuf>,
    /// Relative widths of the main views (trajectory, cut, strobe, orbit diagram).
    pub tile_weights: [f32; 4],
    /// Relative width of the time plot beside the other main views.
    pub time_plot_weight: f32,
    /// The maximised view, if any.
    pub maximised: Option<usize>,
    /// Colouring of the cut view.
    pub cut_colour: ColourBy,
    /// Colouring of the strobe view.
    pub strobe_colour: ColourBy,
    /// Coordinate of the first-return map.
    pub map_coordinate: MapCoordinate,
    /// Camera of the 3D view.
    pub space: SpaceView,
    /// Width and height for PNG exports.
    pub png_size: [u32; 2],
}

impl Default for Settings {
    fn default() -> Self {
        Self {
            recent: Vec::new(),
            tile_weights: [1.0, 1.0, 1.0, 1.2],
            time_plot_weight: 1.2,
            maximised: None,
            cut_colour: ColourBy::Arrival,
            strobe_colour: ColourBy::Arrival,
            map_coordinate: MapCoordinate::State(0),
            space: SpaceView::default(),
            png_size: [1200, 900],
        }
    }
}

impl Settings {
    /// Reads the settings from eframe's storage.
    pub fn load(storage: &dyn eframe::Storage) -> Option<Self> {
        eframe::get_value(storage, KEY)
    }

    /// Writes them.
    pub fn store(&self, storage: &mut dyn eframe::Storage) {
        eframe::set_value(storage, KEY, self);
    }

    /// Puts `path` first in the recent list.
    pub fn remember(&mut self, path: PathBuf) {
        self.recent.retain(|p| *p != path);
        self.recent.insert(0, path);
        self.recent.truncate(MAX_RECENT);
    }
}
