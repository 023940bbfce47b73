//! End-to-end tests of `lamina rest` and `lamina branch` (and `lamina render --view branch`):
//! the JSON and CSV shapes of the product brief, reference values through scenario files,
//! the picture, and the messages for bad input (exit 1, nothing written).

use std::fs;
use std::path::Path;

use assert_cmd::Command;
use predicates::prelude::*;
use serde_json::Value;
use tempfile::TempDir;

mod common;
use common::{listing, write};

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

/// Runs `lamina` with `args` and parses the JSON it prints.
fn json(args: &[&str], path: &Path) -> Value {
    let output = lamina()
        .args(&args[..1])
        .arg(path)
        .args(&args[1..])
        .arg("--json")
        .assert()
        .success()
        .get_output()
        .clone();
    let text = String::from_utf8(output.stdout).expect("UTF-8");
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("not JSON ({e}):\n{text}"))
}

fn number(value: &Value) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("not a number: {value}"))
}

/// The special points of one kind in a branch document.
fn special<'a>(doc: &'a Value, kind: &str) -> Vec<&'a Value> {
    doc["special"]
        .as_array()
        .expect("special is an array")
        .iter()
        .filter(|s| s["kind"] == kind)
        .collect()
}

const LORENZ: &str = r#"(
    format: 2,
    title: "Lorenz",
    states: [
        (name: "x", start: 1.0, rate: "sigma*(y - x)"),
        (name: "y", start: 1.0, rate: "rho*x - y - x*z"),
        (name: "z", start: 1.0, rate: "x*y - beta*z"),
    ],
    parameters: [
        (name: "sigma", value: 10.0, range: (0.0, 20.0)),
        (name: "rho", value: RHO, range: (0.0, 50.0)),
        (name: "beta", value: 2.6666666666666665, range: (0.0, 5.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-10, atol: 1e-12),
    time: (start: 0.0, settle: 50.0, span: 50.0),
    cut: Some((
        surface: Plane(normal: {"z": 1.0}, offset: 27.0),
        direction: Rising,
        axes: ("x", "y"),
    )),
    sweep: Some((parameter: "rho", from: 15.0, to: 30.0, values: 31, settle: 20.0,
                 keep: 10, follow: true, source: Cut, coordinate: "x")),
)
"#;

fn lorenz(rho: f64) -> String {
    LORENZ.replace("RHO", &format!("{rho:?}"))
}

#[test]
fn rest_lists_lorenz_resting_points_in_words() {
    let dir = TempDir::new().expect("temp dir");
    let path = write(dir.path(), "lorenz.ron", &lorenz(28.0));
    let doc = json(&["rest"], &path);
    let points = doc["points"].as_array().expect("points");
    assert_eq!(points.len(), 3, "{doc}");
    let c = 72f64.sqrt();
    for p in points {
        let keys: Vec<&str> = p["state"]
            .as_object()
            .expect("state")
            .keys()
            .map(String::as_str)
            .collect();
        assert_eq!(keys.len(), 3);
        assert_eq!(p["eigenvalues"].as_array().expect("eigenvalues").len(), 3);
        let x = number(&p["state"]["x"]);
        if x.abs() < 1e-9 {
            // [analytic] REFERENCES case 20: the origin, a saddle with one unstable direction
            assert_eq!(p["kind"], "saddle");
            assert_eq!(p["unstable"], 1);
        } else {
            // [analytic] REFERENCES cases 7 and 20: (+-sqrt 72, +-sqrt 72, 27), saddle foci
            assert!((x.abs() - c).abs() < 1e-9 && (number(&p["state"]["z"]) - 27.0).abs() < 1e-9);
            assert_eq!(p["kind"], "saddle_focus");
            assert_eq!(p["unstable"], 2);
        }
        assert_eq!(p["stable"], false);
    }
    lamina()
        .arg("rest")
        .arg(&path)
        .assert()
        .success()
        .stdout(predicate::str::contains("3 resting points"))
        .stdout(predicate::str::contains(
            "saddle focus, 2 unstable directions",
        ))
        .stdout(predicate::str::contains("eigenvalues"));
}

#[test]
fn rest_of_a_forced_model_points_to_the_strobe_orbit() {
    let dir = TempDir::new().expect("temp dir");
    let path = write(
        dir.path(),
        "forced.ron",
        r#"(
    format: 2,
    title: "Forced decay",
    states: [(name: "x", start: 0.0, rate: "-x + cos(w*t)")],
    parameters: [(name: "w", value: 1.0, range: (0.1, 3.0))],
    integrator: (method: Automatic, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 10.0),
    strobe: Some((period: "2*pi/w", first_at: 0.0, axes: ("x", "x"))),
)
"#,
    );
    lamina()
        .arg("rest")
        .arg(&path)
        .assert()
        .success()
        .stdout(predicate::str::contains("no resting points"))
        .stdout(predicate::str::contains("lamina cycle"));
    let doc = json(&["rest"], &path);
    assert_eq!(doc["points"].as_array().map(Vec::len), Some(0));
    assert!(doc["note"].as_str().is_some_and(|n| n.contains("strobe")));
}

const CUBIC: &str = r#"(
    format: 2,
    title: "Cubic with two folds",
    states: [(name: "x", start: -2.1, rate: "m - x^3 + 3*x")],
    parameters: [(name: "m", value: -3.0, range: (-3.0, 3.0))],
    integrator: (method: Automatic, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 10.0),
    strobe: Some((period: "1", first_at: 0.0, axes: ("x", "x"))),
    sweep: Some((parameter: "m", from: FROM, to: TO, values: 61, settle: 10.0,
                 keep: 4, follow: true, source: Strobe, coordinate: "x")),
)
"#;

fn cubic(from: &str, to: &str) -> String {
    CUBIC.replace("FROM", from).replace("TO", to)
}

#[test]
fn resting_branch_with_two_folds_as_csv_and_json() {
    let dir = TempDir::new().expect("temp dir");
    let path = write(dir.path(), "cubic.ron", &cubic("-3.0", "3.0"));
    let doc = json(&["branch", "--of", "rest"], &path);
    assert_eq!(doc["parameter"], "m");
    assert_eq!(doc["of"], "rest");
    assert_eq!(doc["start"]["from"], "given");
    let folds = special(&doc, "fold");
    assert_eq!(folds.len(), 2, "{}", doc["special"]);
    // [analytic] REFERENCES case 21: folds of x' = m - x^3 + 3x at m = +2 and m = -2
    assert!((number(&folds[0]["value"]) - 2.0).abs() < 1e-8);
    assert!((number(&folds[1]["value"]) + 2.0).abs() < 1e-8);
    assert!((number(&folds[0]["state"]["x"]) + 1.0).abs() < 1e-4);
    let points = doc["points"].as_array().expect("points");
    assert!(points.iter().all(|p| p["period"].is_null()));
    assert!(points.iter().any(|p| p["stable"] == false));

    let csv_path = dir.path().join("branch.csv");
    lamina()
        .args(["branch"])
        .arg(&path)
        .args(["--of", "rest", "--out"])
        .arg(&csv_path)
        .assert()
        .success()
        .stderr(predicate::str::contains("fold"))
        .stderr(predicate::str::contains(
            "reached the end of the range, m = 3",
        ));
    let text = fs::read_to_string(&csv_path).expect("CSV written");
    let mut lines = text.lines();
    // PRODUCT.md: `<parameter>,stable,period,<state names>`, period empty for resting points
    assert_eq!(lines.next(), Some("m,stable,period,x"));
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len(), points.len());
    assert!(rows[0].starts_with("-3.0,true,,"));
    // without --out and --json the CSV goes to stdout
    lamina()
        .args(["branch"])
        .arg(&path)
        .args(["--of", "rest"])
        .assert()
        .success()
        .stdout(predicate::str::starts_with("m,stable,period,x\n"));
}

#[test]
fn lorenz_hopf_point_through_the_command_line() {
    let dir = TempDir::new().expect("temp dir");
    let path = write(dir.path(), "lorenz.ron", &lorenz(20.0));
    let doc = json(&["branch", "--of", "rest"], &path);
    let hopf = special(&doc, "hopf");
    assert_eq!(hopf.len(), 1, "{}", doc["special"]);
    // [analytic] REFERENCES case 7: rho_H = 470/19
    assert!((number(&hopf[0]["value"]) - 470.0 / 19.0).abs() < 1e-8);
    // [analytic] the period at birth 2 pi / omega, omega^2 = beta (rho_H + sigma)
    let omega = (8.0f64 / 3.0 * (470.0 / 19.0 + 10.0)).sqrt();
    assert!((number(&hopf[0]["period"]) - std::f64::consts::TAU / omega).abs() < 1e-6);
    assert!((number(&hopf[0]["frequency"]) - omega).abs() < 1e-6);
}

const BRUSSELATOR: &str = r#"(
    format: 2,
    title: "Brusselator",
    states: [
        (name: "x", start: 1.0, rate: "a - (b + 1)*x + x^2*y"),
        (name: "y", start: 1.5, rate: "b*x - x^2*y"),
    ],
    parameters: [
        (name: "a", value: 1.0, range: (0.5, 2.0)),
        (name: "b", value: 1.5, range: (1.0, 3.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-10, atol: 1e-12),
    time: (start: 0.0, settle: 30.0, span: 30.0),
    cut: Some((
        surface: Plane(normal: {"x": 1.0}, offset: 1.0),
        direction: Rising,
        axes: ("x", "y"),
    )),
    sweep: Some((parameter: "b", from: 1.5, to: 2.01, values: 21, settle: 50.0,
                 keep: 4, follow: true, source: Cut, coordinate: "y")),
)
"#;

#[test]
fn orbits_born_at_the_brusselator_hopf_point() {
    let dir = TempDir::new().expect("temp dir");
    let path = write(dir.path(), "brusselator.ron", BRUSSELATOR);
    let doc = json(&["branch", "--of", "cycle", "--start", "hopf"], &path);
    assert_eq!(doc["of"], "cycle");
    assert_eq!(doc["start"]["from"], "hopf");
    // [analytic] REFERENCES case 12: Hopf at B = 1 + A^2 = 2
    assert!((number(&doc["start"]["value"]) - 2.0).abs() < 1e-8);
    assert!(
        doc["start"]["description"]
            .as_str()
            .is_some_and(|d| d.contains("Hopf point"))
    );
    let points = doc["points"].as_array().expect("points");
    let last = points.last().expect("a point");
    assert_eq!(number(&last["value"]), 2.01);
    // Hairer, Norsett & Wanner, Solving ODEs I, sec. I.16, ex. 7 (REFERENCES case 12, [R]):
    // period 6.28671368 at A = 1, B = 2.01
    assert!((number(&last["period"]) / 6.28671368 - 1.0).abs() < 1e-8);
    assert!(points.iter().all(|p| p["stable"] == true));
    // a rest branch from a model whose run oscillates, and the orbit branch of a run at rest
    lamina()
        .arg("branch")
        .arg(&path)
        .args(["--of", "cycle"])
        .assert()
        .failure()
        .stderr(predicate::str::contains("not near a periodic orbit"))
        .stderr(predicate::str::contains("--start hopf"));
}

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
        (name: "c", value: 2.5, range: (1.0, 10.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-10, atol: 1e-12),
    time: (start: 0.0, settle: 500.0, span: 100.0),
    cut: Some((
        surface: Plane(normal: {"x": 1.0}, offset: 0.0),
        direction: Falling,
        axes: ("y", "z"),
    )),
    sweep: Some((parameter: "c", from: 2.5, to: 3.0, values: 11, settle: 100.0,
                 keep: 8, follow: true, source: Cut, coordinate: "y")),
)
"#;

#[test]
fn rossler_period_doubling_and_the_picture() {
    let dir = TempDir::new().expect("temp dir");
    let path = write(dir.path(), "rossler.ron", ROSSLER);
    let png = dir.path().join("branch.png");
    let csv = dir.path().join("branch.csv");
    let output = lamina()
        .arg("branch")
        .arg(&path)
        .args(["--of", "cycle", "--json", "--png"])
        .arg(&png)
        .arg("--out")
        .arg(&csv)
        .assert()
        .success()
        .stderr(predicate::str::contains("period doubling"))
        .stderr(predicate::str::contains("orbit diagram"))
        .get_output()
        .clone();
    let doc: Value = serde_json::from_slice(&output.stdout).expect("JSON");
    let doublings = special(&doc, "period_doubling");
    assert_eq!(doublings.len(), 1, "{}", doc["special"]);
    // SciPy 1.17 (REFERENCES case 24, [R]): shooting from x = 0 with solve_ivp DOP853 at
    // rtol = atol = 1e-12 on the model and its variational equations, Newton on (y, z, T),
    // brentq on c for the real multiplier + 1: c = 2.832445027850467
    assert!((number(&doublings[0]["value"]) - 2.832445027850467).abs() < 1e-8);
    assert!(number(&doublings[0]["period"]) > 5.7);
    let header = fs::read_to_string(&csv).expect("CSV");
    assert!(header.starts_with("c,stable,period,x,y,z\n"));
    let bytes = fs::read(&png).expect("PNG written");
    // [common practice] the PNG signature and the default size 1200 x 900 in the IHDR chunk
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    assert_eq!(
        u32::from_be_bytes([bytes[16], bytes[17], bytes[18], bytes[19]]),
        1200
    );
    // the orbits of twice the period born there
    let doc = json(
        &["branch", "--of", "cycle", "--start", "period-doubling"],
        &path,
    );
    assert_eq!(doc["start"]["from"], "period_doubling");
    let first = &doc["points"][0];
    // [analytic] born with twice the period of the orbit that doubles (5.7698..., SciPy)
    assert!((number(&first["period"]) - 2.0 * 5.769820016505902).abs() < 1e-3);
}

#[test]
fn render_draws_the_branch_view() {
    let dir = TempDir::new().expect("temp dir");
    let path = write(dir.path(), "cubic.ron", &cubic("-3.0", "3.0"));
    let png = dir.path().join("view.png");
    lamina()
        .arg("render")
        .arg(&path)
        .args(["--view", "branch", "--size", "640x480", "--png"])
        .arg(&png)
        .assert()
        .success()
        .stderr(predicate::str::contains("wrote"));
    let bytes = fs::read(&png).expect("PNG written");
    assert_eq!(
        u32::from_be_bytes([bytes[20], bytes[21], bytes[22], bytes[23]]),
        480
    );
}

/// Runs `lamina branch` on `text` with outputs asked for, expects exit 1 with `message`, and
/// checks that nothing was written.
fn refused(text: &str, of: &str, message: &str) {
    let dir = TempDir::new().expect("temp dir");
    let path = write(dir.path(), "scenario.ron", text);
    lamina()
        .arg("branch")
        .arg(&path)
        .args(["--of", of, "--out"])
        .arg(dir.path().join("out.csv"))
        .arg("--png")
        .arg(dir.path().join("out.png"))
        .assert()
        .code(1)
        .stderr(predicate::str::contains(message));
    assert_eq!(listing(dir.path()), vec!["scenario.ron".to_string()]);
}

#[test]
fn bad_input_is_refused_with_nothing_written() {
    // a parameter that is not in the model
    refused(
        &cubic("-3.0", "3.0").replace("parameter: \"m\"", "parameter: \"q\""),
        "rest",
        "sweep.parameter",
    );
    // from equal to to
    refused(&cubic("1.0", "1.0"), "rest", "sweep.to");
    // the scenario's value outside [from, to]
    refused(&cubic("0.0", "3.0"), "rest", "outside the sweep's range");
    // a start that is not near a resting point: x' = m - x^2 has none for m < 0
    refused(
        &cubic("-3.0", "-1.0").replace("m - x^3 + 3*x", "m - x^2"),
        "rest",
        "not near a resting point",
    );
    // a model at rest asked for an orbit
    refused(BRUSSELATOR, "cycle", "not near a periodic orbit");
    refused(
        &cubic("-3.0", "3.0"),
        "cycle",
        "one state has no periodic orbits",
    );
    // an existing output is kept when the branch fails
    let dir = TempDir::new().expect("temp dir");
    let path = write(dir.path(), "scenario.ron", &cubic("0.0", "3.0"));
    let out = write(dir.path(), "out.csv", "kept\n");
    lamina()
        .arg("branch")
        .arg(&path)
        .args(["--of", "rest", "--out"])
        .arg(&out)
        .assert()
        .code(1);
    assert_eq!(fs::read_to_string(&out).expect("kept"), "kept\n");
}

#[test]
fn help_names_the_options_in_words() {
    lamina()
        .args(["branch", "--help"])
        .assert()
        .success()
        .stdout(predicate::str::contains("--of"))
        .stdout(predicate::str::contains("--returns"))
        .stdout(predicate::str::contains("period-doubling"));
    lamina()
        .args(["rest", "--help"])
        .assert()
        .success()
        .stdout(predicate::str::contains("--json"));
}
