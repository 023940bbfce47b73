//! Property tests with hostile input: random bytes, random soups of RON's tokens and random
//! nestings of brackets go to the loader, random expressions and extreme times to the checks.
//! Nothing panics; brackets nested past the limit are refused exactly where they first go too
//! deep; every message is located inside the text and writes its numbers in short form.
//!
//! The inputs are small and the cases few, so this stays a few seconds in a debug build;
//! memory stays bounded because the loader refuses deep nesting before anything grows with it
//! (the end-to-end test of `lamina check` on 100 000 brackets runs under a memory limit).

mod common;

use common::MINIMAL;
use lamina_scenario::{ScenarioError, load_bytes, load_str};
use proptest::prelude::*;

/// The nesting the loader allows.
const MAX_NESTING: usize = 32;

/// Checks what any load error must satisfy: it displays, and a located one points inside
/// the text.
fn check_error(text_lines: usize, err: &ScenarioError) -> Result<(), TestCaseError> {
    let shown = err.to_string();
    prop_assert!(!shown.is_empty());
    if let ScenarioError::Syntax { location, .. } = err {
        prop_assert!(location.line >= 1 && location.column >= 1, "{shown}");
        prop_assert!(location.line <= text_lines + 1, "{shown}");
    }
    Ok(())
}

/// Pieces of RON and of scenarios, to be strung together at random.
fn token() -> impl Strategy<Value = &'static str> {
    prop::sample::select(vec![
        "(",
        ")",
        "[",
        "]",
        "{",
        "}",
        ",",
        ":",
        "\"",
        "\"x\"",
        "r#\"",
        "\"#",
        "'a'",
        "/*",
        "*/",
        "//",
        "\n",
        " ",
        "Some(",
        "None",
        "format",
        "2",
        "1",
        "title",
        "states",
        "-1e308",
        "1e400",
        "NaN",
        "inf",
        "0x",
        "_",
        "#![enable(implicit_some)]",
        "\u{feff}",
        "\\",
        "ü",
    ])
}

/// The largest depth reached by a text of brackets only, and the byte offset of the first
/// bracket that goes past `MAX_NESTING`, counted as the loader counts (any closer closes).
fn nesting_of(brackets: &str) -> Option<usize> {
    let mut depth = 0_usize;
    for (idx, c) in brackets.char_indices() {
        match c {
            '(' | '[' | '{' => {
                depth += 1;
                if depth > MAX_NESTING {
                    return Some(idx);
                }
            }
            _ => depth = depth.saturating_sub(1),
        }
    }
    None
}

/// An expression over the states `x`, `v`, the parameter `c` and `t`, with values that make
/// trouble (0/0, 1e308, 1e-300) among the leaves.
fn expression() -> impl Strategy<Value = String> {
    let leaf = prop::sample::select(vec![
        "x", "v", "c", "t", "0", "1", "2.5", "1e308", "1e-300", "pi", "0/0", "-1",
    ])
    .prop_map(str::to_owned);
    let expressions = leaf.prop_recursive(4, 24, 2, |inner| {
        let operator = prop::sample::select(vec!["+", "-", "*", "/", "^"]);
        let function = prop::sample::select(vec!["sin", "exp", "ln", "sqrt", "abs", "sign"]);
        prop_oneof![
            (inner.clone(), operator, inner.clone()).prop_map(|(a, op, b)| format!("{a} {op} {b}")),
            (function, inner.clone()).prop_map(|(f, a)| format!("{f}({a})")),
            inner.clone().prop_map(|a| format!("({a})")),
            (inner.clone(), inner).prop_map(|(a, b)| format!("max({a}, {b})")),
        ]
    });
    prop_oneof![
        4 => expressions,
        1 => "[xvct0-9.e+*/^(),-]{0,16}",
    ]
}

/// A scenario with both states' rates, a level surface and a strobe period given.
fn scenario_text(rates: (&str, &str), surface: &str, period: &str, start: f64) -> String {
    format!(
        "(
    format: 2,
    title: \"random\",
    states: [
        (name: \"x\", start: 1.0, rate: \"{}\"),
        (name: \"v\", start: 0.0, rate: \"{}\"),
    ],
    parameters: [(name: \"c\", value: 0.2, range: (0.0, 1.0))],
    integrator: (method: Dp5, rtol: 1e-8, atol: 1e-10),
    time: (start: {start:?}, settle: 0.0, span: 50.0),
    cut: Some((surface: Level(\"{surface}\"), direction: Both, axes: (\"x\", \"v\"))),
    strobe: Some((period: \"{period}\", first_at: 0.0, axes: (\"x\", \"v\"))),
)",
        rates.0, rates.1
    )
}

/// Whether `text` has a run of more than 20 digits: a number in short form has at most 17
/// significant digits and, below 1, three zeros before them (`0.0001234...`).
fn has_long_number(text: &str) -> bool {
    let mut run = 0;
    for c in text.chars() {
        run = if c.is_ascii_digit() { run + 1 } else { 0 };
        if run > 20 {
            return true;
        }
    }
    false
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(200))]

    #[test]
    fn random_bytes_never_panic(bytes in prop::collection::vec(any::<u8>(), 0..1500)) {
        let lines = bytes.iter().filter(|&&b| b == b'\n').count() + 1;
        if let Err(err) = load_bytes(&bytes) {
            check_error(lines, &err)?;
        }
    }

    #[test]
    fn random_tokens_never_panic(tokens in prop::collection::vec(token(), 0..300)) {
        let text: String = tokens.concat();
        if let Err(err) = load_str(&text) {
            check_error(text.lines().count(), &err)?;
        }
        // the same inside a scenario's notes and as its rate
        for field in ["notes: ", "title: \"t\", notes: \"n\", states: [(name: \"x\", start: 0.0, rate: "] {
            let text = format!("(format: 2, {field}{text}");
            if let Err(err) = load_str(&text) {
                check_error(text.lines().count(), &err)?;
            }
        }
    }

    #[test]
    fn nesting_past_the_limit_is_refused_where_it_starts(
        brackets in "[(\\[{]{0,60}[)\\]}]{0,20}[(\\[{]{0,60}[)\\]}]{0,60}"
    ) {
        let err = load_str(&brackets).expect_err("brackets alone are no scenario");
        let ScenarioError::Syntax { location, message, .. } = &err else {
            panic!("expected a located error, got {err}")
        };
        match nesting_of(&brackets) {
            Some(offset) => {
                prop_assert_eq!((location.line, location.column), (1, offset + 1));
                prop_assert!(message.contains("more than 32 deep"), "{}", message);
            }
            None => prop_assert!(!message.contains("deep"), "{}", message),
        }
    }

    #[test]
    fn deep_values_name_their_field(depth in 0_usize..80, kinds in prop::collection::vec(0_usize..3, 80)) {
        let opens: String = kinds[..depth].iter().map(|&k| ['(', '[', '{'][k]).collect();
        let closes: String = kinds[..depth].iter().rev().map(|&k| [')', ']', '}'][k]).collect();
        let notes = format!("notes: {opens}\"x\"{closes},\n    title:");
        let text = MINIMAL.replacen("title:", &notes, 1);
        let result = load_str(&text);
        // the scenario's own '(' is level 1
        if depth + 1 > MAX_NESTING {
            let Err(ScenarioError::Syntax { field, message, .. }) = result else {
                panic!("expected the nesting to be refused")
            };
            prop_assert_eq!(field.as_deref(), Some("notes"));
            prop_assert!(message.contains("more than 32 deep"), "{}", message);
        } else if depth == 0 {
            prop_assert!(result.is_ok());
        } else {
            let err = result.expect_err("notes are a string");
            prop_assert!(!err.to_string().contains("deep"), "{}", err);
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    #[test]
    fn random_expressions_are_checked_without_panic(
        rate_x in expression(),
        rate_v in expression(),
        surface in expression(),
        period in expression(),
        start in prop::sample::select(vec![0.0, -3.5, 1e6, 1e15, 1e20, -1e300]),
    ) {
        let text = scenario_text((&rate_x, &rate_v), &surface, &period, start);
        let scenario = load_str(&text).expect("the expressions are strings");
        for problem in scenario.check() {
            let shown = problem.to_string();
            prop_assert!(problem.location.is_some(), "{}", shown);
            prop_assert!(!has_long_number(&shown), "{}", shown);
        }
    }
}
