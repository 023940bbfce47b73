//! Shared helpers for the core's integration tests: building models from typed text.

#![allow(dead_code)]

use lamina_core::Interrupt;
use lamina_core::cycle::{
    CycleReport, FlowMap, MapKind, MapPoint, MapSettings, NewtonSettings, find_cycle,
};
use lamina_core::expr::Names;
use lamina_core::integrate::{Method, StepControl};
use lamina_core::model::{Model, ModelSpec, ParameterSpec, StateSpec};
use lamina_core::recurrence::close_returns;
use lamina_core::run::{
    Collect, Cut, CutSpec, Direction, Run, RunOutcome, RunSpec, Strobe, StrobeSpec, SurfaceSpec,
};
use proptest::prelude::*;

/// A model from `(name, start, rate)` states and `(name, value)` parameters.
pub fn model(states: &[(&str, f64, &str)], parameters: &[(&str, f64)]) -> Model {
    Model::compile(&model_spec(states, parameters)).unwrap_or_else(|e| panic!("{e}"))
}

/// The Lorenz system (10, 28, 8/3) with states `x`, `y`, `z` from `start` and parameters
/// `s`, `r`, `b`.
pub fn lorenz_from(start: [f64; 3]) -> Model {
    let [x, y, z] = start;
    model(
        &[
            ("x", x, "s*(y - x)"),
            ("y", y, "x*(r - z) - y"),
            ("z", z, "x*y - b*z"),
        ],
        &[("s", 10.0), ("r", 28.0), ("b", 8.0 / 3.0)],
    )
}

/// The spec of [`model`].
pub fn model_spec(states: &[(&str, f64, &str)], parameters: &[(&str, f64)]) -> ModelSpec {
    ModelSpec {
        states: states
            .iter()
            .map(|(name, start, rate)| StateSpec {
                name: name.to_string(),
                start: *start,
                rate: rate.to_string(),
            })
            .collect(),
        parameters: parameters
            .iter()
            .map(|(name, value)| ParameterSpec {
                name: name.to_string(),
                value: *value,
            })
            .collect(),
    }
}

/// Run settings with one method, tolerance `tol` for both rtol and atol, and a window.
pub fn spec(method: Method, tol: f64, settle: f64, span: f64) -> RunSpec {
    RunSpec {
        method,
        control: StepControl {
            rtol: tol,
            atol: tol,
            max_step: None,
            initial_step: None,
        },
        settle,
        span,
        max_points: usize::MAX,
        ..RunSpec::default()
    }
}

/// A plane cut from `(state, weight)` pairs.
pub fn plane(model: &Model, normal: &[(&str, f64)], offset: f64, direction: Direction) -> Cut {
    let spec = CutSpec {
        surface: SurfaceSpec::Plane {
            normal: normal.iter().map(|(n, w)| (n.to_string(), *w)).collect(),
            offset,
        },
        direction,
    };
    Cut::compile(&spec, model).unwrap_or_else(|e| panic!("{e}"))
}

/// A level-surface cut.
pub fn level(model: &Model, expression: &str, direction: Direction) -> Cut {
    let spec = CutSpec {
        surface: SurfaceSpec::Level(expression.to_string()),
        direction,
    };
    Cut::compile(&spec, model).unwrap_or_else(|e| panic!("{e}"))
}

/// A strobe with a period expression.
pub fn strobe(model: &Model, period: &str, first_at: f64) -> Strobe {
    Strobe::compile(
        &StrobeSpec {
            period: period.to_string(),
            first_at,
        },
        model,
    )
    .unwrap_or_else(|e| panic!("{e}"))
}

/// Runs to the end and collects every point.
pub fn collect(
    model: Model,
    spec: RunSpec,
    cut: Option<Cut>,
    strobe: Option<Strobe>,
) -> (Collect, RunOutcome) {
    let mut sink = Collect::default();
    let outcome = Run::new(model, spec, cut, strobe, false).execute(&mut sink, &Interrupt::new());
    (sink, outcome)
}

/// Relative difference.
pub fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(f64::MIN_POSITIVE)
}

/// Both explicit methods and the automatic choice (which on a non-stiff model stays with
/// DOP853).
pub const METHODS: [Method; 3] = [Method::Dp5, Method::Dp853, Method::Automatic];

/// Run settings at tolerance `tol` with a settle and a recorded span.
pub fn window(tol: f64, settle: f64, span: f64) -> RunSpec {
    spec(Method::Dp853, tol, settle, span)
}

/// The settled cut points of a run, as map points.
pub fn cut_cloud(model: &Model, cut: &Cut, run: &RunSpec) -> Vec<MapPoint> {
    let (points, _) = collect(model.clone(), run.clone(), Some(cut.clone()), None);
    points
        .cut_points
        .into_iter()
        .map(|p| MapPoint {
            t: p.t,
            state: p.state,
        })
        .collect()
}

/// The settled strobe samples of a run, as map points.
pub fn strobe_cloud(model: &Model, strobe: Strobe, run: &RunSpec) -> Vec<MapPoint> {
    let (points, _) = collect(model.clone(), run.clone(), None, Some(strobe));
    points
        .strobe_samples
        .into_iter()
        .map(|p| MapPoint {
            t: p.t,
            state: p.state,
        })
        .collect()
}

/// Finds the period-`k` orbit of `kind` seeded from the closest returns of `cloud`.
pub fn cycle_from(
    model: &Model,
    kind: MapKind,
    run: &RunSpec,
    cloud: &[MapPoint],
    k: usize,
) -> CycleReport {
    let settings = MapSettings::from_run(run, 100.0);
    let mut map = FlowMap::new(model.clone(), kind, settings).unwrap_or_else(|e| panic!("{e}"));
    let seeds: Vec<MapPoint> = close_returns(cloud, k, 4)
        .iter()
        .map(|r| cloud[r.index].clone())
        .collect();
    find_cycle(
        &mut map,
        &seeds,
        k,
        &NewtonSettings::for_rtol(run.control.rtol),
    )
    .unwrap_or_else(|e| panic!("{e}"))
}

/// The harmonic oscillator x' = v, v' = -w^2 x from (1, 0.3).
pub fn harmonic(w: f64) -> Model {
    model(&[("x", 1.0, "v"), ("v", 0.3, "-w^2*x")], &[("w", w)])
}

/// The names of `states` and `parameters`.
pub fn names(states: &[&str], parameters: &[&str]) -> Names {
    Names {
        states: states.iter().map(|s| s.to_string()).collect(),
        parameters: parameters.iter().map(|s| s.to_string()).collect(),
    }
}

/// Random expressions over x, y (states), a, b (parameters) and t, using every operator and
/// function (values may leave a function's domain: NaN must then agree too).
pub fn any_expression() -> impl Strategy<Value = String> {
    let leaf = prop_oneof![
        Just("x".to_string()),
        Just("y".to_string()),
        Just("a".to_string()),
        Just("b".to_string()),
        Just("t".to_string()),
        Just("pi".to_string()),
        (-3.0f64..3.0).prop_map(|c| format!("{c:.3}")),
        (0u32..4).prop_map(|c| c.to_string()),
    ];
    let f1 = prop_oneof![
        Just("sin"),
        Just("cos"),
        Just("tan"),
        Just("asin"),
        Just("acos"),
        Just("atan"),
        Just("sinh"),
        Just("cosh"),
        Just("tanh"),
        Just("exp"),
        Just("ln"),
        Just("log10"),
        Just("sqrt"),
        Just("abs"),
        Just("sign"),
        Just("floor"),
        Just("ceil"),
        Just("step"),
    ];
    let f2 = prop_oneof![Just("atan2"), Just("min"), Just("max")];
    let quad = (
        prop_oneof![Just("+"), Just("-")],
        prop_oneof![Just("+"), Just("-")],
        0usize..4,
    );
    let op = prop_oneof![
        Just("+"),
        Just("-"),
        Just("*"),
        Just("/"),
        Just("%"),
        Just("^")
    ];
    leaf.prop_recursive(5, 40, 2, move |inner| {
        let four = (inner.clone(), inner.clone(), inner.clone(), inner.clone());
        prop_oneof![
            // the shapes fused on four leaves: a*b ± c*d, (a ± b)*c ± d, d - (a ± b)*c
            2 => (four, quad.clone()).prop_map(|((a, b, c, d), (o1, o2, shape))| match shape {
                0 => format!("({a} * {b} {o1} {c} * {d})"),
                1 => format!("(({a} {o1} {b}) * {c} {o2} {d})"),
                2 => format!("({d} {o2} ({a} {o1} {b}) * {c})"),
                _ => format!("({d} {o2} {c} * ({a} {o1} {b}))"),
            }),
            3 => (inner.clone(), op.clone(), inner.clone())
                .prop_map(|(p, o, q)| format!("({p} {o} {q})")),
            2 => (inner.clone(), inner.clone(), inner.clone())
                .prop_map(|(p, q, r)| format!("({p} * {q} + {r})")),
            2 => (inner.clone(), inner.clone(), inner.clone())
                .prop_map(|(p, q, r)| format!("({r} - {p} * {q})")),
            2 => (inner.clone(), inner.clone(), inner.clone())
                .prop_map(|(p, q, r)| format!("(({p} - {q}) * {r})")),
            1 => (inner.clone(), -4i32..6).prop_map(|(p, n)| format!("({p})^{n}")),
            1 => (inner.clone(), -3i32..0).prop_map(|(p, n)| format!("({p})^({n})")),
            2 => (f1.clone(), inner.clone()).prop_map(|(f, p)| format!("{f}({p})")),
            1 => (f2.clone(), inner.clone(), inner.clone())
                .prop_map(|(f, p, q)| format!("{f}({p}, {q})")),
            1 => inner.clone().prop_map(|p| format!("-({p})")),
        ]
    })
}
