//! End-to-end tests of `lamina cycle`: the demo scenarios with periodic orbits, reference
//! orbits through scenario files, the JSON document, the default map, and the messages when
//! there is no orbit to find.

use std::fs;
use std::path::Path;

use assert_cmd::Command;
use predicates::prelude::*;
use serde_json::Value;
use tempfile::TempDir;

mod common;
use common::{demo, write};

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

/// Runs `lamina cycle` with `args` and parses the JSON it prints.
fn cycle_json(path: &Path, args: &[&str]) -> Value {
    let output = lamina()
        .arg("cycle")
        .arg(path)
        .args(args)
        .arg("--json")
        .assert()
        .success()
        .get_output()
        .clone();
    let text = String::from_utf8(output.stdout).expect("UTF-8");
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("not JSON ({e}):\n{text}"))
}

fn number(value: &Value, what: &str) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("{what} is not a number: {value}"))
}

/// The `(re, im)` pairs of a list of complex numbers.
fn complex_list(value: &Value, what: &str) -> Vec<(f64, f64)> {
    value
        .as_array()
        .unwrap_or_else(|| panic!("{what} is not an array: {value}"))
        .iter()
        .map(|m| (number(&m["re"], "re"), number(&m["im"], "im")))
        .collect()
}

/// Checks the keys of the product brief and returns the multipliers.
fn check_document(doc: &Value, states: &[&str], n_multipliers: usize) -> Vec<(f64, f64)> {
    let period = number(&doc["period"], "period");
    assert!(period > 0.0, "period {period}");
    let point = doc["point"].as_object().expect("point is an object");
    let keys: Vec<&str> = point.keys().map(String::as_str).collect();
    let mut expected: Vec<&str> = states.to_vec();
    expected.sort_unstable();
    let mut sorted = keys.clone();
    sorted.sort_unstable();
    assert_eq!(sorted, expected, "point keys");
    assert!(doc["stable"].is_boolean());
    assert!(number(&doc["residual"], "residual") >= 0.0);
    assert!(doc["k"].as_u64().is_some_and(|k| k >= 1));
    let multipliers = complex_list(&doc["multipliers"], "multipliers");
    assert_eq!(multipliers.len(), n_multipliers, "{doc}");
    multipliers
}

fn modulus((re, im): (f64, f64)) -> f64 {
    re.hypot(im)
}

#[test]
fn help_lists_the_options() {
    lamina()
        .args(["cycle", "--help"])
        .assert()
        .success()
        .stdout(
            predicate::str::contains("--map")
                .and(predicate::str::contains("--returns"))
                .and(predicate::str::contains("--from-start"))
                .and(predicate::str::contains("--json"))
                .and(predicate::str::contains("--recheck")),
        );
}

#[test]
fn relay_loop_has_a_stable_cycle_through_its_cut() {
    let doc = cycle_json(&demo("relay_loop.ron"), &[]);
    let multipliers = check_document(&doc, &["y1", "y2", "y3", "u"], 3);
    assert_eq!(doc["k"], 1);
    assert_eq!(doc["stable"], true);
    assert!(multipliers.iter().all(|&m| modulus(m) < 1.0));
    // [analytic] the point lies on the cut u = 0
    assert!(number(&doc["point"]["u"], "u").abs() < 1e-12);
    let floquet = complex_list(&doc["floquet"], "floquet");
    assert_eq!(floquet.len(), 4);
    // [analytic] an autonomous flow has the Floquet multiplier 1 along the flow
    assert!(
        floquet
            .iter()
            .any(|&(re, im)| (re - 1.0).abs() < 1e-6 && im == 0.0),
        "{floquet:?}"
    );
}

#[test]
fn tunnel_diode_oscillator_has_a_stable_cycle_through_its_cut() {
    let doc = cycle_json(&demo("tunnel_diode_oscillator.ron"), &[]);
    check_document(&doc, &["v", "i"], 1);
    assert_eq!(doc["stable"], true);
    // [analytic] the point lies on the cut i = 0
    assert!(number(&doc["point"]["i"], "i").abs() < 1e-12);
    let floquet = complex_list(&doc["floquet"], "floquet");
    // [analytic] the trivial Floquet multiplier of an autonomous flow is 1
    assert!(
        floquet.iter().any(|&(re, _)| (re - 1.0).abs() < 1e-6),
        "{floquet:?}"
    );
}

#[test]
fn clocked_resonator_at_low_drive_has_a_one_return_strobe_orbit() {
    let dir = TempDir::new().unwrap();
    let text = fs::read_to_string(demo("clocked_resonator.ron")).unwrap();
    let from = r#"(name: "a", value: 0.38"#;
    assert_eq!(text.matches(from).count(), 1);
    let path = write(
        dir.path(),
        "clocked.ron",
        &text.replacen(from, r#"(name: "a", value: 0.2"#, 1),
    );
    // the model uses t, so the default map is its strobe even though it has a cut
    let doc = cycle_json(&path, &[]);
    let multipliers = check_document(&doc, &["x", "v"], 2);
    assert_eq!(doc["k"], 1);
    assert_eq!(doc["stable"], true);
    assert!(
        doc.get("floquet").is_none(),
        "no floquet for a strobe: {doc}"
    );
    // [analytic] the strobe period is 2 pi / w with w = 1.1
    let period = number(&doc["period"], "period");
    assert!(
        (period - 2.0 * std::f64::consts::PI / 1.1).abs() < 1e-12,
        "{period}"
    );
    // [analytic] Liouville: the product of the multipliers is exp(trace J T) = exp(-2 zeta T)
    let product = multipliers[0].0 * multipliers[1].0 - multipliers[0].1 * multipliers[1].1;
    assert!(
        (product - (-2.0 * 0.125 * period).exp()).abs() < 1e-7,
        "{product}"
    );
    // same with the map named
    let named = cycle_json(&path, &["--map", "strobe"]);
    assert_eq!(named["period"], doc["period"]);
    // its cut map is refused with the reason
    lamina()
        .arg("cycle")
        .arg(&path)
        .args(["--map", "cut"])
        .assert()
        .failure()
        .stderr(predicate::str::contains("uses t").and(predicate::str::contains("strobe")));
}

#[test]
fn chaos_and_a_torus_have_no_repeat_without_a_count_of_returns() {
    for name in ["piecewise_circuit.ron", "coupled_oscillators.ron"] {
        lamina()
            .arg("cycle")
            .arg(demo(name))
            .assert()
            .failure()
            .stdout("")
            .stderr(
                predicate::str::contains("no repeat within 12 returns")
                    .and(predicate::str::contains("--returns")),
            );
    }
}

/// Rössler (a = b = 0.2, c = 5.7) with the cut x = 0, x decreasing.
const ROSSLER: &str = r#"(
    format: 2,
    title: "Rossler",
    states: [
        (name: "x", start: 1.0, rate: "-y - z"),
        (name: "y", start: 1.0, rate: "x + a*y"),
        (name: "z", start: 0.0, rate: "b + z*(x - c)"),
    ],
    parameters: [
        (name: "a", value: 0.2, range: (0.0, 1.0)),
        (name: "b", value: 0.2, range: (0.0, 1.0)),
        (name: "c", value: 5.7, range: (1.0, 10.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-12, atol: 1e-12),
    time: (start: 0.0, settle: 100.0, span: 600.0),
    cut: Some((
        surface: Plane(normal: {"x": 1.0}, offset: 0.0),
        direction: Falling,
        axes: ("y", "z"),
    )),
)
"#;

#[test]
fn rossler_saddle_orbit_through_the_command_line() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "rossler.ron", ROSSLER);
    let doc = cycle_json(&path, &["--returns", "1"]);
    let multipliers = check_document(&doc, &["x", "y", "z"], 2);
    // P. Cvitanović et al., ChaosBook.org, "Rössler's model" (REFERENCES case 10)
    assert!((number(&doc["point"]["y"], "y") - 6.09176831742).abs() < 1e-7);
    assert!((number(&doc["point"]["z"], "z") - 1.29973195919).abs() < 1e-7);
    assert!((number(&doc["period"], "period") - 5.88108845586).abs() < 1e-8);
    assert!(
        (multipliers[0].0 - -2.403953527).abs() < 1e-6,
        "{multipliers:?}"
    );
    assert_eq!(doc["stable"], false);
    let floquet = complex_list(&doc["floquet"], "floquet");
    // ChaosBook.org (REFERENCES case 10): the trivial multiplier 1 +- 1e-8
    assert!(
        floquet
            .iter()
            .any(|&(re, im)| (re - 1.0).abs() < 1e-8 && im == 0.0)
    );
    // the readable report says how unstable; how stability would be lost is no question for
    // an unstable orbit (its second multiplier, near zero, says nothing about it)
    lamina()
        .arg("cycle")
        .arg(&path)
        .args(["--returns", "1"])
        .assert()
        .success()
        .stdout(
            predicate::str::starts_with("1-return orbit of the cut map, period 5.881088455")
                .and(predicate::str::contains("unstable, 1 unstable direction"))
                .and(predicate::str::contains("unstable: |m| = 2.40395"))
                .and(predicate::str::contains("trivial"))
                .and(predicate::str::contains("period doubling").not())
                .and(predicate::str::contains("through -1").not()),
        );
}

#[test]
fn rossler_two_returns_are_never_the_one_return_orbit_run_twice() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "rossler.ron", ROSSLER);
    let doc = cycle_json(&path, &["--returns", "2"]);
    let multipliers = check_document(&doc, &["x", "y", "z"], 2);
    let period = number(&doc["period"], "period");
    assert_eq!(doc["asked_k"], 2);
    match doc["k"].as_u64() {
        Some(2) => {
            // REFERENCES case 18 [A]: not the period-1 orbit twice (period 2 x 5.88108845586,
            // multiplier (-2.403953527)^2)
            assert!((period - 2.0 * 5.88108845586).abs() > 1e-3, "{period}");
            assert!((multipliers[0].0 - 5.7790).abs() > 1e-2, "{multipliers:?}");
            // P. Cvitanović et al., ChaosBook.org, "Rössler's model": the 2-cycle has
            // period 11.758626 and the Floquet multiplier -3.512 [from memory]
            assert!((period - 11.758626).abs() < 1e-5, "{period}");
            assert!((multipliers[0].0 - -3.512).abs() < 1e-3, "{multipliers:?}");
        }
        Some(1) => {
            // the orbit it really is, said as such
            assert!((period - 5.88108845586).abs() < 1e-8, "{period}");
            assert!(doc["note"].as_str().is_some(), "{doc}");
        }
        other => panic!("k = {other:?}: {doc}"),
    }
    // the readable report says when seeds were set aside
    let output = lamina()
        .arg("cycle")
        .arg(&path)
        .args(["--returns", "2"])
        .assert()
        .success()
        .get_output()
        .clone();
    let text = String::from_utf8(output.stdout).expect("UTF-8");
    assert!(
        text.contains("-return orbit of the cut map, period "),
        "{text}"
    );
    if doc["k"] == 2 {
        assert!(!text.contains("period 11.762177"), "{text}");
    }
}

#[test]
fn recheck_reports_the_digits_that_agree() {
    let text = r#"(
    format: 2,
    title: "Planar limit cycle",
    states: [
        (name: "x", start: 0.5, rate: "x*(1 - x^2 - y^2) - w*y"),
        (name: "y", start: 0.0, rate: "y*(1 - x^2 - y^2) + w*x"),
    ],
    parameters: [
        (name: "w", value: 2.0, range: (0.5, 3.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-8, atol: 1e-10),
    time: (start: 0.0, settle: 0.0, span: 30.0),
    cut: Some((
        surface: Plane(normal: {"y": 1.0}, offset: 0.0),
        direction: Rising,
        axes: ("x", "y"),
    )),
)
"#;
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "cycle.ron", text);
    let doc = cycle_json(&path, &["--from-start", "--recheck"]);
    let recheck = &doc["recheck"];
    // the keys of the product brief; the tolerances divided by 100 [analytic]
    assert!(
        (number(&recheck["rtol"], "rtol") - 1e-10).abs() < 1e-24,
        "{recheck}"
    );
    assert!(
        (number(&recheck["atol"], "atol") - 1e-12).abs() < 1e-26,
        "{recheck}"
    );
    let digits = recheck["digits"].as_u64().expect("digits");
    let worst = recheck["worst"].as_str().expect("worst");
    assert!(
        ["period", "x", "y", "multiplier 1"].contains(&worst),
        "{recheck}"
    );
    // [analytic] REFERENCES case 3: the period pi is right to the digits claimed
    let period = number(&doc["period"], "period");
    let error = ((period - std::f64::consts::PI) / std::f64::consts::PI).abs();
    assert!(
        error <= 10f64.powi(1 - digits as i32),
        "{period}, {recheck}"
    );
    assert!((4..15).contains(&digits), "{recheck}");
    lamina()
        .arg("cycle")
        .arg(&path)
        .args(["--from-start", "--recheck"])
        .assert()
        .success()
        .stdout(
            predicate::str::contains("recheck: ").and(predicate::str::contains(
                "significant digit(s) agree with a second computation at rtol 1.0e-10",
            )),
        );
}

/// The harmonic oscillator x' = v, v' = -w^2 x, w = 2, strobed at `period`, with a cut v = 0.
fn harmonic(period: &str) -> String {
    format!(
        r#"(
    format: 2,
    title: "Harmonic oscillator",
    states: [
        (name: "x", start: 1.0, rate: "v"),
        (name: "v", start: 0.5, rate: "-w^2*x"),
    ],
    parameters: [
        (name: "w", value: 2.0, range: (0.5, 3.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-12, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 30.0),
    strobe: Some((period: "{period}", first_at: 0.0, axes: ("x", "v"))),
)
"#
    )
}

#[test]
fn identity_strobe_map_from_the_start_does_not_fail() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "identity.ron", &harmonic("2*pi/w"));
    let doc = cycle_json(&path, &["--from-start"]);
    let multipliers = check_document(&doc, &["x", "v"], 2);
    // [analytic] REFERENCES case 2: every point is fixed, multipliers 1, 1
    assert!((number(&doc["point"]["x"], "x") - 1.0).abs() < 1e-9);
    assert!((number(&doc["point"]["v"], "v") - 0.5).abs() < 1e-9);
    for (re, im) in multipliers {
        assert!((re - 1.0).abs() < 1e-8 && im.abs() < 1e-8);
    }
    // [analytic] neutral, not asymptotically stable
    assert_eq!(doc["stable"], false);
}

#[test]
fn planar_limit_cycle_from_the_start() {
    let text = r#"(
    format: 2,
    title: "Planar limit cycle",
    states: [
        (name: "x", start: 0.5, rate: "x*(1 - x^2 - y^2) - w*y"),
        (name: "y", start: 0.0, rate: "y*(1 - x^2 - y^2) + w*x"),
    ],
    parameters: [
        (name: "w", value: 2.0, range: (0.5, 3.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-12, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 30.0),
    cut: Some((
        surface: Plane(normal: {"y": 1.0}, offset: 0.0),
        direction: Rising,
        axes: ("x", "y"),
    )),
)
"#;
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "cycle.ron", text);
    let doc = cycle_json(&path, &["--from-start"]);
    let multipliers = check_document(&doc, &["x", "y"], 1);
    // [analytic] REFERENCES case 3: the cycle r = 1, return time pi, multiplier exp(-2 pi)
    assert!((number(&doc["point"]["x"], "x") - 1.0).abs() < 1e-9);
    assert!((number(&doc["period"], "period") - std::f64::consts::PI).abs() < 1e-9);
    assert!(((multipliers[0].0 - 1.86744273171e-3) / 1.86744273171e-3).abs() < 1e-6);
    assert_eq!(doc["stable"], true);
}

#[test]
fn bad_requests_fail_with_a_reason() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "strobe_only.ron", &harmonic("1"));
    lamina()
        .arg("cycle")
        .arg(&path)
        .args(["--map", "cut"])
        .assert()
        .failure()
        .stderr(predicate::str::contains("has no cut"));
    lamina()
        .arg("cycle")
        .arg(&path)
        .args(["--returns", "0"])
        .assert()
        .failure()
        .stderr(predicate::str::contains("--returns must be at least 1"));
    lamina()
        .arg("cycle")
        .arg(dir.path().join("missing.ron"))
        .assert()
        .failure()
        .stderr(predicate::str::contains("missing.ron"));
}

#[test]
fn a_driven_oscillator_strobed_at_half_its_drive_period_repeats_every_two() {
    // x'' + c x' + x = cos(w t) sampled every pi / w: the steady response A cos(w t - phi)
    // alternates between two points
    let text = r#"(
    format: 2,
    title: "Driven linear oscillator",
    states: [
        (name: "x", start: 0.0, rate: "v"),
        (name: "v", start: 0.0, rate: "-c*v - x + cos(w*t)"),
    ],
    parameters: [
        (name: "c", value: 0.5, range: (0.0, 1.0)),
        (name: "w", value: 1.3, range: (0.5, 3.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-12, atol: 1e-12),
    time: (start: 0.0, settle: 150.0, span: 60.0),
    strobe: Some((period: "pi/w", first_at: 0.0, axes: ("x", "v"))),
)
"#;
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "driven.ron", text);
    let doc = cycle_json(&path, &[]);
    check_document(&doc, &["x", "v"], 2);
    // [analytic] the samples repeat every second strobe time, over one drive period
    assert_eq!(doc["k"], 2);
    let (c, w) = (0.5f64, 1.3f64);
    assert!((number(&doc["period"], "period") - 2.0 * std::f64::consts::PI / w).abs() < 1e-12);
    // [analytic] at t = j pi / w: |x| = A |cos(phi)|, A = 1 / sqrt((1 - w^2)^2 + (c w)^2)
    let amplitude = 1.0 / ((1.0 - w * w).powi(2) + (c * w).powi(2)).sqrt();
    let phase = (c * w).atan2(1.0 - w * w);
    let x = number(&doc["point"]["x"], "x");
    assert!(
        (x.abs() - amplitude * phase.cos().abs()).abs() < 1e-9,
        "{x}"
    );
    assert_eq!(doc["stable"], true);
}
