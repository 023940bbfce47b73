//! The session's promises seen through the window (egui_kittest): a new document leaves
//! nothing of the old one behind, an orbit search can be stopped, a forced model's orbit
//! search starts on the strobe, and results of an earlier scenario are dropped or cleared.

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use lamina_explorer::{Command, ExplorerApp, RunState};

mod common;
use common::{app, harness, steps, van_der_pol_app, wait_until};

/// Runs the model and finds its periodic orbit through the analysis panel.
fn run_and_find_orbit(h: &mut Harness<'static, ExplorerApp>) {
    steps(h, 2);
    h.state_mut().command(Command::Run);
    wait_until(h, |a| !a.is_running());
    assert_eq!(*h.state().run_state(), RunState::Finished);
    h.get_by_label("Analysis").click();
    steps(h, 3);
    h.get_by_label("Find periodic orbit").click();
    steps(h, 2);
    wait_until(h, |a| !a.is_analysing());
}

#[test]
fn opening_a_demo_after_finding_an_orbit_shows_no_orbit() {
    let mut h = harness(van_der_pol_app());
    run_and_find_orbit(&mut h);
    let (period, _, _) = h.state().orbit_summary().expect("an orbit");
    // Hairer, Norsett & Wanner, Solving ODEs I, sec. I.16, ex. 1 (REFERENCES case 8)
    assert!((period - 6.663_286_859_323_13).abs() < 1e-6, "{period}");
    assert!(h.state().n_orbit_path_points() > 0, "the 3D view draws it");
    h.get_by_label_contains("verdict:");

    h.get_by_label("File").click();
    steps(&mut h, 3);
    h.get_by_label("Demo scenarios").click();
    steps(&mut h, 3);
    h.get_by_label("Tunnel diode oscillator").click();
    steps(&mut h, 3);
    // the van der Pol model was typed in, not saved: the window asks first
    h.get_by_label("Discard changes").click();
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().title, "Tunnel diode oscillator");
    assert!(h.state().orbit_summary().is_none());
    assert_eq!(h.state().n_orbit_path_points(), 0);
    assert!(h.query_by_label_contains("verdict:").is_none());
    assert_eq!(h.state().n_cut_points(), 0, "no points of the old model");
}

#[test]
fn a_stopped_orbit_search_stops() {
    let mut h = harness(van_der_pol_app());
    steps(&mut h, 2);
    h.state_mut().command(Command::Run);
    wait_until(&mut h, |a| !a.is_running());
    // a step bound this small makes each return of the map take most of a million steps:
    // the search would run for minutes (the short window keeps the scenario's own checks
    // from objecting to a run of that many steps)
    h.state_mut().edit_scenario(|s| {
        s.integrator.max_step = Some(1e-5);
        s.time.settle = 0.0;
        s.time.span = 0.01;
    });
    assert!(
        h.state().document().first_error().is_none(),
        "{:?}",
        h.state().document().first_error()
    );
    // the menu bar now says the model changed: let it lay out before clicking in it
    steps(&mut h, 3);
    h.get_by_label("Analysis").click();
    steps(&mut h, 3);
    h.get_by_label("Find periodic orbit").click();
    steps(&mut h, 3);
    assert!(h.state().is_searching_orbit());
    h.get_by_label("Stop search").click();
    steps(&mut h, 2);
    wait_until(&mut h, |a| !a.is_searching_orbit());
    assert!(h.state().orbit_summary().is_none());
    let error = h
        .state()
        .orbit_error()
        .expect("the search says it was stopped");
    assert!(error.starts_with("cancelled at t = "), "{error}");
    h.get_by_label(&error);
    assert!(h.query_by_label("searching…").is_none());
}

#[test]
fn a_forced_models_orbit_search_starts_on_the_strobe() {
    // the built-in demo is a driven resonator with a cut and a strobe
    let mut h = harness(app());
    assert!(h.state().scenario().strobe.is_some());
    steps(&mut h, 2);
    assert_eq!(h.state().orbit_map(), "strobe");
    // switching the map leaves no error of the other map behind
    h.get_by_label("Analysis").click();
    steps(&mut h, 3);
    h.state_mut()
        .command(Command::ChooseOrbitMap(lamina_explorer::OrbitMap::Cut));
    h.state_mut().command(Command::FindOrbit);
    steps(&mut h, 2);
    // the search needs the points of a run: nothing was run, so nothing is searched
    h.state_mut()
        .command(Command::ChooseOrbitMap(lamina_explorer::OrbitMap::Strobe));
    steps(&mut h, 2);
    assert_eq!(h.state().orbit_map(), "strobe");
    assert!(h.state().orbit_error().is_none());
}

#[test]
fn an_orbit_found_for_an_earlier_scenario_is_dropped_when_it_arrives() {
    let mut h = harness(van_der_pol_app());
    steps(&mut h, 2);
    h.state_mut().command(Command::Run);
    wait_until(&mut h, |a| !a.is_running());
    h.get_by_label("Analysis").click();
    steps(&mut h, 3);
    h.get_by_label("Find periodic orbit").click();
    h.step();
    assert!(h.state().is_searching_orbit());
    // the parameter changes while the search runs: its orbit belongs to mu = 1
    h.state_mut().edit_scenario(|s| s.parameters[0].value = 1.5);
    wait_until(&mut h, |a| !a.is_searching_orbit());
    assert!(h.state().orbit_summary().is_none());
    assert!(
        h.state().messages().any(|m| m.contains("was dropped")),
        "the log says why nothing is shown"
    );
}

#[test]
fn a_value_picked_in_the_orbit_diagram_clears_the_old_orbit() {
    let mut h = harness(van_der_pol_app());
    run_and_find_orbit(&mut h);
    assert!(h.state().orbit_summary().is_some());
    let runs = h.state().n_runs_started();
    // what a click in the orbit diagram asks for
    h.state_mut().command(Command::SetParameterAndRun {
        index: 0,
        value: 1.5,
    });
    steps(&mut h, 2);
    assert_eq!(h.state().scenario().parameters[0].value, 1.5);
    assert_eq!(h.state().n_runs_started(), runs + 1, "it runs there");
    assert!(h.state().orbit_summary().is_none());
    assert_eq!(h.state().n_orbit_path_points(), 0);
}

#[test]
fn taking_out_a_parameter_clears_the_orbit_diagram() {
    let mut app = app();
    app.edit_scenario(|s| {
        if let Some(sweep) = &mut s.sweep {
            sweep.values = 5;
            sweep.keep = 4;
            sweep.settle = 20.0;
            sweep.follow = false;
        }
        s.time.span = 50.0;
    });
    let mut h = harness(app);
    steps(&mut h, 2);
    h.state_mut().command(Command::StartSweep);
    wait_until(&mut h, |a| !a.is_sweeping());
    assert_eq!(h.state().n_sweep_values(), 5, "values = 5 gives 5 values");
    // the diagram's parameter index would now point at another parameter
    h.state_mut().edit_scenario(|s| {
        s.parameters.remove(0);
    });
    steps(&mut h, 2);
    assert_eq!(h.state().n_sweep_values(), 0);
    assert!(
        h.state()
            .messages()
            .any(|m| m.contains("orbit diagram was cleared"))
    );
}
