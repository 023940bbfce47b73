//! Shared helpers for the window's headless tests: a window that does not start the demo's
//! run by itself, a harness around it, and stepping frames until something holds.

#![allow(dead_code)]

use std::time::Duration;

use egui_kittest::Harness;
use lamina_explorer::{ExplorerApp, Options};

/// The window on the built-in demo, without starting its run.
pub fn app() -> ExplorerApp {
    let options = Options {
        autostart: false,
        ..Options::default()
    };
    ExplorerApp::new(None, Default::default(), options)
}

/// A headless harness of 1500 x 950 around `app`.
pub fn harness(app: ExplorerApp) -> Harness<'static, ExplorerApp> {
    Harness::builder()
        .with_size(egui::vec2(1500.0, 950.0))
        .with_max_steps(20)
        // the model panel's name and unit fields have no accessible names yet
        .with_accessibility_check(false)
        .build_ui_state(|ui, app: &mut ExplorerApp| app.show_ui(ui), app)
}

/// Steps `n` frames.
pub fn steps(h: &mut Harness<'static, ExplorerApp>, n: usize) {
    for _ in 0..n {
        h.step();
    }
}

/// Steps frames until `done` holds (at most two minutes).
pub fn wait_until(h: &mut Harness<'static, ExplorerApp>, done: impl Fn(&ExplorerApp) -> bool) {
    for _ in 0..24_000 {
        h.step();
        if done(h.state()) {
            steps(h, 2);
            return;
        }
        std::thread::sleep(Duration::from_millis(5));
    }
    panic!("waited two minutes");
}
