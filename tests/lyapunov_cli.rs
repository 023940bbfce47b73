//! End-to-end tests of `lamina lyapunov`: text and JSON output, the trace CSV, the note for
//! forced models, the caution for rates that jump, refused counts and runs that stop early.
//! Demo scenarios run with shorter spans (temporary copies) to keep debug builds quick.

use std::fs;
use std::path::{Path, PathBuf};

use assert_cmd::Command;
use predicates::prelude::*;
use serde_json::Value;
use tempfile::TempDir;

mod common;
use common::write;

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

/// A copy of demo scenario `name` in `dir` with `from` replaced by `to` (once).
fn demo_copy(dir: &Path, name: &str, from: &str, to: &str) -> PathBuf {
    let source = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("demo_scenarios")
        .join(name);
    let text = fs::read_to_string(&source).expect("demo scenario is readable");
    assert_eq!(
        text.matches(from).count(),
        1,
        "'{from}' must occur once in {name}"
    );
    let path = dir.join(name);
    fs::write(&path, text.replacen(from, to, 1)).expect("copy written");
    path
}

/// Runs `lamina lyapunov FILE --json [extra]`, expecting success, and parses the JSON.
fn json_of(path: &Path, extra: &[&str]) -> Value {
    let output = lamina()
        .arg("lyapunov")
        .arg(path)
        .arg("--json")
        .args(extra)
        .assert()
        .success()
        .get_output()
        .clone();
    let text = String::from_utf8(output.stdout).expect("stdout is UTF-8");
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("not JSON ({e}):\n{text}"))
}

fn numbers(value: &Value, key: &str) -> Vec<f64> {
    value[key]
        .as_array()
        .unwrap_or_else(|| panic!("'{key}' is not an array in {value}"))
        .iter()
        .map(|v| v.as_f64().expect("a number"))
        .collect()
}

/// A damped oscillator driven at frequency w: x'' + c x' + x = a cos(w t).
const DRIVEN: &str = r#"(
    format: 2,
    title: "Driven damped oscillator",
    states: [
        (name: "x", start: 1.0, rate: "v"),
        (name: "v", start: 0.0, rate: "-c*v - x + a*cos(w*t)"),
    ],
    parameters: [
        (name: "c", value: 0.3, range: (0.0, 1.0)),
        (name: "a", value: 0.5, range: (0.0, 1.0)),
        (name: "w", value: 1.4, range: (0.5, 3.0)),
    ],
    integrator: (method: Dp853, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 1000.0),
)
"#;

#[test]
fn help_lists_the_command_and_its_options() {
    lamina()
        .arg("--help")
        .assert()
        .success()
        .stdout(predicate::str::contains("lyapunov"));
    lamina()
        .args(["lyapunov", "--help"])
        .assert()
        .success()
        .stdout(
            predicate::str::contains("--json")
                .and(predicate::str::contains("--trace"))
                .and(predicate::str::contains("--exponents"))
                .and(predicate::str::contains("--recheck")),
        );
}

#[test]
fn chaotic_demo_has_a_clearly_positive_largest_exponent() {
    let dir = TempDir::new().unwrap();
    let path = demo_copy(
        dir.path(),
        "piecewise_circuit.ron",
        "span: 3000.0",
        "span: 300.0",
    );
    let result = json_of(&path, &[]);
    let exponents = numbers(&result, "exponents");
    let spread = numbers(&result, "spread");
    assert_eq!(exponents.len(), 3);
    assert_eq!(result["time"].as_f64(), Some(300.0));
    // [from memory] the double-scroll circuit near these values is chaotic, its largest
    // exponent a few tenths
    assert!(exponents[0] > 0.1, "largest {}", exponents[0]);
    assert!(
        exponents[0] > 6.0 * spread[0],
        "{exponents:?} spread {spread:?}"
    );
    // [analytic] a bounded autonomous flow away from rest has a zero exponent along the flow
    assert!(exponents[1].abs() < 0.05, "middle {}", exponents[1]);
    assert_eq!(result["verdict"], "chaotic");
    assert_eq!(result["time_direction_omitted"], false);
    assert_eq!(result["rates_jump"], false);
    assert_eq!(result["finished"], true);
    let sum: f64 = exponents.iter().sum();
    assert_eq!(result["sum"].as_f64(), Some(sum));
    let dimension = result["kaplan_yorke"].as_f64().expect("a dimension");
    assert!(dimension > 2.0 && dimension < 3.0, "{dimension}");
}

#[test]
fn periodic_demo_has_one_zero_exponent_and_says_so_in_text() {
    let path =
        Path::new(env!("CARGO_MANIFEST_DIR")).join("demo_scenarios/tunnel_diode_oscillator.ron");
    let result = json_of(&path, &[]);
    let exponents = numbers(&result, "exponents");
    // [analytic] a periodic orbit of an autonomous flow: one zero exponent (along the orbit),
    // the other negative (the orbit attracts: the demo's notes)
    assert!(exponents[0].abs() < 0.01, "{exponents:?}");
    assert!(exponents[1] < -1.0, "{exponents:?}");
    assert_eq!(result["verdict"], "periodic");
    assert_eq!(result["kaplan_yorke"].as_f64(), Some(1.0));

    let text = lamina()
        .arg("lyapunov")
        .arg(&path)
        .assert()
        .success()
        .get_output()
        .stdout
        .clone();
    let text = String::from_utf8(text).unwrap();
    for expected in [
        "l1 = ",
        "l2 = ",
        "spread",
        "sum: ",
        "Kaplan–Yorke dimension: 1.0",
        "verdict: periodic",
    ] {
        assert!(text.contains(expected), "'{expected}' missing from\n{text}");
    }
    // full round-trip precision: the text shows exactly the JSON's numbers
    let l1: f64 = text
        .split("l1 = ")
        .nth(1)
        .and_then(|rest| rest.split_whitespace().next())
        .and_then(|cell| cell.parse().ok())
        .unwrap_or_else(|| panic!("no number after 'l1 = ' in\n{text}"));
    assert_eq!(l1.to_bits(), exponents[0].to_bits(), "{text}");
    assert!(!text.contains("time direction"));
}

#[test]
fn trace_is_written_as_csv_ending_at_the_result() {
    let dir = TempDir::new().unwrap();
    let path = demo_copy(
        dir.path(),
        "tunnel_diode_oscillator.ron",
        "span: 400.0",
        "span: 100.0",
    );
    let out = dir.path().join("out");
    fs::create_dir(&out).unwrap();
    let trace = write(&out, "trace.csv", "old contents\n");
    let result = json_of(&path, &["--trace", trace.to_str().unwrap()]);
    let text = fs::read_to_string(&trace).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("t,l1,l2"));
    let rows: Vec<Vec<f64>> = lines
        .map(|line| {
            line.split(',')
                .map(|c| c.parse::<f64>().expect("a number"))
                .collect()
        })
        .collect();
    assert!(
        rows.len() >= 100 && rows.len() <= 1001,
        "{} rows",
        rows.len()
    );
    assert!(rows.windows(2).all(|w| w[0][0] < w[1][0]), "times increase");
    let last = rows.last().unwrap();
    assert_eq!(last[0], 160.0);
    assert_eq!(last[1..], numbers(&result, "exponents")[..]);
    let names: Vec<String> = fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, ["trace.csv"], "temporary files left");
}

#[test]
fn forced_model_lists_the_states_and_notes_the_time_direction() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "driven.ron", DRIVEN);
    let result = json_of(&path, &[]);
    assert_eq!(result["time_direction_omitted"], true);
    let exponents = numbers(&result, "exponents");
    assert_eq!(exponents.len(), 2);
    for l in &exponents {
        // [analytic] x'' + c x' + x: eigenvalues -c/2 +- i sqrt(1 - c^2/4), both exponents -0.15
        assert!((l + 0.15).abs() < 1e-3, "{exponents:?}");
    }
    assert_eq!(result["verdict"], "periodic");
    lamina()
        .arg("lyapunov")
        .arg(&path)
        .assert()
        .success()
        .stdout(predicate::str::contains("time direction is not listed"));
}

#[test]
fn the_largest_alone_is_one_exponent() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "driven.ron", DRIVEN);
    let result = json_of(&path, &["--exponents", "1"]);
    let exponents = numbers(&result, "exponents");
    assert_eq!(exponents.len(), 1);
    // [analytic] as above: -c/2
    assert!((exponents[0] + 0.15).abs() < 1e-3, "{exponents:?}");
    for count in ["0", "3"] {
        lamina()
            .arg("lyapunov")
            .arg(&path)
            .args(["--exponents", count])
            .assert()
            .code(1)
            .stdout("")
            .stderr(predicate::str::contains("ask for 1 to 2"));
    }
}

#[test]
fn the_relay_loop_crosses_its_switches_with_saltation_matrices_and_is_periodic() {
    // the demo's notes: the loop settles into a relay oscillation, a limit cycle; its
    // exponents carry the switches by the saltation matrix (REFERENCES.md case 19), so one is
    // zero and the verdict is periodic, never equilibrium
    let dir = TempDir::new().unwrap();
    let path = demo_copy(dir.path(), "relay_loop.ron", "span: 200.0", "span: 100.0");
    let result = json_of(&path, &[]);
    assert_eq!(result["rates_jump"], false);
    assert_eq!(result["switches_not_transversal"], 0);
    assert!(result["saltations"].as_u64().unwrap() > 20, "{result}");
    assert_eq!(result["verdict"], "periodic", "{result}");
    lamina()
        .arg("lyapunov")
        .arg(&path)
        .assert()
        .success()
        .stdout(predicate::str::contains("each with its saltation matrix"))
        .stdout(predicate::str::contains("verdict: periodic"));
}

#[test]
fn a_remainder_that_jumps_gets_a_caution() {
    let dir = TempDir::new().unwrap();
    let text = DRIVEN.replace("rate: \"v\"", "rate: \"v + 0.01*(x % 0.5)\"");
    assert_ne!(text, DRIVEN);
    let path = write(dir.path(), "remainder.ron", &text);
    let result = json_of(&path, &[]);
    assert_eq!(result["rates_jump"], true);
    lamina()
        .arg("lyapunov")
        .arg(&path)
        .assert()
        .success()
        .stdout(predicate::str::contains("caution: the rates jump"));
}

#[test]
fn a_run_that_escapes_reports_why_and_fails() {
    let dir = TempDir::new().unwrap();
    let text = DRIVEN
        .replace("rate: \"v\"", "rate: \"v + x^2\"")
        .replace("start: 1.0", "start: 3.0");
    let path = write(dir.path(), "escape.ron", &text);
    let output = lamina()
        .arg("lyapunov")
        .arg(&path)
        .arg("--json")
        .assert()
        .code(1)
        .stderr(
            predicate::str::contains("ended early").and(predicate::str::contains("escape size")),
        )
        .get_output()
        .clone();
    let result: Value = serde_json::from_slice(&output.stdout).expect("JSON");
    assert_eq!(result["finished"], false);
    assert!(result["t_end"].as_f64().unwrap() < 1000.0);
}

#[test]
fn a_missing_file_is_an_error() {
    lamina()
        .args(["lyapunov", "no_such_file.ron"])
        .assert()
        .code(1)
        .stdout("")
        .stderr(predicate::str::contains("no_such_file.ron"));
}

#[test]
fn recheck_compares_the_exponents_with_their_spread() {
    let dir = TempDir::new().unwrap();
    let path = write(
        dir.path(),
        "driven.ron",
        &DRIVEN.replace("span: 1000.0", "span: 300.0"),
    );
    let result = json_of(&path, &["--recheck"]);
    let recheck = &result["recheck"];
    // the keys of the product brief; the tolerances divided by 100 [analytic]
    assert!((recheck["rtol"].as_f64().expect("rtol") - 1e-11).abs() < 1e-25);
    assert!((recheck["atol"].as_f64().expect("atol") - 1e-14).abs() < 1e-28);
    let digits = recheck["digits"].as_u64().expect("digits");
    assert!(["l1", "l2"].contains(&recheck["worst"].as_str().expect("worst")));
    // [analytic] a linear oscillator damped by c: both exponents are -c / 2 = -0.15; the
    // recheck's digits must be right for them
    let exponents = numbers(&result, "exponents");
    for l in exponents {
        assert!(
            ((l + 0.15) / 0.15).abs() <= 10f64.powi(1 - digits as i32),
            "{l}: {recheck}"
        );
    }
    let note = recheck["note"].as_str().expect("note");
    assert!(note.contains("spread"), "{note}");
    // and a line in the text
    lamina()
        .arg("lyapunov")
        .arg(&path)
        .arg("--recheck")
        .assert()
        .success()
        .stdout(predicate::str::contains("recheck: ").and(predicate::str::contains("worst: l")));
}
