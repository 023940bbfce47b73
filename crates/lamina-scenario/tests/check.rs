//! Semantic checks: each problem names its field, says what is wrong and, for a scenario
//! loaded from text, where the field is.

mod common;

use common::{EXAMPLE, MINIMAL, at, column_of, edit, load, problem_on};
use lamina_scenario::{Problem, ScenarioError, Severity};

/// Problems of the example with one edit, from the checks that need no expression compiler.
fn field_problems(from: &str, to: &str) -> Vec<Problem> {
    load(&edit(EXAMPLE, from, to)).check_fields()
}

#[test]
fn the_example_and_the_minimal_file_have_no_field_problems() {
    assert_eq!(load(EXAMPLE).check_fields(), []);
    assert_eq!(load(MINIMAL).check_fields(), []);
}

#[test]
fn the_minimal_file_has_no_problems() {
    assert_eq!(load(MINIMAL).check(), []);
}

#[test]
fn the_example_has_no_problems() {
    assert_eq!(load(EXAMPLE).check(), []);
}

#[test]
fn every_method_choice_is_accepted() {
    for method in ["Automatic", "Dp5", "Dp853", "Stiff"] {
        let text = edit(EXAMPLE, "method: Automatic", &format!("method: {method}"));
        assert_eq!(load(&text).check(), [], "{method}");
    }
}

/// (replace this, with this, field, message part, line of the field, text at the location)
type Case = (
    &'static str,
    &'static str,
    &'static str,
    &'static str,
    usize,
    &'static str,
);

#[test]
fn field_problems_name_the_field_and_its_location() {
    let cases: &[Case] = &[
        (
            "name: \"a\"",
            "name: \"x\"",
            "parameters[2].name",
            "'x' is already the name of states[0]",
            12,
            "\"x\"",
        ),
        (
            "name: \"w\"",
            "name: \"zeta\"",
            "parameters[3].name",
            "'zeta' is already the name of parameters[0]",
            13,
            "\"zeta\"",
        ),
        (
            "name: \"x\"",
            "name: \"sin\"",
            "states[0].name",
            "'sin' is a function in expressions",
            6,
            "\"sin\"",
        ),
        (
            "name: \"w\"",
            "name: \"t\"",
            "parameters[3].name",
            "'t' is the time in expressions",
            13,
            "\"t\"",
        ),
        (
            "name: \"k3\"",
            "name: \"pi\"",
            "parameters[1].name",
            "'pi' is a constant",
            11,
            "\"pi\"",
        ),
        (
            "name: \"k3\"",
            "name: \"3k\"",
            "parameters[1].name",
            "start with a letter or _",
            11,
            "\"3k\"",
        ),
        (
            "name: \"k3\"",
            "name: \"\"",
            "parameters[1].name",
            "the name is empty",
            11,
            "\"\"",
        ),
        (
            "axes: (\"x\", \"v\"),\n",
            "axes: (\"x\", \"y\"),\n",
            "cut.axes.1",
            "'y' is not a state (states: x, v)",
            20,
            "\"y\"",
        ),
        (
            "first_at: 0.0, axes: (\"x\", \"v\")",
            "first_at: 0.0, axes: (\"q\", \"v\")",
            "strobe.axes.0",
            "'q' is not a state",
            22,
            "\"q\"",
        ),
        (
            "{\"v\": 1.0}",
            "{\"w\": 1.0}",
            "cut.surface.normal[\"w\"]",
            "names 'w', which is not a state",
            18,
            "1.0",
        ),
        (
            "{\"v\": 1.0}",
            "{\"v\": 1.0, \"v\": 2.0}",
            "cut.surface.normal[\"v\"]",
            "'v' is given twice",
            18,
            "1.0",
        ),
        (
            "{\"v\": 1.0}",
            "{\"v\": 0.0, \"x\": -0.0}",
            "cut.surface.normal",
            "the normal is zero",
            18,
            "{",
        ),
        (
            "{\"v\": 1.0}",
            "{}",
            "cut.surface.normal",
            "the normal is zero",
            18,
            "{",
        ),
        (
            "rtol: 1e-9",
            "rtol: 0.0",
            "integrator.rtol",
            "must be a positive number, not 0",
            15,
            "0.0",
        ),
        (
            "atol: 1e-12",
            "atol: -1e-12",
            "integrator.atol",
            "must be a positive number",
            15,
            "-1e-12",
        ),
        (
            "atol: 1e-12",
            "atol: 1e-12, max_step: Some(0.0)",
            "integrator.max_step",
            "must be a positive number",
            15,
            "Some",
        ),
        (
            "span: 2000.0",
            "span: 0.0",
            "time.span",
            "must be a positive number",
            16,
            "0.0, unit",
        ),
        (
            "span: 2000.0",
            "span: -5.0",
            "time.span",
            "must be a positive number, not -5",
            16,
            "-5.0",
        ),
        (
            "settle: 200.0",
            "settle: -1.0",
            "time.settle",
            "must be 0 or a positive number",
            16,
            "-1.0",
        ),
        (
            "start: 0.0, settle",
            "start: NaN, settle",
            "time.start",
            "must be a finite number, not NaN",
            16,
            "NaN",
        ),
        (
            "start: 0.1",
            "start: inf",
            "states[0].start",
            "finite",
            6,
            "inf",
        ),
        (
            "value: 1.2",
            "value: -inf",
            "parameters[3].value",
            "finite",
            13,
            "-inf",
        ),
        (
            "range: (0.0, 5.0)",
            "range: (5.0, 0.0)",
            "parameters[1].range",
            "low end first",
            11,
            "(5.0",
        ),
        (
            "range: (0.0, 5.0)",
            "range: (1.0, 1.0)",
            "parameters[1].range",
            "low end first",
            11,
            "(1.0",
        ),
        (
            "Some((parameter: \"a\"",
            "Some((parameter: \"b\"",
            "sweep.parameter",
            "'b' is not a parameter (parameters: zeta, k3, a, w)",
            23,
            "\"b\"",
        ),
        (
            "to: 0.6, values: 301",
            "to: 0.1, values: 301",
            "sweep.to",
            "the sweep must end at another value than it starts",
            23,
            "0.1, values",
        ),
        (
            "values: 301",
            "values: 1",
            "sweep.values",
            "must be at least 2 (from and to), not 1",
            23,
            "1, settle",
        ),
        ("keep: 64", "keep: 0", "sweep.keep", "at least 1", 24, "0,"),
        (
            "values: 301, settle: 300.0",
            "values: 301, settle: -300.0",
            "sweep.settle",
            "0 or a positive number",
            23,
            "-300.0",
        ),
        (
            "coordinate: \"x\"",
            "coordinate: \"z\"",
            "sweep.coordinate",
            "'z' is not a state",
            24,
            "\"z\"",
        ),
        (
            "max_points: 200000",
            "max_points: 0",
            "limits.max_points",
            "at least 1",
            28,
            "0,",
        ),
        (
            "escape: 1e6",
            "escape: 0.0",
            "limits.escape",
            "must be a positive number",
            28,
            "0.0",
        ),
        (
            "(parameter: \"w\"",
            "(parameter: \"b\"",
            "map.y.parameter",
            "'b' is not a parameter (parameters: zeta, k3, a, w)",
            26,
            "\"b\"",
        ),
        (
            "(parameter: \"w\"",
            "(parameter: \"a\"",
            "map.y.parameter",
            "the map's two axes both vary 'a'; choose two different parameters",
            26,
            "\"a\"",
        ),
        (
            "from: 0.8, to: 1.6",
            "from: 0.8, to: 0.8",
            "map.y.to",
            "the map's y axis must end at another value than it starts (0.8)",
            26,
            "0.8, values",
        ),
        (
            "to: 0.6, values: 101",
            "to: 0.6, values: 0",
            "map.x.values",
            "must be at least 2 (from and to), not 0",
            25,
            "0)",
        ),
        (
            "from: 0.1, to: 0.6, values: 101",
            "from: NaN, to: 0.6, values: 101",
            "map.x.from",
            "must be a finite number",
            25,
            "NaN",
        ),
        (
            "settle: 300.0, span: 300.0",
            "settle: -1.0, span: 300.0",
            "map.settle",
            "must be 0 or a positive number, not -1",
            27,
            "-1.0",
        ),
        (
            "span: 300.0",
            "span: 0.0",
            "map.span",
            "must be a positive number, not 0",
            27,
            "0.0, source",
        ),
    ];
    for (from, to, field, message, line, located) in cases {
        let text = edit(EXAMPLE, from, to);
        let problems = load(&text).check_fields();
        let problem = problem_on(&problems, field);
        assert_eq!(problem.severity, Severity::Error, "{field}");
        assert!(
            problem.message.contains(message),
            "{field}: '{}' lacks '{message}'",
            problem.message
        );
        assert_eq!(
            problem.location,
            at(&text, *line, located),
            "{field}: {problem}"
        );
        assert!(
            problem.to_string().contains(&format!("error in {field}: ")),
            "{problem}"
        );
    }
}

#[test]
fn a_scenario_needs_a_state() {
    let text = edit(
        MINIMAL,
        "        (name: \"x\", start: 1.0, rate: \"v\"),\n        (name: \"v\", start: 0.0, rate: \"-c*v - x\"),\n",
        "",
    );
    let problems = load(&text).check();
    let problem = problem_on(&problems, "states");
    assert!(problem.message.contains("at least one state"), "{problem}");
    assert_eq!(problem.location, at(&text, 5, "["));
}

#[test]
fn a_value_outside_its_range_is_only_a_warning() {
    let problems = field_problems("value: 1.2", "value: 4.0");
    let problem = problem_on(&problems, "parameters[3].value");
    assert_eq!(problem.severity, Severity::Warning);
    assert!(
        problem.message.contains("outside the range (0.1, 3)"),
        "{problem}"
    );
    assert!(
        problem
            .to_string()
            .contains("warning in parameters[3].value"),
        "{problem}"
    );
}

#[test]
fn a_sweep_needs_the_block_it_keeps_points_of() {
    let problems = field_problems("source: Strobe, coordinate", "source: Cut, coordinate");
    assert_eq!(problems, []);
    let text = edit(
        EXAMPLE,
        "    strobe: Some((period: \"2*pi/w\", first_at: 0.0, axes: (\"x\", \"v\"))),",
        "",
    );
    let problems = load(&text).check_fields();
    let problem = problem_on(&problems, "sweep.source");
    assert!(
        problem
            .message
            .contains("the sweep keeps strobe samples, but the scenario has no strobe"),
        "{problem}"
    );
    let problem = problem_on(&problems, "map.source");
    assert!(
        problem
            .message
            .contains("the map keeps strobe samples, but the scenario has no strobe"),
        "{problem}"
    );
    assert_eq!(problems.len(), 2, "{problems:#?}");
}

#[test]
fn view_problems() {
    let text = edit(
        EXAMPLE,
        "    limits: (max_points: 200000, escape: 1e6),",
        "    view: Some((camera: Some((yaw_deg: 30.0, pitch_deg: 95.0, zoom: 0.0)), axes: Some((\"x\", \"t\", \"q\")), colours: Some((surface: Some(\"blue\"))))),\n",
    );
    let problems = load(&text).check_fields();
    assert!(
        problem_on(&problems, "view.camera.pitch_deg")
            .message
            .contains("between -90 and 90")
    );
    assert!(
        problem_on(&problems, "view.camera.zoom")
            .message
            .contains("positive")
    );
    assert!(
        problem_on(&problems, "view.axes.2")
            .message
            .contains("'q' is neither a state nor the time t")
    );
    assert!(
        problem_on(&problems, "view.colours.surface")
            .message
            .contains("#rrggbb")
    );
    assert_eq!(problems.len(), 4, "{problems:#?}");
}

#[test]
fn an_unknown_name_in_a_rate_points_at_the_name() {
    let text = edit(MINIMAL, "rate: \"-c*v - x\"", "rate: \"-c*v - y\"");
    let problems = load(&text).check();
    let problem = problem_on(&problems, "states[1].rate");
    assert!(problem.message.contains("unknown name 'y'"), "{problem}");
    // the caret line under the expression
    assert!(
        problem.message.contains("    -c*v - y\n           ^"),
        "{}",
        problem.message
    );
    // `y` is character 7 of the rate, whose opening quote is on line 7
    let quote = column_of(&text, 7, "\"-c*v");
    assert_eq!(
        problem.location.map(|l| (l.line, l.column)),
        Some((7, quote + 1 + 7))
    );
}

#[test]
fn a_syntax_error_in_a_rate_is_reported_at_its_state() {
    let text = edit(MINIMAL, "rate: \"v\"", "rate: \"v +* 2\"");
    let problems = load(&text).check();
    let problem = problem_on(&problems, "states[0].rate");
    assert_eq!(problem.severity, Severity::Error);
    assert!(problem.message.contains("at character"), "{problem}");
    assert!(problem.message.contains("    v +* 2\n"), "{problem}");
    assert_eq!(problem.location.map(|l| l.line), Some(6));
}

#[test]
fn errors_in_two_states_with_the_same_rate_go_to_each_state() {
    let text = edit(MINIMAL, "rate: \"v\"", "rate: \"-c*v - y\"");
    let text = edit(&text, "rate: \"-c*v - x\"", "rate: \"-c*v - y\"");
    let problems = load(&text).check();
    assert_eq!(
        problem_on(&problems, "states[0].rate")
            .location
            .map(|l| l.line),
        Some(6)
    );
    assert_eq!(
        problem_on(&problems, "states[1].rate")
            .location
            .map(|l| l.line),
        Some(7)
    );
}

#[test]
fn rates_are_not_compiled_against_broken_names() {
    // the rate mentions `sin` as a variable; only the name is reported
    let text = edit(
        MINIMAL,
        "name: \"x\", start: 1.0, rate: \"v\"",
        "name: \"sin\", start: 1.0, rate: \"v\"",
    );
    let problems = load(&text).check();
    assert_eq!(problems.len(), 1, "{problems:#?}");
    assert_eq!(problems[0].field, "states[0].name");
}

#[test]
fn a_repeated_name_is_named_and_lists_of_names_do_not_repeat_it() {
    // the second state is also called `x`: the cut and the sweep then refer to `v`, which is
    // gone, and a parameter repeats too
    let text = edit(EXAMPLE, "(name: \"v\", start", "(name: \"x\", start");
    let text = edit(&text, "(name: \"w\", ", "(name: \"a\", ");
    let text = edit(&text, "Some((parameter: \"a\"", "Some((parameter: \"b\"");
    let problems = load(&text).check();
    assert!(
        problem_on(&problems, "states[1].name")
            .message
            .contains("'x' is already the name of states[0]"),
        "{problems:#?}"
    );
    assert!(
        problem_on(&problems, "parameters[3].name")
            .message
            .contains("'a' is already the name of parameters[2]"),
        "{problems:#?}"
    );
    assert_eq!(
        problem_on(&problems, "cut.axes.1").message,
        "'v' is not a state (states: x; 'x' is given twice)"
    );
    assert_eq!(
        problem_on(&problems, "sweep.parameter").message,
        "'b' is not a parameter (parameters: zeta, k3, a; 'a' is given twice)"
    );
    for problem in &problems {
        assert!(!problem.message.contains("x, x"), "{problem:#?}");
    }
}

#[test]
fn a_level_surface_with_a_syntax_error() {
    let text = edit(
        EXAMPLE,
        "Plane(normal: {\"v\": 1.0}, offset: 0.0)",
        "Level(\"x^2 + v^2 -\")",
    );
    let problems = load(&text).check();
    let problem = problem_on(&problems, "cut.surface");
    assert!(problem.message.contains("x^2 + v^2 -"), "{problem}");
    assert_eq!(problem.location.map(|l| l.line), Some(18));
}

#[test]
fn a_level_surface_that_compiles() {
    let text = edit(
        EXAMPLE,
        "Plane(normal: {\"v\": 1.0}, offset: 0.0)",
        "Level(\"x^2 + v^2 - 1\")",
    );
    assert_eq!(load(&text).check(), []);
}

#[test]
fn a_period_that_is_not_positive() {
    let text = edit(EXAMPLE, "period: \"2*pi/w\"", "period: \"-2*pi/w\"");
    let problems = load(&text).check();
    let problem = problem_on(&problems, "strobe.period");
    assert!(
        problem.message.contains("not a positive number"),
        "{problem}"
    );
    assert_eq!(problem.location, at(&text, 22, "\"-2*pi/w\""));

    let text = edit(EXAMPLE, "period: \"2*pi/w\"", "period: \"0*w\"");
    let problems = load(&text).check();
    assert!(
        problem_on(&problems, "strobe.period")
            .message
            .contains("not a positive number")
    );
}

#[test]
fn a_period_that_uses_a_state() {
    let text = edit(EXAMPLE, "period: \"2*pi/w\"", "period: \"2*pi/x\"");
    let problems = load(&text).check();
    let problem = problem_on(&problems, "strobe.period");
    assert!(problem.message.contains('x'), "{problem}");
    assert_eq!(problem.location.map(|l| l.line), Some(22));
}

#[test]
fn validated_lists_every_problem() {
    assert!(load(MINIMAL).validated().is_ok());
    let text = edit(MINIMAL, "rtol: 1e-8", "rtol: 0.0");
    let text = edit(&text, "span: 50.0", "span: -1.0");
    let err = load(&text).validated().expect_err("invalid");
    let ScenarioError::Invalid(problems) = &err else {
        panic!("expected Invalid, got {err}")
    };
    assert_eq!(problems.len(), 2);
    let shown = err.to_string();
    assert!(shown.starts_with("the scenario has 2 errors\n"), "{shown}");
    assert!(shown.contains("line 12, column"), "{shown}");
    assert!(
        shown.contains("error in time.span: must be a positive number, not -1"),
        "{shown}"
    );
}

#[test]
fn problems_without_a_source_have_no_location() {
    let mut scenario = load(MINIMAL);
    scenario.forget_source();
    scenario.time.span = 0.0;
    let problems = scenario.check();
    assert_eq!(problem_on(&problems, "time.span").location, None);
    assert_eq!(
        problems[0].to_string(),
        "error in time.span: must be a positive number, not 0"
    );
}
