//! Lamina's explorer window: type the model, run it on a worker thread, watch the cut and
//! strobe points pile up, drag the cut, save and export.
//!
//! **Boundary:** this crate only draws and routes; every number comes from `lamina-core`,
//! every file format from `lamina-scenario` and `lamina-export`.

mod analysis;
mod app;
mod branch_panel;
mod chrome;
mod dense_path;
mod document;
mod help;
mod jobs;
mod layout;
mod map_panel;
mod model_panel;
mod rest_panel;
mod results;
mod session;
mod settings;
mod sweep_panel;
mod tables;
mod time_plot_tile;
mod views;
mod vocabulary;
mod widgets;
mod worker;

use std::path::PathBuf;

pub use app::{ExplorerApp, Options};
pub use document::DEMO_SCENARIO;
pub use help::{CAUTION, TAGLINE};
pub use results::RunState;
pub use vocabulary::{Command, DragPhase, JobKind, OrbitMap, PointSet, RecheckTarget, ViewKind};

/// The window icon: an orbit looping twice through a cut, with its four return points
/// (drawn by `assets/draw_icon.py`).
const ICON_PNG: &[u8] = include_bytes!("../../../assets/lamina_icon.png");

/// The window icon, decoded.
fn window_icon() -> Option<egui::IconData> {
    eframe::icon_data::from_png_bytes(ICON_PNG).ok()
}

/// Why the window could not open.
#[derive(Debug, thiserror::Error)]
#[error("cannot open the window: {0}")]
pub struct WindowError(String);

/// Opens the explorer window on `file`, or on the built-in demo scenario, and blocks until
/// the window is closed.
pub fn run_window(file: Option<PathBuf>) -> Result<(), WindowError> {
    let mut viewport = egui::ViewportBuilder::default().with_title("Lamina");
    if let Some(icon) = window_icon() {
        viewport = viewport.with_icon(std::sync::Arc::new(icon));
    }
    let native = eframe::NativeOptions {
        viewport: viewport
            .with_inner_size([1440.0, 900.0])
            .with_min_inner_size([900.0, 560.0])
            .with_drag_and_drop(true),
        persist_window: true,
        ..Default::default()
    };
    eframe::run_native(
        "Lamina",
        native,
        Box::new(move |cc| {
            let settings = cc
                .storage
                .and_then(settings::Settings::load)
                .unwrap_or_default();
            let options = Options {
                native_dialogs: true,
                recovery: true,
                ..Options::default()
            };
            Ok(Box::new(ExplorerApp::new(file, settings, options)))
        }),
    )
    .map_err(|e| WindowError(e.to_string()))
}

#[cfg(test)]
mod tests {
    #[test]
    fn the_window_icon_decodes_to_a_square() {
        let icon = super::window_icon().expect("assets/lamina_icon.png decodes");
        assert_eq!(icon.width, icon.height);
        assert_eq!(icon.rgba.len(), 4 * (icon.width * icon.height) as usize);
    }
}
