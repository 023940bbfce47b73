//! From a scenario to the core's specifications and indices.

mod common;

use common::{EXAMPLE, MINIMAL, edit, load};
use lamina_core::integrate::Method;
use lamina_core::run::{self, SurfaceSpec};
use lamina_core::sweep::SweepSource;
use lamina_scenario::{MapAxisSpec, MethodChoice, RegimeMapSpec, ViewAxis};

#[test]
fn the_model_spec_keeps_names_values_and_order() {
    let spec = load(EXAMPLE).model_spec();
    assert_eq!(spec.states.len(), 2);
    assert_eq!(spec.states[0].name, "x");
    assert_eq!(spec.states[0].start, 0.1);
    assert_eq!(spec.states[1].rate, "-2*zeta*v - x - k3*x^3 + a*cos(w*t)");
    let params: Vec<(&str, f64)> = spec
        .parameters
        .iter()
        .map(|p| (p.name.as_str(), p.value))
        .collect();
    assert_eq!(
        params,
        [("zeta", 0.05), ("k3", 1.0), ("a", 0.3), ("w", 1.2)]
    );
}

#[test]
fn the_run_spec() {
    let run = load(EXAMPLE).run_spec();
    assert_eq!(run.method, Method::Automatic);
    assert_eq!((run.control.rtol, run.control.atol), (1e-9, 1e-12));
    assert_eq!(run.control.max_step, None);
    assert_eq!((run.t_start, run.settle, run.span), (0.0, 200.0, 2000.0));
    assert_eq!((run.max_points, run.escape), (200_000, 1e6));

    let run = load(MINIMAL).run_spec();
    assert_eq!(run.method, Method::Dp5);
    assert_eq!((run.max_points, run.escape), (200_000, 1e6)); // limits left out
    let text = edit(
        EXAMPLE,
        "method: Automatic, rtol: 1e-9, atol: 1e-12",
        "method: Dp853, rtol: 1e-9, atol: 1e-12, max_step: 0.5",
    );
    let run = load(&text).run_spec();
    assert_eq!(
        (run.method, run.control.max_step),
        (Method::Dp853, Some(0.5))
    );
}

#[test]
fn method_choices() {
    assert_eq!(MethodChoice::Automatic.method(), Some(Method::Automatic));
    assert_eq!(MethodChoice::Dp5.method(), Some(Method::Dp5));
    assert_eq!(MethodChoice::Dp853.method(), Some(Method::Dp853));
    assert_eq!(MethodChoice::Stiff.method(), Some(Method::Rodas4));
}

#[test]
fn cut_and_strobe_specs() {
    let scenario = load(EXAMPLE);
    let cut = scenario.cut_spec().expect("cut");
    assert_eq!(
        cut.surface,
        SurfaceSpec::Plane {
            normal: vec![("v".to_owned(), 1.0)],
            offset: 0.0
        }
    );
    assert_eq!(cut.direction, run::Direction::Falling);
    let strobe = scenario.strobe_spec().expect("strobe");
    assert_eq!((strobe.period.as_str(), strobe.first_at), ("2*pi/w", 0.0));

    let text = edit(
        EXAMPLE,
        "Plane(normal: {\"v\": 1.0}, offset: 0.0)",
        "Level(\"x - 0.5\")",
    );
    let text = edit(&text, "direction: Falling", "direction: Both");
    let cut = load(&text).cut_spec().expect("cut");
    assert_eq!(cut.surface, SurfaceSpec::Level("x - 0.5".to_owned()));
    assert_eq!(cut.direction, run::Direction::Both);

    let minimal = load(MINIMAL);
    assert_eq!(minimal.cut_spec(), None);
    assert_eq!(minimal.strobe_spec(), None);
}

#[test]
fn indices_by_name() {
    let scenario = load(EXAMPLE);
    assert_eq!(scenario.state_index("v"), Some(1));
    assert_eq!(scenario.state_index("w"), None);
    assert_eq!(scenario.parameter_index("w"), Some(3));
    assert_eq!(scenario.cut_axes(), Some([0, 1]));
    assert_eq!(scenario.strobe_axes(), Some([0, 1]));
    assert_eq!(scenario.sweep_parameter_index(), Some(2));
    assert_eq!(scenario.sweep_coordinate_index(), Some(0));
    assert_eq!(scenario.view_axes(), None);

    let text = edit(
        EXAMPLE,
        "axes: (\"x\", \"v\"),\n",
        "axes: (\"v\", \"q\"),\n",
    );
    assert_eq!(load(&text).cut_axes(), None);

    let text = edit(
        EXAMPLE,
        "    limits: (max_points: 200000, escape: 1e6),",
        "    view: Some((axes: Some((\"v\", \"t\", \"x\")))),",
    );
    assert_eq!(
        load(&text).view_axes(),
        Some([ViewAxis::State(1), ViewAxis::Time, ViewAxis::State(0)])
    );
}

#[test]
fn directions_convert_both_ways() {
    for d in [
        run::Direction::Rising,
        run::Direction::Falling,
        run::Direction::Both,
    ] {
        assert_eq!(run::Direction::from(lamina_scenario::Direction::from(d)), d);
    }
}

#[test]
fn the_sweep_spec_counts_values() {
    let sweep = load(EXAMPLE).sweep_spec().expect("sweep");
    assert_eq!(
        (sweep.parameter, sweep.values, sweep.n_values()),
        (2, 301, 301)
    );
    assert_eq!((sweep.from, sweep.to, sweep.keep), (0.1, 0.6, 64));
    assert_eq!((sweep.settle, sweep.span), (300.0, 2000.0));
    assert_eq!(sweep.source, SweepSource::Strobe);
    // [analytic] 0.1 + 150 * 0.5 / 300 = 0.35
    assert_eq!(sweep.value(150), 0.35);
}

#[test]
fn the_map_spec_names_its_parameters_by_index() {
    let map = load(EXAMPLE).map_spec().expect("map");
    assert_eq!(
        map,
        RegimeMapSpec {
            x: MapAxisSpec {
                parameter: 2,
                from: 0.1,
                to: 0.6,
                values: 101,
            },
            y: MapAxisSpec {
                parameter: 3,
                from: 0.8,
                to: 1.6,
                values: 81,
            },
            settle: 300.0,
            span: 300.0,
            source: SweepSource::Strobe,
        }
    );
    assert_eq!(map.n_cells(), 101 * 81);
    // [analytic] 0.8 + 40 * 0.8 / 80 = 1.2, and the ends exactly
    assert_eq!(map.y.value(40), 1.2);
    assert_eq!((map.x.value(0), map.x.value(100)), (0.1, 0.6));
    assert_eq!(load(MINIMAL).map_spec(), None);
    let text = edit(EXAMPLE, "(parameter: \"w\"", "(parameter: \"q\"");
    assert_eq!(load(&text).map_spec(), None);
}

#[test]
fn labels_carry_units() {
    let scenario = load(EXAMPLE);
    assert_eq!(scenario.state_label(0), "x (um)");
    assert_eq!(scenario.state_label(1), "v");
    assert_eq!(scenario.parameter_label(2), "a (N)");
    assert_eq!(scenario.parameter_label(3), "w");
    assert_eq!(scenario.time_label(), "t (us)");
    assert_eq!(
        scenario.caption(),
        "zeta = 0.05, k3 = 1, a = 0.3 N, w = 1.2   |   t from 200 to 2200 us, rtol 1e-9, atol 1e-12"
    );
    let minimal = load(MINIMAL);
    assert_eq!(minimal.time_label(), "t");
    assert_eq!(
        minimal.caption(),
        "c = 0.2   |   t from 0 to 50, rtol 1e-8, atol 1e-10"
    );
    // very large and small numbers in short form, not hundreds of digits
    let mut extreme = minimal;
    extreme.parameters[0].value = 1e308;
    extreme.time.start = 1e-300;
    assert_eq!(
        extreme.caption(),
        "c = 1e308   |   t from 1e-300 to 50, rtol 1e-8, atol 1e-10"
    );
}

#[test]
fn compiling_gives_the_model_cut_strobe_and_run_together() {
    let scenario = load(EXAMPLE);
    let compiled = scenario.compile().expect("the example compiles");
    assert_eq!(compiled.model.names().states, ["x", "v"]);
    assert!(compiled.cut.is_some());
    // [analytic] the strobe period 2*pi/w at w = 1.2
    let period = compiled.strobe.as_ref().expect("a strobe").period;
    assert!((period - 2.0 * std::f64::consts::PI / 1.2).abs() < 1e-12);
    assert_eq!(compiled.run, scenario.run_spec());
    assert_eq!(compiled.strobe_spec, scenario.strobe_spec());

    let minimal = load(MINIMAL)
        .compile()
        .expect("the minimal scenario compiles");
    assert!(minimal.cut.is_none() && minimal.strobe.is_none() && minimal.sweep.is_none());
}

#[test]
fn a_strobe_that_does_not_compile_is_named() {
    let mut scenario = load(EXAMPLE);
    if let Some(strobe) = &mut scenario.strobe {
        strobe.period = "2*pi/nothing".into();
    }
    let err = scenario
        .compile()
        .expect_err("the strobe period names no parameter");
    assert!(matches!(
        err,
        lamina_scenario::ScenarioError::Compile {
            field: "strobe",
            ..
        }
    ));
    assert!(err.to_string().starts_with("strobe: "), "{err}");
}
