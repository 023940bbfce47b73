//! Loading scenario files: the example and the minimal file load; malformed files give
//! located errors naming the field; newer formats are refused naming both versions. (Format 1
//! files: `format1.rs`.)

mod common;

use common::{EXAMPLE, MINIMAL, edit, load, syntax_error};
use lamina_scenario::{
    Direction, FORMAT, Limits, MapAxis, MethodChoice, RegimeMap, ScenarioError, Surface,
    SweepSource, load_file, load_str,
};

#[test]
fn the_example_loads() {
    let scenario = load(EXAMPLE);
    assert_eq!(scenario.format, 2);
    assert_eq!(scenario.format_read(), Some(2));
    assert_eq!(scenario.format_note(), None);
    assert_eq!(scenario.title, "Clocked resonator, soft spring");
    assert_eq!(scenario.notes, "free text");
    let names: Vec<&str> = scenario.states.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(names, ["x", "v"]);
    assert_eq!(
        scenario.states[1].rate,
        "-2*zeta*v - x - k3*x^3 + a*cos(w*t)"
    );
    assert_eq!(scenario.parameters.len(), 4);
    assert_eq!(scenario.parameters[3].range, (0.1, 3.0));
    let units: Vec<Option<&str>> = scenario.states.iter().map(|s| s.unit.as_deref()).collect();
    assert_eq!(units, [Some("um"), None]);
    let units: Vec<Option<&str>> = scenario
        .parameters
        .iter()
        .map(|p| p.unit.as_deref())
        .collect();
    assert_eq!(units, [None, None, Some("N"), None]);
    assert_eq!(scenario.time.unit.as_deref(), Some("us"));
    assert_eq!(scenario.integrator.method, MethodChoice::Automatic);
    assert_eq!(scenario.integrator.atol, 1e-12);
    assert_eq!(scenario.integrator.max_step, None);
    assert_eq!(scenario.time.span, 2000.0);
    let cut = scenario.cut.as_ref().expect("cut");
    match &cut.surface {
        Surface::Plane { normal, offset } => {
            assert_eq!(normal.0, [("v".to_owned(), 1.0)]);
            assert_eq!(*offset, 0.0);
        }
        Surface::Level(_) => panic!("expected a plane"),
    }
    assert_eq!(cut.direction, Direction::Falling);
    assert_eq!(cut.axes, ("x".to_owned(), "v".to_owned()));
    let strobe = scenario.strobe.as_ref().expect("strobe");
    assert_eq!((strobe.period.as_str(), strobe.first_at), ("2*pi/w", 0.0));
    let sweep = scenario.sweep.as_ref().expect("sweep");
    assert_eq!((sweep.values, sweep.keep, sweep.follow), (301, 64, true));
    assert_eq!(sweep.source, SweepSource::Strobe);
    assert_eq!(
        scenario.map,
        Some(RegimeMap {
            x: MapAxis {
                parameter: "a".to_owned(),
                from: 0.1,
                to: 0.6,
                values: 101
            },
            y: MapAxis {
                parameter: "w".to_owned(),
                from: 0.8,
                to: 1.6,
                values: 81
            },
            settle: 300.0,
            span: 300.0,
            source: SweepSource::Strobe,
        })
    );
    assert_eq!(
        scenario.limits,
        Limits {
            max_points: 200_000,
            escape: 1e6
        }
    );
    assert_eq!(scenario.view, None);
}

#[test]
fn a_minimal_file_loads_with_defaults() {
    let scenario = load(MINIMAL);
    assert_eq!(scenario.notes, "");
    assert_eq!(scenario.cut, None);
    assert_eq!(scenario.strobe, None);
    assert_eq!(scenario.sweep, None);
    assert_eq!(scenario.map, None);
    assert_eq!(scenario.view, None);
    assert_eq!(scenario.time.unit, None);
    assert!(scenario.states.iter().all(|s| s.unit.is_none()));
    assert_eq!(scenario.integrator.max_step, None);
    assert_eq!(scenario.integrator.method, MethodChoice::Dp5);
    assert_eq!(
        scenario.limits,
        Limits {
            max_points: 200_000,
            escape: 1e6
        }
    );
}

#[test]
fn limits_may_give_only_one_value() {
    let text = edit(
        EXAMPLE,
        "limits: (max_points: 200000, escape: 1e6)",
        "limits: (escape: 50.0)",
    );
    assert_eq!(
        load(&text).limits,
        Limits {
            max_points: 200_000,
            escape: 50.0
        }
    );
}

#[test]
fn some_may_be_left_out_around_optional_values() {
    let text = edit(EXAMPLE, "atol: 1e-12)", "atol: 1e-12, max_step: 0.05)");
    assert_eq!(load(&text).integrator.max_step, Some(0.05));
    let text = edit(
        EXAMPLE,
        "atol: 1e-12)",
        "atol: 1e-12, max_step: Some(0.05))",
    );
    assert_eq!(load(&text).integrator.max_step, Some(0.05));
    let text = edit(
        EXAMPLE,
        "strobe: Some((period: \"2*pi/w\", first_at: 0.0, axes: (\"x\", \"v\"))),",
        "strobe: (period: \"2*pi/w\", first_at: 0.0, axes: (\"x\", \"v\")),",
    );
    assert_eq!(
        load(&text).strobe.map(|s| s.period),
        Some("2*pi/w".to_owned())
    );
}

#[test]
fn a_level_surface_loads() {
    let text = edit(
        EXAMPLE,
        "Plane(normal: {\"v\": 1.0}, offset: 0.0)",
        "Level(\"x^2 + v^2 - 1\")",
    );
    let cut = load(&text).cut.expect("cut");
    assert_eq!(cut.surface, Surface::Level("x^2 + v^2 - 1".to_owned()));
}

#[test]
fn a_view_block_may_follow() {
    let text = edit(
        EXAMPLE,
        "    limits: (max_points: 200000, escape: 1e6),",
        "    limits: (max_points: 200000, escape: 1e6),\n    view: Some((\n        camera: Some((yaw_deg: 30.0, pitch_deg: 15.0, zoom: 1.5)),\n        axes: Some((\"x\", \"v\", \"t\")),\n        colours: Some((cut_points: Some(\"#d1495b\"), strobe_samples: Some(\"#00798c\"))),\n    )),",
    );
    let view = load(&text).view.expect("view");
    assert_eq!(view.camera.map(|c| c.zoom), Some(1.5));
    assert_eq!(
        view.axes,
        Some(("x".to_owned(), "v".to_owned(), "t".to_owned()))
    );
    let colours = view.colours.expect("colours");
    assert_eq!(colours.cut_points.as_deref(), Some("#d1495b"));
    assert_eq!(colours.strobe_samples.as_deref(), Some("#00798c"));
    assert_eq!(colours.trajectory, None);
    // every part of the view may be left out
    let text = edit(
        EXAMPLE,
        "    limits: (max_points: 200000, escape: 1e6),",
        "    view: Some(()),",
    );
    assert_eq!(load(&text).view, Some(Default::default()));
}

/// (description, replace this, with this, line, column, field, message)
type Case = (
    &'static str,
    &'static str,
    &'static str,
    usize,
    usize,
    Option<&'static str>,
    &'static str,
);

#[test]
fn malformed_files_give_located_errors_naming_the_field() {
    let cases: &[Case] = &[
        (
            "unknown field",
            "rtol: 1e-9",
            "rtoll: 1e-9",
            15,
            37,
            Some("integrator"),
            "unknown field 'rtoll' in integrator; expected one of method, rtol, atol, max_step",
        ),
        (
            "unknown top-level field",
            "notes:",
            "nots:",
            4,
            5,
            None,
            "unknown field 'nots' in the scenario; expected one of format, title, notes,",
        ),
        (
            "unknown field in a list element",
            "(name: \"v\", start: 0.0, rate:",
            "(name: \"v\", start: 0.0, rte:",
            7,
            33,
            Some("states[1]"),
            "unknown field 'rte' in states[1]; expected one of name, start, rate",
        ),
        (
            "missing field",
            ", rate: \"v\", unit",
            ", unit",
            6,
            43,
            Some("states[0]"),
            "missing field 'rate' in states[0]",
        ),
        (
            "missing field in a nested block",
            "settle: 200.0, ",
            "",
            16,
            48,
            Some("time"),
            "missing field 'settle' in time",
        ),
        (
            "string for a number",
            "start: 0.1",
            "start: \"a\"",
            6,
            27,
            Some("states[0].start"),
            "states[0].start: expected a number",
        ),
        (
            "number for a string",
            "rate: \"v\"",
            "rate: 5",
            6,
            38,
            Some("states[0].rate"),
            "states[0].rate: expected a string",
        ),
        (
            "negative count",
            "values: 301",
            "values: -3",
            23,
            62,
            Some("sweep.values"),
            "sweep.values: must be 0 or more, not -3",
        ),
        (
            "fractional count",
            "values: 301",
            "values: 3.5",
            23,
            63,
            Some("sweep.values"),
            "sweep.values: expected a whole number, 0 or more, but found 3.5",
        ),
        (
            "number for a boolean",
            "follow: true",
            "follow: 1",
            24,
            35,
            Some("sweep.follow"),
            "sweep.follow: expected true or false",
        ),
        (
            "unknown choice",
            "direction: Falling",
            "direction: Falls",
            19,
            20,
            Some("cut.direction"),
            "unknown choice 'Falls' for cut.direction; expected one of Rising, Falling, Both",
        ),
        (
            "unknown method",
            "method: Automatic",
            "method: Rk4",
            15,
            26,
            Some("integrator.method"),
            "expected one of Automatic, Dp5, Dp853, Stiff",
        ),
        (
            "format-1 word for a method",
            "method: Automatic",
            "method: Auto",
            15,
            26,
            Some("integrator.method"),
            "unknown choice 'Auto' for integrator.method; expected one of Automatic, Dp5, Dp853, Stiff ('Auto' is the format-1 word; format 2 says 'Automatic')",
        ),
        (
            "format-1 word for a field",
            "first_at: 0.0",
            "phase: 0.0",
            22,
            37,
            Some("strobe"),
            "unknown field 'phase' in strobe; expected one of period, first_at, axes ('phase' is the format-1 word; format 2 says 'first_at')",
        ),
        (
            "unknown field in the map",
            "settle: 300.0, span: 300.0",
            "settle: 300.0, spam: 300.0",
            27,
            31,
            Some("map"),
            "unknown field 'spam' in map; expected one of x, y, settle, span, source",
        ),
        (
            "unknown field in a map axis",
            "(parameter: \"w\"",
            "(param: \"w\"",
            26,
            20,
            Some("map.y"),
            "unknown field 'param' in map.y; expected one of parameter, from, to, values",
        ),
        (
            "number for a unit",
            "unit: \"N\"",
            "unit: 3",
            12,
            61,
            Some("parameters[2].unit"),
            "expected a string",
        ),
        (
            "string for a weight",
            "{\"v\": 1.0}",
            "{\"v\": \"a\"}",
            18,
            37,
            Some("cut.surface.normal[\"v\"]"),
            "expected a number",
        ),
        (
            "missing comma",
            "    ],\n    integrator",
            "    ]\n    integrator",
            15,
            5,
            None,
            "expected a comma",
        ),
        (
            "three axes",
            "axes: (\"x\", \"v\"),\n",
            "axes: (\"x\", \"v\", \"x\"),\n",
            20,
            26,
            Some("cut.axes"),
            "expected a closing ')'",
        ),
    ];
    for (description, from, to, line, column, field, message) in cases {
        let text = edit(EXAMPLE, from, to);
        let (got_line, got_column, got_field, got_message, display) = syntax_error(&text);
        assert_eq!(
            (got_line, got_column),
            (*line, *column),
            "{description}: {display}"
        );
        assert_eq!(got_field.as_deref(), *field, "{description}: {display}");
        assert!(
            got_message.contains(message),
            "{description}: '{got_message}' lacks '{message}'"
        );
        assert!(
            display.starts_with(&format!("line {line}, column {column}: ")),
            "{description}: {display}"
        );
    }
}

#[test]
fn a_truncated_file_says_where_it_ends() {
    let text = &EXAMPLE[..EXAMPLE.find("limits").expect("limits")];
    let (line, column, _, message, display) = syntax_error(text);
    // the parser stops after the last complete value, at the end of line 27
    assert_eq!((line, column), (27, 61), "{display}");
    assert!(message.contains("ends too early"), "{message}");
}

#[test]
fn a_newer_format_is_refused_naming_both_versions() {
    let text = edit(EXAMPLE, "format: 2", "format: 3");
    let err = load_str(&text).expect_err("format 3");
    assert!(matches!(
        err,
        ScenarioError::NewerFormat {
            found: 3,
            supported: FORMAT
        }
    ));
    assert_eq!(
        err.to_string(),
        "this file is format 3; this Lamina reads format 2 and older (the file was written by a newer Lamina)"
    );

    // whatever else changed: new fields, fields gone, new syntax further down
    let text =
        "(\n    format: 7,\n    model: (equations: [\"x' = -x\"]),\n    plots: {1: <new>},\n)\n";
    let err = load_str(text).expect_err("format 7");
    assert!(
        matches!(
            err,
            ScenarioError::NewerFormat {
                found: 7,
                supported: 2
            }
        ),
        "{err}"
    );

    for written in ["0x3", "0b11", "0o3", "+3", "0_3"] {
        let text = edit(EXAMPLE, "format: 2", &format!("format: {written}"));
        let err = load_str(&text).expect_err("format 3 written otherwise");
        assert!(
            matches!(
                err,
                ScenarioError::NewerFormat {
                    found: 3,
                    supported: 2
                }
            ),
            "{written}: {err}"
        );
    }
}

#[test]
fn format_zero_is_refused() {
    let (line, column, field, message, _) = syntax_error(&edit(EXAMPLE, "format: 2", "format: 0"));
    assert_eq!((line, column, field.as_deref()), (2, 13, Some("format")));
    assert_eq!(
        message,
        "there is no format 0; this Lamina reads formats 1 and 2"
    );
}

#[test]
fn a_missing_format_is_a_missing_field() {
    let (_, _, field, message, _) = syntax_error(&edit(EXAMPLE, "    format: 2,\n", ""));
    assert_eq!(field, None);
    assert!(message.contains("missing field 'format'"), "{message}");
}

#[test]
fn view_fields_are_checked_too() {
    let text = edit(
        EXAMPLE,
        "    limits: (max_points: 200000, escape: 1e6),",
        "    view: Some((camera: Some((yaw_deg: 30.0, pitch: 15.0, zoom: 1.5)))),",
    );
    let (line, _, field, message, _) = syntax_error(&text);
    assert_eq!(line, 28);
    assert_eq!(field.as_deref(), Some("view.camera"));
    assert!(
        message.starts_with(
            "unknown field 'pitch' in view.camera; expected one of yaw_deg, pitch_deg, zoom"
        ),
        "{message}"
    );
}

#[test]
fn garbage_never_panics() {
    for text in [
        "",
        "(",
        "()",
        "[]",
        "format: 1",
        "(format: 1",
        "(format: 1,",
        "(format: 2",
        "(format: 2,",
        "(format: 2, states: [(",
        "\"",
        "(format: 1, states: [(",
        "(((((((((((",
    ] {
        assert!(load_str(text).is_err(), "{text:?}");
    }
}

#[test]
fn load_file_names_a_missing_file() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("absent.ron");
    let err = load_file(&path).expect_err("absent");
    assert!(matches!(err, ScenarioError::Io { .. }));
    assert!(err.to_string().contains("absent.ron"), "{err}");
}
