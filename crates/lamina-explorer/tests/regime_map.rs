//! The regime-map tile seen through the window (egui_kittest): it fills with the Brusselator's
//! resting and periodic cells, a hovered cell shows its values, a clicked one sets both
//! parameters and runs there, Stop stops the map, opening another scenario clears it, and
//! the model panel can remove a map block that names a parameter the model does not have.

use egui_kittest::kittest::Queryable;
use lamina_core::regime_map::Regime;
use lamina_explorer::{Command, ExplorerApp, JobKind};
use lamina_scenario::{Cut, Direction, MapAxis, Parameter, RegimeMap, State, Surface, SweepSource};

mod common;
use common::{app, harness, steps, wait_until};

/// The window on the Brusselator x' = A - (B + 1) x + x^2 y, y' = B x - x^2 y with the cut
/// x = 1 (rising) and a map of A across and B up, `n` values each.
fn brusselator_app(n: u32, b_to: f64) -> ExplorerApp {
    let mut app = app();
    app.edit_scenario(|s| {
        let state = |name: &str, start: f64, rate: &str| State {
            name: name.into(),
            start,
            rate: rate.into(),
            unit: None,
        };
        s.states = vec![
            state("x", 1.3, "a - (b + 1)*x + x^2*y"),
            state("y", 2.0, "b*x - x^2*y"),
        ];
        let parameter = |name: &str, value: f64| Parameter {
            name: name.into(),
            value,
            range: (0.0, 5.0),
            unit: None,
        };
        s.parameters = vec![parameter("a", 1.0), parameter("b", 2.0)];
        s.cut = Some(Cut {
            surface: Surface::Level("x - 1".into()),
            direction: Direction::Rising,
            axes: ("x".into(), "y".into()),
        });
        s.strobe = None;
        s.sweep = None;
        s.view = None;
        s.integrator.rtol = 1e-9;
        s.integrator.atol = 1e-12;
        s.time.settle = 10.0;
        s.time.span = 20.0;
        s.map = Some(RegimeMap {
            x: MapAxis {
                parameter: "a".into(),
                from: 0.9,
                to: 1.1,
                values: n,
            },
            y: MapAxis {
                parameter: "b".into(),
                from: 1.0,
                to: b_to,
                values: n,
            },
            settle: 120.0,
            span: 150.0,
            source: SweepSource::Cut,
        });
    });
    app
}

/// Centre of cell `(i, j)` of an `n` x `n` map drawn in `area` (the view's margins: 56 px
/// left, 4 px top, 36 px below, 150 px legend on the right).
fn cell_centre(area: egui::Rect, n: usize, i: usize, j: usize) -> egui::Pos2 {
    let grid = egui::Rect::from_min_max(
        egui::pos2(area.left() + 56.0, area.top() + 4.0),
        egui::pos2(area.right() - 150.0, area.bottom() - 36.0),
    );
    let (w, h) = (grid.width() / n as f32, grid.height() / n as f32);
    egui::pos2(
        grid.left() + (i as f32 + 0.5) * w,
        grid.bottom() - (j as f32 + 0.5) * h,
    )
}

#[test]
fn the_map_fills_with_the_brusselators_regimes_and_a_click_runs_there() {
    let mut h = harness(brusselator_app(2, 3.5));
    steps(&mut h, 2);
    h.get_by_label("Run map").click();
    steps(&mut h, 2);
    wait_until(&mut h, |a| !a.is_mapping());
    let cells = h.state().map_cells().to_vec();
    assert_eq!(cells.len(), 4);
    assert_eq!(h.state().map_total(), 4);
    for cell in &cells {
        if cell.y < 1.0 + cell.x * cell.x {
            // REFERENCES case 23 [analytic]: the resting point (A, B/A) is stable for
            // B < 1 + A^2 (here B = 1 against 1.81 and 2.21)
            assert_eq!(cell.regime, Regime::Resting, "{cell:?}");
        } else {
            // REFERENCES case 23 [analytic]: above the Hopf curve a stable limit cycle, one
            // return per turn to the cut (B = 3.5 against 1.81 and 2.21)
            assert_eq!(cell.regime, Regime::Periodic { returns: 1 }, "{cell:?}");
        }
    }
    assert!(
        h.state()
            .messages()
            .any(|m| m.starts_with("regime map done: 4 of 4 cells")),
        "the log says it is done"
    );

    // hovering the cell A = 0.9, B = 3.5 shows its values
    let area = h.get_by_label("regime map cells").rect();
    let at = cell_centre(area, 2, 0, 1);
    h.hover_at(at);
    steps(&mut h, 3);
    h.get_by_label_contains("a = 0.9, b = 3.5: periodic, 1 return, returns: 1, largest exponent");

    // clicking it sets both parameters and runs the model there
    let runs = h.state().n_runs_started();
    h.event(egui::Event::PointerButton {
        pos: at,
        button: egui::PointerButton::Primary,
        pressed: true,
        modifiers: egui::Modifiers::NONE,
    });
    h.event(egui::Event::PointerButton {
        pos: at,
        button: egui::PointerButton::Primary,
        pressed: false,
        modifiers: egui::Modifiers::NONE,
    });
    steps(&mut h, 3);
    let parameters = &h.state().scenario().parameters;
    assert_eq!((parameters[0].value, parameters[1].value), (0.9, 3.5));
    assert_eq!(h.state().n_runs_started(), runs + 1, "it runs there");
}

#[test]
fn a_stopped_map_stops_and_another_scenario_clears_it() {
    // 30 x 30 cells of 270 time units each: minutes of work, stopped after a few frames
    let mut h = harness(brusselator_app(30, 4.5));
    steps(&mut h, 2);
    h.state_mut().command(Command::StartMap);
    steps(&mut h, 2);
    assert!(h.state().is_mapping());
    h.get_by_label("Stop map").click();
    steps(&mut h, 2);
    wait_until(&mut h, |a| !a.is_mapping());
    assert!(h.state().map_cells().len() < 900, "it stopped early");

    // a second map, then another scenario while it runs: the map stops and is cleared
    h.state_mut().command(Command::StartMap);
    steps(&mut h, 2);
    assert!(h.state().is_mapping());
    h.get_by_label("File").click();
    steps(&mut h, 3);
    h.get_by_label("Demo scenarios").click();
    steps(&mut h, 3);
    h.get_by_label("Tunnel diode oscillator").click();
    steps(&mut h, 3);
    // the Brusselator was typed in, not saved: the window asks first
    h.get_by_label("Discard changes").click();
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().title, "Tunnel diode oscillator");
    assert!(!h.state().is_mapping());
    assert!(h.state().map_cells().is_empty());
    assert_eq!(h.state().map_total(), 0);
    h.state_mut().command(Command::Cancel(JobKind::RegimeMap));
    steps(&mut h, 2);
}

#[test]
fn a_map_naming_a_missing_parameter_can_be_removed_in_the_model_panel() {
    let mut h = harness(brusselator_app(2, 3.5));
    // the model is retyped with other parameter names: the map's "a" is gone
    h.state_mut().edit_scenario(|s| {
        s.parameters[0].name = "p".into();
        s.states[0].rate = "p - (b + 1)*x + x^2*y".into();
    });
    steps(&mut h, 3);
    assert!(h.state().document().first_error().is_some());
    if h.query_by_label("map two parameters").is_none() {
        // further down the panel than the window shows
        h.get_by_label("Regime map (two parameters)").scroll_to_me();
        steps(&mut h, 5);
        h.get_by_label("Regime map (two parameters)").click();
        steps(&mut h, 3);
    }
    h.get_by_label("map two parameters").scroll_to_me();
    steps(&mut h, 5);
    h.get_by_label("map two parameters").click();
    steps(&mut h, 3);
    assert!(h.state().scenario().map.is_none());
    assert!(
        h.state().document().first_error().is_none(),
        "{:?}",
        h.state().document().first_error()
    );
    // and a new one over the model's own parameters is valid at once
    h.get_by_label("map two parameters").scroll_to_me();
    steps(&mut h, 5);
    h.get_by_label("map two parameters").click();
    steps(&mut h, 3);
    let map = h.state().scenario().map.clone().expect("a map block");
    assert_eq!(
        (map.x.parameter.as_str(), map.y.parameter.as_str()),
        ("p", "b")
    );
}
