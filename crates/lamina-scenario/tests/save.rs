//! Saving: stable readable text, exact round trip of every value, atomic writes.

mod common;

use common::{EXAMPLE, EXAMPLE_FORMAT1, MINIMAL, load};
use lamina_scenario::{
    Camera, Colours, Cut, Direction, Integrator, Limits, MapAxis, MethodChoice, Parameter,
    RegimeMap, Scenario, State, Strobe, Surface, Sweep, SweepSource, Time, View, Weights,
    load_file, load_str, save_file, to_ron_string,
};
use proptest::prelude::*;

/// The example as this version saves it.
const EXAMPLE_SAVED: &str = include_str!("fixtures/clocked_resonator.saved.ron");

/// Saves and loads `scenario`; the result must be equal, and must save to the same text
/// (which also catches a lost sign of zero, since `0.0 == -0.0`).
fn round_trip(scenario: &Scenario) -> Scenario {
    let text = to_ron_string(scenario);
    let back = match load_str(&text) {
        Ok(back) => back,
        Err(err) => panic!("saved text does not load: {err}\n{text}"),
    };
    assert_eq!(&back, scenario, "{text}");
    assert_eq!(to_ron_string(&back), text);
    back
}

#[test]
fn a_view_block_round_trips_and_a_file_without_one_loads() {
    let mut scenario = load(MINIMAL);
    assert_eq!(scenario.view, None, "the minimal file has no view block");
    let names: Vec<String> = scenario.states.iter().map(|s| s.name.clone()).collect();
    scenario.view = Some(View {
        camera: Some(Camera {
            yaw_deg: 33.25,
            pitch_deg: -12.5,
            zoom: 1.75,
        }),
        axes: Some((names[0].clone(), "t".into(), names[0].clone())),
        colours: Some(Colours {
            trajectory: Some("#336699".into()),
            ..Colours::default()
        }),
    });
    let back = round_trip(&scenario);
    assert_eq!(back.view, scenario.view);
    let text = to_ron_string(&back);
    assert!(text.contains("yaw_deg: 33.25"), "{text}");
    // and taken out again, the file has no view block and still loads
    scenario.view = None;
    let text = to_ron_string(&round_trip(&scenario));
    assert!(!text.contains("view:"), "{text}");
}

#[test]
fn the_example_saves_in_a_stable_readable_layout() {
    let scenario = load(EXAMPLE);
    assert_eq!(to_ron_string(&scenario), EXAMPLE_SAVED);
    round_trip(&scenario);
    round_trip(&load(MINIMAL));
}

#[test]
fn a_format1_scenario_saves_as_format2() {
    let scenario = load(EXAMPLE_FORMAT1);
    assert_eq!(scenario.format_read(), Some(1));
    let text = to_ron_string(&scenario);
    assert!(text.starts_with("(\n    format: 2,\n"), "{text}");
    for word in ["Auto,", "phase", "steps", "bound"] {
        assert!(!text.contains(word), "'{word}' in\n{text}");
    }
    assert!(
        text.contains("method: Automatic,")
            && text.contains("first_at: 0.0,")
            && text.contains("values: 301,")
            && text.contains("escape: 1000000.0,"),
        "{text}"
    );
    let back = round_trip(&scenario);
    assert_eq!(back.format_read(), Some(2));

    // a scenario whose format field says otherwise still saves as the current format
    let mut scenario = load(MINIMAL);
    scenario.format = 1;
    assert!(to_ron_string(&scenario).starts_with("(\n    format: 2,\n"));
}

#[test]
fn awkward_numbers_round_trip_exactly() {
    let mut scenario = load(MINIMAL);
    let values = [
        0.1,
        1e-12,
        1e-300,
        1e300,
        -0.0,
        5e-324, // smallest subnormal of IEEE 754 binary64 [common practice]
        f64::MIN_POSITIVE,
        f64::MAX,
        -f64::MAX,
        1.0 / 3.0,
        2.0_f64.sqrt(),
        123_456_789.123_456_78,
    ];
    for value in values {
        scenario.states[0].start = value;
        let back = round_trip(&scenario);
        assert_eq!(back.states[0].start.to_bits(), value.to_bits(), "{value:e}");
    }
    let text = to_ron_string(&scenario);
    // [from memory] Rust's `{:?}` for f64 (which ron writes) is the shortest decimal that
    // reads back to the same value
    assert!(text.contains("start: 123456789.12345678"), "{text}");
    scenario.states[0].start = 0.1;
    scenario.integrator.atol = 1e-12;
    let text = to_ron_string(&scenario);
    assert!(
        text.contains("start: 0.1,") && text.contains("atol: 1e-12"),
        "{text}"
    );
}

#[test]
fn non_finite_numbers_save_and_load_for_check_to_report() {
    let mut scenario = load(MINIMAL);
    scenario.states[0].start = f64::NAN;
    scenario.states[1].start = f64::NEG_INFINITY;
    let back = load_str(&to_ron_string(&scenario)).expect("loads");
    assert!(back.states[0].start.is_nan());
    assert_eq!(back.states[1].start, f64::NEG_INFINITY);
    assert!(
        back.check_fields()
            .iter()
            .any(|p| p.field == "states[0].start")
    );
}

#[test]
fn awkward_text_round_trips() {
    let mut scenario = load(MINIMAL);
    for text in [
        "",
        "quote \" backslash \\ tab \t newline \n",
        "\u{0}\u{1f}\u{7f}",
        "ünïcödé ∂x/∂t",
        "\"#)",
        "r#\"raw\"#",
        "// not a comment",
        "/* nor this */",
    ] {
        scenario.title = text.to_owned();
        scenario.notes = text.to_owned();
        round_trip(&scenario);
    }
}

#[test]
fn the_normal_keeps_its_order() {
    let mut scenario = load(EXAMPLE);
    if let Some(cut) = &mut scenario.cut {
        cut.surface = Surface::Plane {
            normal: Weights(vec![("x".to_owned(), 2.0), ("v".to_owned(), -1.0)]),
            offset: 0.5,
        };
    }
    let text = to_ron_string(&scenario);
    assert!(
        text.contains("Plane(normal: {\"x\": 2.0, \"v\": -1.0}, offset: 0.5)"),
        "{text}"
    );
    round_trip(&scenario);
}

#[test]
fn save_file_then_load_file() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("case.ron");
    let scenario = load(EXAMPLE);
    save_file(&path, &scenario).expect("saves");
    assert_eq!(load_file(&path).expect("loads"), scenario);
    assert_eq!(std::fs::read_to_string(&path).expect("read"), EXAMPLE_SAVED);
}

fn names_in(dir: &std::path::Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .expect("list")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

#[test]
fn saving_over_a_file_replaces_it_and_leaves_nothing_else() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("case.ron");
    std::fs::write(
        &path,
        "old contents that are much longer than the new ones would ever be ".repeat(200),
    )
    .expect("write");
    let scenario = load(MINIMAL);
    save_file(&path, &scenario).expect("saves");
    assert_eq!(
        std::fs::read_to_string(&path).expect("read"),
        to_ron_string(&scenario)
    );
    assert_eq!(names_in(dir.path()), ["case.ron"]);
}

#[cfg(unix)]
#[test]
fn saving_over_a_file_keeps_its_permissions() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("case.ron");
    std::fs::write(&path, "old").expect("write");
    std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o640)).expect("chmod");
    save_file(&path, &load(MINIMAL)).expect("saves");
    let mode = std::fs::metadata(&path)
        .expect("metadata")
        .permissions()
        .mode();
    assert_eq!(mode & 0o777, 0o640);
}

#[test]
fn a_save_into_a_missing_directory_fails_and_creates_nothing() {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("missing").join("case.ron");
    let err = save_file(&path, &load(MINIMAL)).expect_err("no directory");
    assert!(err.to_string().contains("case.ron"), "{err}");
    assert!(names_in(dir.path()).is_empty());
}

#[test]
fn a_failed_save_leaves_the_old_target_and_no_temporary_file() {
    // the target is a non-empty directory, so the final rename fails
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("case.ron");
    std::fs::create_dir(&path).expect("mkdir");
    std::fs::write(path.join("inside"), "keep").expect("write");
    assert!(save_file(&path, &load(MINIMAL)).is_err());
    assert_eq!(names_in(dir.path()), ["case.ron"]);
    assert_eq!(
        std::fs::read_to_string(path.join("inside")).expect("read"),
        "keep"
    );
}

// ---------------------------------------------------------------------------------------
// Property: any valid scenario saves and loads back equal.

/// Finite numbers including awkward ones, no larger than 1e300 in magnitude.
fn number() -> impl Strategy<Value = f64> {
    prop_oneof![
        3 => -1e3..1e3f64,
        1 => -1e300..1e300f64,
        1 => prop::sample::select(vec![0.0, -0.0, 0.1, -0.1, 1e-300, -1e-300, 1e300, 5e-324, 1e-12, 2.0 / 3.0]),
    ]
}

fn positive() -> impl Strategy<Value = f64> {
    prop_oneof![
        3 => 1e-12..1e3f64,
        1 => prop::sample::select(vec![0.1, 1e-300, 5e-324, 1e300, 1e-12, f64::MIN_POSITIVE]),
    ]
}

/// A relative tolerance: positive and below 1.
fn relative() -> impl Strategy<Value = f64> {
    prop_oneof![
        3 => 1e-15..0.99f64,
        1 => prop::sample::select(vec![0.5, 1e-300, 5e-324, 1e-12, f64::MIN_POSITIVE]),
    ]
}

/// `length` made long enough to survive rounding after `t` (a thousand units in the last
/// place of `t` or more), so that a window of any magnitude stays valid.
fn resolvable(t: f64, length: f64) -> f64 {
    if length == 0.0 {
        0.0
    } else {
        length.max(t.abs() * 1e-12)
    }
}

/// Repairs the few combinations of extreme numbers that make a scenario meaningless: windows
/// lost in rounding, a step limit below the time's resolution, an absolute tolerance beyond
/// the escape size.
fn keep_meaningful(scenario: &mut Scenario) {
    let start = scenario.time.start;
    scenario.time.settle = resolvable(start, scenario.time.settle);
    let record = start + scenario.time.settle;
    scenario.time.span = resolvable(record, scenario.time.span);
    let mut t_far = (record + scenario.time.span).abs().max(start.abs());
    if let Some(sweep) = &mut scenario.sweep {
        sweep.settle = resolvable(start, sweep.settle);
        let record = start + sweep.settle;
        scenario.time.span = resolvable(record, scenario.time.span);
        t_far = t_far.max((record + scenario.time.span).abs());
    }
    if let Some(map) = &mut scenario.map {
        map.settle = resolvable(start, map.settle);
        map.span = resolvable(start + map.settle, map.span);
        t_far = t_far.max((start + map.settle + map.span).abs());
    }
    if let Some(max_step) = &mut scenario.integrator.max_step {
        // (and never below the integrators' floor of 1e-300, which no time can resolve)
        *max_step = max_step.max(t_far * 1e-12).max(1e-298);
    }
    if scenario.integrator.atol >= scenario.limits.escape {
        scenario.limits.escape = scenario.integrator.atol * 2.0;
    }
}

fn not_negative() -> impl Strategy<Value = f64> {
    prop_oneof![positive(), Just(0.0)]
}

/// Free text: any characters, with quotes, backslashes and line breaks made likely.
fn text() -> BoxedStrategy<String> {
    prop_oneof![any::<String>(), "[a-z \"\\\\\n#/*()]{0,20}"].boxed()
}

/// A unit, or none: free text.
fn unit() -> impl Strategy<Value = Option<String>> {
    prop::option::of(prop_oneof![
        prop::sample::select(vec!["us", "uH", "uF", "A", "V", "N/m^2", "°C", ""])
            .prop_map(String::from),
        text(),
    ])
}

fn colour() -> impl Strategy<Value = Option<String>> {
    prop::option::of("#[0-9a-fA-F]{6}([0-9a-fA-F]{2})?")
}

/// A safe name: a letter or _, then letters and digits, made distinct by an index suffix
/// (so never a function or constant name).
fn names(count: usize, tag: &'static str) -> impl Strategy<Value = Vec<String>> {
    prop::collection::vec("[a-zA-Z_][a-zA-Z0-9]{0,5}", count).prop_map(move |bases| {
        bases
            .into_iter()
            .enumerate()
            .map(|(i, b)| format!("{b}_{tag}{i}"))
            .collect()
    })
}

fn pick(names: &[String]) -> prop::sample::Select<String> {
    prop::sample::select(names.to_vec())
}

fn scenario() -> impl Strategy<Value = Scenario> {
    (1usize..5, 0usize..4).prop_flat_map(|(n_states, n_params)| {
        (names(n_states, "s"), names(n_params, "p")).prop_flat_map(move |(states, params)| {
            let state_list = (
                prop::collection::vec((number(), 0usize..n_states, unit()), n_states),
                Just(states.clone()),
            )
                .prop_map(|(values, names)| {
                    names
                        .iter()
                        .zip(values)
                        .map(|(name, (start, other, unit))| State {
                            name: name.clone(),
                            start,
                            rate: format!("-{} + 0.5*{}", name, names[other]),
                            unit,
                        })
                        .collect::<Vec<_>>()
                })
                .boxed();
            let param_list = (
                prop::collection::vec((number(), number(), 0u8..3, unit()), n_params),
                Just(params.clone()),
            )
                .prop_filter_map("distinct range ends", |(values, names)| {
                    let mut out = Vec::new();
                    for (name, (a, b, which, unit)) in names.iter().zip(values) {
                        if a == b {
                            return None;
                        }
                        let (low, high) = if a < b { (a, b) } else { (b, a) };
                        let value = match which {
                            0 => low,
                            1 => high,
                            _ => low / 2.0 + high / 2.0,
                        };
                        out.push(Parameter {
                            name: name.clone(),
                            value,
                            range: (low, high),
                            unit,
                        });
                    }
                    Some(out)
                })
                .boxed();
            let integrator = (
                prop::sample::select(vec![
                    MethodChoice::Automatic,
                    MethodChoice::Dp5,
                    MethodChoice::Dp853,
                    MethodChoice::Stiff,
                ]),
                relative(),
                positive(),
                prop::option::of(positive()),
            )
                .prop_map(|(method, rtol, atol, max_step)| Integrator {
                    method,
                    rtol,
                    atol,
                    max_step,
                })
                .boxed();
            let time = (number(), not_negative(), positive(), unit())
                .prop_map(|(start, settle, span, unit)| Time {
                    start,
                    settle,
                    span,
                    unit,
                })
                .boxed();
            let direction =
                prop::sample::select(vec![Direction::Rising, Direction::Falling, Direction::Both]);
            let surface = prop_oneof![
                (
                    prop::collection::vec((pick(&states), number()), 0..3),
                    pick(&states),
                    number(),
                    number()
                )
                    .prop_map(|(mut pairs, first, weight, offset)| {
                        pairs.retain(|(n, _)| *n != first);
                        pairs.sort_by(|a, b| a.0.cmp(&b.0));
                        pairs.dedup_by(|a, b| a.0 == b.0);
                        let weight = if weight == 0.0 { 1.0 } else { weight };
                        pairs.insert(0, (first, weight));
                        Surface::Plane {
                            normal: Weights(pairs),
                            offset,
                        }
                    }),
                text().prop_map(Surface::Level),
            ];
            let axes = (pick(&states), pick(&states));
            let cut = prop::option::of((surface, direction, axes.clone()).prop_map(
                |(surface, direction, axes)| Cut {
                    surface,
                    direction,
                    axes,
                },
            ))
            .boxed();
            let strobe = prop::option::of((text(), number(), axes).prop_map(
                |(period, first_at, axes)| Strobe {
                    period,
                    first_at,
                    axes,
                },
            ))
            .boxed();
            let sweep_parts = (
                if params.is_empty() {
                    Just(String::new()).boxed()
                } else {
                    pick(&params).boxed()
                },
                number(),
                number(),
                2u32..=u32::MAX,
                not_negative(),
                1u32..1000,
                any::<bool>(),
                pick(&states),
                any::<bool>(),
            )
                .boxed();
            // two different parameters when there are two, else none (the map is left out)
            let map_parameters = if params.len() >= 2 {
                prop::sample::subsequence(params.clone(), 2)
                    .prop_shuffle()
                    .boxed()
            } else {
                Just(Vec::new()).boxed()
            };
            let map_axis = || {
                (number(), number(), 2u32..=u32::MAX)
                    .prop_filter("distinct ends", |(from, to, _)| from != to)
            };
            let map_parts = prop::option::of((
                map_parameters,
                map_axis(),
                map_axis(),
                not_negative(),
                positive(),
            ))
            .boxed();
            let view_axis = prop_oneof![pick(&states), Just("t".to_owned())];
            let view = prop::option::of(
                (
                    prop::option::of((number(), -90.0..=90.0f64, positive()).prop_map(
                        |(yaw_deg, pitch_deg, zoom)| Camera {
                            yaw_deg,
                            pitch_deg,
                            zoom,
                        },
                    )),
                    prop::option::of((view_axis.clone(), view_axis.clone(), view_axis)),
                    prop::option::of((colour(), colour(), colour(), colour()).prop_map(
                        |(trajectory, surface, cut_points, strobe_samples)| Colours {
                            trajectory,
                            surface,
                            cut_points,
                            strobe_samples,
                        },
                    )),
                )
                    .prop_map(|(camera, axes, colours)| View {
                        camera,
                        axes,
                        colours,
                    }),
            )
            .boxed();
            let limits = (1u64..=u64::MAX, positive())
                .prop_map(|(max_points, escape)| Limits { max_points, escape })
                .boxed();
            (
                (text(), text(), state_list, param_list, integrator, time),
                (cut, strobe, sweep_parts, map_parts, limits, view),
            )
                .prop_map(
                    |(
                        (title, notes, states, parameters, integrator, time),
                        (cut, strobe, sweep, map, limits, view),
                    )| {
                        let mut scenario = Scenario::new(&title, states, parameters, time);
                        scenario.notes = notes;
                        scenario.integrator = integrator;
                        let (
                            parameter,
                            from,
                            to,
                            values,
                            settle,
                            keep,
                            follow,
                            coordinate,
                            prefer_cut,
                        ) = sweep;
                        let source = match (cut.is_some(), strobe.is_some()) {
                            (true, true) => Some(if prefer_cut {
                                SweepSource::Cut
                            } else {
                                SweepSource::Strobe
                            }),
                            (true, false) => Some(SweepSource::Cut),
                            (false, true) => Some(SweepSource::Strobe),
                            (false, false) => None,
                        };
                        scenario.sweep = match source {
                            Some(source) if !parameter.is_empty() && from != to => Some(Sweep {
                                parameter,
                                from,
                                to,
                                values,
                                settle,
                                keep,
                                follow,
                                source,
                                coordinate,
                            }),
                            _ => None,
                        };
                        scenario.map = match (map, source) {
                            (
                                Some((
                                    axes,
                                    (x_from, x_to, x_values),
                                    (y_from, y_to, y_values),
                                    settle,
                                    span,
                                )),
                                Some(source),
                            ) if axes.len() == 2 => Some(RegimeMap {
                                x: MapAxis {
                                    parameter: axes[0].clone(),
                                    from: x_from,
                                    to: x_to,
                                    values: x_values,
                                },
                                y: MapAxis {
                                    parameter: axes[1].clone(),
                                    from: y_from,
                                    to: y_to,
                                    values: y_values,
                                },
                                settle,
                                span,
                                source,
                            }),
                            _ => None,
                        };
                        scenario.cut = cut;
                        scenario.strobe = strobe;
                        scenario.limits = limits;
                        scenario.view = view;
                        keep_meaningful(&mut scenario);
                        scenario
                    },
                )
        })
    })
}

proptest! {
    #[test]
    fn any_valid_scenario_saves_and_loads_back_equal(scenario in scenario()) {
        let errors: Vec<_> = scenario.check_fields().into_iter().filter(|p| p.is_error()).collect();
        prop_assert!(errors.is_empty(), "generated scenario is not valid: {errors:#?}");
        round_trip(&scenario);
    }
}
