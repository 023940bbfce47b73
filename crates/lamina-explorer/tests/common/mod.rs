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

/// A state of a typed-in model, without a unit.
pub fn state(name: &str, start: f64, rate: &str) -> lamina_scenario::State {
    lamina_scenario::State {
        name: name.into(),
        start,
        rate: rate.into(),
        unit: None,
    }
}

/// A parameter of a typed-in model, without a unit.
pub fn parameter(name: &str, value: f64, range: (f64, f64)) -> lamina_scenario::Parameter {
    lamina_scenario::Parameter {
        name: name.into(),
        value,
        range,
        unit: None,
    }
}

/// The window on the van der Pol oscillator x'' - mu (1 - x^2) x' + x = 0, mu = 1, with a
/// cut at v = 0 (falling).
pub fn van_der_pol_app() -> ExplorerApp {
    let mut app = app();
    app.edit_scenario(|s| {
        s.states = vec![state("x", 2.0, "v"), state("v", 0.0, "mu*(1 - x^2)*v - x")];
        s.parameters = vec![parameter("mu", 1.0, (0.0, 2.0))];
        s.cut = Some(lamina_scenario::Cut {
            surface: lamina_scenario::Surface::Plane {
                normal: lamina_scenario::Weights(vec![("v".into(), 1.0)]),
                offset: 0.0,
            },
            direction: lamina_scenario::Direction::Falling,
            axes: ("x".into(), "v".into()),
        });
        s.strobe = None;
        s.sweep = None;
        s.map = None;
        s.view = None;
        s.integrator.rtol = 1e-10;
        s.integrator.atol = 1e-12;
        s.time.settle = 60.0;
        s.time.span = 60.0;
    });
    app
}
