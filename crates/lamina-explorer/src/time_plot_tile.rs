//! The time plot's tile among the main views: the chosen states against time, drawn from the
//! finished run's dense path (the step ends while it runs), with its CSV button.

use egui::Ui;

use crate::chrome::Chrome;
use crate::session::Session;
use crate::views::time_plot::TimeScene;
use crate::vocabulary::{Command, PointSet};

/// Draws the time plot of the session's results into `ui`.
pub fn time_plot_tile_ui(
    ui: &mut Ui,
    session: &Session,
    chrome: &mut Chrome,
    commands: &mut Vec<Command>,
) {
    let labels = session.axis_labels();
    let scene = TimeScene {
        labels: &labels,
        path: chrome.view.dense.of(&session.results),
        cut: &session.results.cut,
        strobe: &session.results.strobe,
    };
    let response = chrome.view.time_plot.ui(ui, &scene);
    if response.export_csv {
        commands.push(Command::ExportCsv(PointSet::TimeSeries));
    }
}
