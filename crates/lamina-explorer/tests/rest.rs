//! Resting points and rechecks through the window (egui_kittest): the Lorenz model's three
//! resting points listed with their stability, marked in the 3D view, outdated by a change
//! of parameter and gone with the document; a branch outdated by another equation but not by
//! a move of its own parameter; a forced model told it has none; the recheck of
//! an orbit and of a run's points showing the digits that agree.

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use lamina_explorer::{Command, ExplorerApp, RecheckTarget};

mod common;
use common::{app, harness, parameter, state, steps, van_der_pol_app, wait_until};

/// The window on the Lorenz model at sigma = 10, rho = 28, beta = 8/3, no cut or strobe.
fn lorenz_app() -> ExplorerApp {
    let mut app = app();
    app.edit_scenario(|s| {
        s.states = vec![
            state("x", 1.0, "sigma*(y - x)"),
            state("y", 1.0, "x*(rho - z) - y"),
            state("z", 1.0, "x*y - beta*z"),
        ];
        s.parameters = vec![
            parameter("sigma", 10.0, (0.0, 20.0)),
            parameter("rho", 28.0, (0.0, 50.0)),
            parameter("beta", 8.0 / 3.0, (0.0, 5.0)),
        ];
        s.cut = None;
        s.strobe = None;
        s.sweep = None;
        s.map = None;
        s.view = None;
        s.time.settle = 0.0;
        s.time.span = 20.0;
    });
    app
}

fn open_analysis(h: &mut Harness<'static, ExplorerApp>) {
    steps(h, 2);
    h.get_by_label("Analysis").click();
    steps(h, 3);
}

fn find_resting_points(h: &mut Harness<'static, ExplorerApp>) {
    h.get_by_label("Find resting points").click();
    steps(h, 2);
    wait_until(h, |a| !a.is_analysing());
}

#[test]
fn the_lorenz_resting_points_are_listed_with_their_stability() {
    let mut h = harness(lorenz_app());
    open_analysis(&mut h);
    find_resting_points(&mut h);
    let mut points = h.state().resting_points().expect("resting points");
    assert_eq!(points.len(), 3, "{points:?}");
    points.sort_by(|a, b| a.0[0].total_cmp(&b.0[0]));
    // [analytic] (REFERENCES case 20): at rho = 28 the origin is a saddle with one unstable
    // direction, and (+-sqrt 72, +-sqrt 72, 27) are saddle foci (one negative real eigenvalue
    // and a complex pair of positive real part: two unstable directions)
    let c = 72f64.sqrt();
    let origin = &points[1];
    assert!(origin.0.iter().all(|v| v.abs() < 1e-9), "{origin:?}");
    assert!(!origin.1);
    assert_eq!(origin.2, "unstable: 1 unstable direction (saddle)");
    for (point, sign) in [(&points[0], -1.0), (&points[2], 1.0)] {
        let want = [sign * c, sign * c, 27.0];
        for (v, w) in point.0.iter().zip(want) {
            assert!((v - w).abs() < 1e-8, "{point:?}");
        }
        assert!(!point.1);
        assert_eq!(point.2, "unstable: 2 unstable directions (saddle focus)");
    }
    h.get_by_label_contains("3 resting points");
    assert_eq!(h.state().n_resting_marks(), 3, "the 3D view marks them");
}

#[test]
fn a_damped_linear_models_one_resting_point_is_a_stable_focus() {
    let mut h = harness(app());
    h.state_mut().edit_scenario(|s| {
        s.states = vec![state("x", 1.0, "v"), state("v", 0.0, "-x - 0.5*v + u")];
        s.parameters = vec![parameter("u", 0.3, (0.0, 1.0))];
        s.cut = None;
        s.strobe = None;
        s.sweep = None;
        s.map = None;
        s.view = None;
        s.time.settle = 0.0;
        s.time.span = 10.0;
    });
    open_analysis(&mut h);
    find_resting_points(&mut h);
    let points = h.state().resting_points().expect("resting points");
    // [analytic]: x' = v, v' = -x - 0.5 v + u rests at (u, 0) with eigenvalues
    // -0.25 +- i sqrt(1 - 0.0625): a stable focus
    assert_eq!(points.len(), 1, "{points:?}");
    assert!((points[0].0[0] - 0.3).abs() < 1e-10 && points[0].0[1].abs() < 1e-10);
    assert!(points[0].1);
    assert_eq!(points[0].2, "stable (stable focus)");
    h.get_by_label("1. stable (stable focus)");
    h.get_by_label_contains("eigenvalues: -0.250000 + 0.968246i");

    // a new value of u outdates the point: still listed, said to be outdated, not marked
    h.state_mut().command(Command::SetParameterAndRun {
        index: 0,
        value: 0.5,
    });
    steps(&mut h, 3);
    assert!(h.state().resting_points().is_some());
    assert_eq!(h.state().n_resting_marks(), 0);
    h.get_by_label_contains("outdated");
    wait_until(&mut h, |a| !a.is_running());

    // a new document leaves nothing of them
    h.state_mut()
        .command(Command::LoadDemo("Tunnel diode oscillator"));
    steps(&mut h, 4);
    if h.query_by_label("Discard changes").is_some() {
        h.get_by_label("Discard changes").click();
        steps(&mut h, 3);
    }
    assert!(h.state().resting_points().is_none());
    assert!(h.query_by_label_contains("resting point (").is_none());
    assert!(h.query_by_label_contains("stable focus").is_none());
}

#[test]
fn the_branch_of_a_resting_point_of_x_m_minus_x_squared_turns_at_a_fold() {
    let mut h = harness(app());
    h.state_mut().edit_scenario(|s| {
        s.states = vec![state("x", 1.0, "m - x^2")];
        s.parameters = vec![parameter("m", 0.5, (-0.5, 1.0))];
        // a cut the model never crosses: the sweep block needs a source
        s.cut = Some(lamina_scenario::Cut {
            surface: lamina_scenario::Surface::Plane {
                normal: lamina_scenario::Weights(vec![("x".into(), 1.0)]),
                offset: 5.0,
            },
            direction: lamina_scenario::Direction::Rising,
            axes: ("x".into(), "x".into()),
        });
        s.strobe = None;
        s.map = None;
        s.view = None;
        s.sweep = Some(lamina_scenario::Sweep {
            parameter: "m".into(),
            from: -0.5,
            to: 1.0,
            values: 50,
            settle: 10.0,
            keep: 10,
            follow: false,
            source: lamina_scenario::SweepSource::Cut,
            coordinate: "x".into(),
        });
        s.time.settle = 0.0;
        s.time.span = 10.0;
    });
    assert!(
        h.state().document().first_error().is_none(),
        "{:?}",
        h.state().document().first_error()
    );
    open_analysis(&mut h);
    find_resting_points(&mut h);
    h.get_by_label("Follow resting point").click();
    steps(&mut h, 2);
    wait_until(&mut h, |a| !a.is_analysing());
    let (n, special) = h.state().branch_summary();
    assert!(n > 10, "{n} points");
    // [analytic] (REFERENCES case 21): x' = m - x^2 has a fold at m = 0 (x = 0)
    let folds: Vec<_> = special.iter().filter(|(k, _)| k == "fold").collect();
    assert_eq!(folds.len(), 1, "{special:?}");
    assert!(folds[0].1.abs() < 1e-7, "{special:?}");
    let link = h.get_by_label_contains("fold at m = ");
    link.click();
    steps(&mut h, 2);
    // a click on the special point sets the parameter there and runs
    assert!(h.state().scenario().parameters[0].value.abs() < 1e-7);
    wait_until(&mut h, |a| !a.is_running());
    // moving the branch's own parameter leaves the branch valid: its special points stay
    steps(&mut h, 2);
    h.get_by_label_contains("fold at m = ");
    assert!(h.query_by_label_contains("follow it again").is_none());
    // another equation outdates it: said so, and its special points are no longer offered
    h.state_mut()
        .edit_scenario(|s| s.states[0].rate = "m - x^2 + 0.25".into());
    steps(&mut h, 3);
    h.get_by_label_contains("outdated: the scenario changed since; follow it again");
    assert!(h.query_by_label_contains("fold at m = ").is_none());
    wait_until(&mut h, |a| !a.is_running());

    // a new document leaves no branch behind
    h.state_mut()
        .command(Command::LoadDemo("Tunnel diode oscillator"));
    steps(&mut h, 4);
    if h.query_by_label("Discard changes").is_some() {
        h.get_by_label("Discard changes").click();
        steps(&mut h, 3);
    }
    assert_eq!(h.state().branch_summary(), (0, Vec::new()));
    assert!(h.query_by_label_contains("fold at m = ").is_none());
}

#[test]
fn a_forced_model_is_told_it_has_no_resting_points() {
    // the built-in demo is a driven resonator (its rates use t)
    let mut h = harness(app());
    open_analysis(&mut h);
    find_resting_points(&mut h);
    assert!(h.state().resting_points().is_none());
    h.get_by_label_contains("Its steady state is a periodic orbit of the strobe map");
}

#[test]
fn a_recheck_of_the_orbit_and_the_points_shows_the_digits_that_agree() {
    let mut h = harness(van_der_pol_app());
    steps(&mut h, 2);
    h.state_mut().command(Command::Run);
    wait_until(&mut h, |a| !a.is_running());
    open_analysis(&mut h);
    h.get_by_label("Find periodic orbit").click();
    steps(&mut h, 2);
    wait_until(&mut h, |a| !a.is_analysing());
    assert!(h.state().orbit_summary().is_some());
    h.get_by_label("Recheck").click();
    steps(&mut h, 2);
    wait_until(&mut h, |a| !a.is_analysing());
    let digits = h
        .state()
        .recheck_digits(RecheckTarget::Orbit)
        .expect("a recheck")
        .expect("digits");
    // [common practice]: an orbit refined at rtol 1e-10 agrees with one refined at 1e-12 to
    // at least 7 digits (the period 6.6632868593 is known to 10, REFERENCES case 8)
    assert!(digits >= 7, "{digits}");
    h.get_by_label_contains("significant digits agree (worst:");

    h.get_by_label("Recheck points").click();
    steps(&mut h, 2);
    wait_until(&mut h, |a| !a.is_analysing());
    let digits = h
        .state()
        .recheck_digits(RecheckTarget::Points)
        .expect("a recheck")
        .expect("digits");
    // [common practice]: the crossings of a stable orbit at rtol 1e-10 and 1e-12 agree to
    // several digits
    assert!(digits >= 5, "{digits}");
}
