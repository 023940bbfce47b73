//! What the regime map holds, read from outside the window (tests and benchmarks).

use lamina_core::regime_map::MapCell;

use super::ExplorerApp;

impl ExplorerApp {
    /// The regime map's finished cells, by cell number.
    pub fn map_cells(&self) -> &[MapCell] {
        &self.session.map.cells
    }

    /// Number of cells of the running or last regime map (0 before the first).
    pub fn map_total(&self) -> usize {
        self.session.map.total()
    }

    /// Whether the regime map is running.
    pub fn is_mapping(&self) -> bool {
        self.session.map.is_running()
    }
}
