//! Shared fixtures and helpers for the scenario tests.
#![allow(dead_code)]

use lamina_scenario::{Location, Problem, Scenario, ScenarioError, load_str};

/// The example scenario of the product brief, format 2 (invented values).
pub const EXAMPLE: &str = include_str!("../fixtures/clocked_resonator.ron");
/// A format-2 scenario with every optional block left out.
pub const MINIMAL: &str = include_str!("../fixtures/minimal.ron");
/// The example of the first release, format 1; its format-2 twin is
/// `fixtures/format2/clocked_resonator.ron`.
pub const EXAMPLE_FORMAT1: &str = include_str!("../fixtures/format1/clocked_resonator.ron");

/// `text` with the single occurrence of `from` replaced by `to`.
pub fn edit(text: &str, from: &str, to: &str) -> String {
    assert_eq!(
        text.matches(from).count(),
        1,
        "'{from}' must occur exactly once"
    );
    text.replacen(from, to, 1)
}

/// Loads `text`, which must load.
pub fn load(text: &str) -> Scenario {
    match load_str(text) {
        Ok(scenario) => scenario,
        Err(err) => panic!("expected the scenario to load, got: {err}"),
    }
}

/// Loads `text`, which must fail with a located syntax error; returns (line, column, field,
/// message, display).
pub fn syntax_error(text: &str) -> (usize, usize, Option<String>, String, String) {
    match load_str(text) {
        Err(err @ ScenarioError::Syntax { .. }) => {
            let display = err.to_string();
            let ScenarioError::Syntax {
                location,
                field,
                message,
            } = err
            else {
                unreachable!()
            };
            (location.line, location.column, field, message, display)
        }
        Err(other) => panic!("expected a syntax error, got: {other}"),
        Ok(_) => panic!("expected a syntax error, but the text loaded"),
    }
}

/// The one problem of `problems` on `field`, which must exist.
pub fn problem_on<'a>(problems: &'a [Problem], field: &str) -> &'a Problem {
    let found: Vec<&Problem> = problems.iter().filter(|p| p.field == field).collect();
    match found.as_slice() {
        [one] => one,
        _ => panic!(
            "expected one problem on '{field}', found {}: {problems:#?}",
            found.len()
        ),
    }
}

/// 1-based column of the first `needle` on 1-based `line` of `text`.
pub fn column_of(text: &str, line: usize, needle: &str) -> usize {
    let content = text.lines().nth(line - 1).expect("line exists");
    let Some(byte) = content.find(needle) else {
        panic!("'{needle}' is not on line {line}: {content}")
    };
    content[..byte].chars().count() + 1
}

/// The location of `needle` on `line`.
pub fn at(text: &str, line: usize, needle: &str) -> Option<Location> {
    Some(Location {
        line,
        column: column_of(text, line, needle),
    })
}
