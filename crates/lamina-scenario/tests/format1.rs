//! Format 1 files: each format-1 example loads through the mapping of its old words and
//! equals its format-2 twin written by hand; problems are located at the old words; a file
//! that mixes the formats' words is told which word its format uses.

mod common;

use std::path::{Path, PathBuf};

use common::{EXAMPLE_FORMAT1, at, edit, load, problem_on, syntax_error};
use lamina_scenario::{load_file, to_ron_string};

fn fixtures(dir: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("fixtures")
        .join(dir)
}

#[test]
fn every_format1_example_equals_its_format2_twin() {
    let mut names: Vec<PathBuf> = std::fs::read_dir(fixtures("format1"))
        .expect("format1 fixtures")
        .map(|entry| entry.expect("entry").path())
        .collect();
    names.sort();
    assert!(names.len() >= 5, "{names:?}");
    for old_path in names {
        let name = old_path.file_name().expect("file name");
        let twin_path = fixtures("format2").join(name);
        let old = load_file(&old_path).unwrap_or_else(|e| panic!("{}: {e}", old_path.display()));
        let twin = load_file(&twin_path).unwrap_or_else(|e| panic!("{}: {e}", twin_path.display()));
        assert_eq!(old, twin, "{}", old_path.display());
        assert_eq!((old.format_read(), twin.format_read()), (Some(1), Some(2)));
        assert_eq!(old.format, 2);
        // saved, the two are the same text
        assert_eq!(to_ron_string(&old), to_ron_string(&twin));
        // and both check alike
        assert_eq!(
            old.check().len(),
            twin.check().len(),
            "{}",
            old_path.display()
        );
    }
}

#[test]
fn a_format1_scenario_says_it_was_read_from_format1() {
    let scenario = load(EXAMPLE_FORMAT1);
    assert_eq!(
        scenario.format_note().as_deref(),
        Some("read format 1 (its old words are mapped to format 2's); saving writes format 2")
    );
    assert_eq!(scenario.check(), []);
}

#[test]
fn problems_of_a_format1_file_are_located_at_its_old_words() {
    let cases = [
        (
            "steps: 300",
            "steps: 0",
            "sweep.values",
            "not 1",
            23,
            "0, settle",
        ),
        (
            "bound: 1e6",
            "bound: 0.0",
            "limits.escape",
            "positive",
            25,
            "0.0",
        ),
        (
            "phase: 0.0",
            "phase: inf",
            "strobe.first_at",
            "finite",
            22,
            "inf",
        ),
    ];
    for (from, to, field, message, line, located) in cases {
        let text = edit(EXAMPLE_FORMAT1, from, to);
        let problems = load(&text).check_fields();
        let problem = problem_on(&problems, field);
        assert!(problem.message.contains(message), "{problem}");
        assert_eq!(problem.location, at(&text, line, located), "{problem}");
    }
}

#[test]
fn a_format1_view_maps_its_strobe_colour() {
    let text = edit(
        EXAMPLE_FORMAT1,
        "    limits: (max_points: 200000, bound: 1e6),\n",
        "    view: Some((colours: Some((strobe_points: Some(\"#00798c\"))))),\n",
    );
    let colours = load(&text).view.and_then(|v| v.colours).expect("colours");
    assert_eq!(colours.strobe_samples.as_deref(), Some("#00798c"));
    let text = edit(
        EXAMPLE_FORMAT1,
        "    limits: (max_points: 200000, bound: 1e6),\n",
        "    view: Some((colours: Some((strobe_points: Some(\"blue\"))))),\n",
    );
    let problems = load(&text).check_fields();
    let problem = problem_on(&problems, "view.colours.strobe_samples");
    assert_eq!(problem.location, at(&text, 25, "Some(\"blue\")"));
}

#[test]
fn format2_words_in_a_format1_file_are_refused_with_a_hint() {
    let text = edit(EXAMPLE_FORMAT1, "phase: 0.0", "first_at: 0.0");
    let (line, _, field, message, _) = syntax_error(&text);
    assert_eq!((line, field.as_deref()), (22, Some("strobe")));
    assert_eq!(
        message,
        "unknown field 'first_at' in strobe; expected one of period, phase, axes \
         ('first_at' is format 2's word; this file says format: 1, which says 'phase')"
    );
    // format 1 has no units and no map
    let text = edit(
        EXAMPLE_FORMAT1,
        "rate: \"v\")",
        "rate: \"v\", unit: \"um\")",
    );
    let (_, _, field, message, _) = syntax_error(&text);
    assert_eq!(field.as_deref(), Some("states[0]"));
    assert!(
        message.starts_with("unknown field 'unit' in states[0]; expected one of name, start, rate"),
        "{message}"
    );
    let text = edit(
        EXAMPLE_FORMAT1,
        "    limits:",
        "    map: Some((x: (parameter: \"a\", from: 0.1, to: 0.6, values: 3), y: (parameter: \"w\", from: 0.8, to: 1.6, values: 3), settle: 1.0, span: 1.0, source: Strobe)),\n    limits:",
    );
    let (_, _, _, message, _) = syntax_error(&text);
    assert!(
        message.starts_with("unknown field 'map' in the scenario"),
        "{message}"
    );
}
