//! Help: the keyboard shortcuts window and the About box with the caution paragraph.

use egui::{Context, RichText};

/// Lamina's tagline: the package description, the first line of `lamina --help` and the About
/// box's first line (tested to agree).
pub const TAGLINE: &str =
    "Poincaré sections, strobe maps, periodic orbits and orbit diagrams of typed nonlinear models";

/// The caution paragraph of the README, shown in the About box.
pub const CAUTION: &str = "Lamina's results are numerical approximations of the model you typed, not a certification of \
hardware: a design decision about equipment that can hurt someone (power electronics, actuators, medical or vehicle \
systems) needs measurement, the applicable codes and standards, and review by a licensed engineer.";

/// Keyboard shortcuts: keys and what they do.
pub const SHORTCUTS: &[(&str, &str)] = &[
    ("F5  or  Ctrl+R", "Run the scenario from the start"),
    ("Esc", "Stop the run"),
    (
        "F6",
        "Run on: integrate another span from where the run ended",
    ),
    ("Ctrl+Z", "Undo the last change to the scenario"),
    ("Ctrl+Shift+Z  or  Ctrl+Y", "Redo"),
    ("Ctrl+N", "New scenario"),
    ("Ctrl+O", "Open a scenario"),
    ("Ctrl+S", "Save"),
    ("Ctrl+Shift+S", "Save as"),
    ("F1", "This list"),
    (
        "drag in 3D view",
        "Turn the view (drag the round handle to move the cut plane)",
    ),
    (
        "wheel in a view",
        "Zoom about the pointer (the time plot: its time axis; Ctrl+wheel both axes)",
    ),
    ("drag in a 2D view", "Pan"),
    ("double-click a view", "Fit the view to the data"),
];

/// The shortcuts window.
pub fn shortcuts_window(ctx: &Context, open: &mut bool) {
    egui::Window::new("Keyboard shortcuts")
        .open(open)
        .resizable(false)
        .collapsible(false)
        .show(ctx, |ui| {
            egui::Grid::new("shortcuts")
                .num_columns(2)
                .striped(true)
                .show(ui, |ui| {
                    for (keys, what) in SHORTCUTS {
                        ui.label(RichText::new(*keys).monospace());
                        ui.label(*what);
                        ui.end_row();
                    }
                });
        });
}

/// The About box.
pub fn about_window(ctx: &Context, open: &mut bool) {
    egui::Window::new("About Lamina").open(open).resizable(false).collapsible(false).default_width(420.0).show(ctx, |ui| {
        ui.heading("Lamina");
        ui.label(format!("version {}", env!("CARGO_PKG_VERSION")));
        ui.add_space(6.0);
        ui.label(TAGLINE);
        ui.label("For engineers who need to know what their system settles into, and where that changes as a parameter moves.");
        ui.add_space(8.0);
        ui.label(RichText::new("Caution").strong());
        ui.label(CAUTION);
    });
}
