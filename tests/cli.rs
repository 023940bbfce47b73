//! End-to-end tests of the `lamina` binary: `check`, `cut` and `strobe` on every demo scenario
//! and on small scenarios written here; the CSV layout of the product brief; `--count` and
//! `--out`; runs that stop early; the messages for bad input; two reference values.

use std::fs;
use std::path::{Path, PathBuf};

use assert_cmd::Command;
use predicates::prelude::*;
use tempfile::TempDir;

mod common;
use common::{demo, listing, write};

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

/// Every `.ron` file in `demo_scenarios/`, sorted.
fn demos() -> Vec<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo_scenarios");
    let mut files: Vec<PathBuf> = fs::read_dir(&dir)
        .expect("demo_scenarios/ is readable")
        .map(|entry| entry.expect("directory entry").path())
        .filter(|path| path.extension().is_some_and(|ext| ext == "ron"))
        .collect();
    files.sort();
    assert!(!files.is_empty(), "no demo scenarios in {}", dir.display());
    files
}

/// The state names of a scenario, in order, and whether it has a cut and a strobe.
fn outline(path: &Path) -> (Vec<String>, bool, bool) {
    let scenario = lamina_scenario::load_file(path).expect("demo scenario loads");
    let names = scenario.states.iter().map(|s| s.name.clone()).collect();
    (names, scenario.cut.is_some(), scenario.strobe.is_some())
}

fn stdout_of(output: &std::process::Output) -> String {
    String::from_utf8(output.stdout.clone()).expect("stdout is UTF-8")
}

fn stderr_of(output: &std::process::Output) -> String {
    String::from_utf8(output.stderr.clone()).expect("stderr is UTF-8")
}

fn parse_number(cell: &str, what: &str) -> f64 {
    let value: f64 = cell
        .parse()
        .unwrap_or_else(|_| panic!("{what}: '{cell}' is not a number"));
    assert!(value.is_finite(), "{what}: '{cell}' is not finite");
    value
}

/// A parsed point set: time, return time (cut only) and state of every row.
struct Points {
    t: Vec<f64>,
    return_time: Vec<Option<f64>>,
    states: Vec<Vec<f64>>,
}

/// Splits CSV text into a header and rows. Lamina's headers are identifiers and its cells
/// numbers, so no cell is quoted.
fn split_csv(text: &str) -> (Vec<String>, Vec<Vec<String>>) {
    assert!(!text.contains('"'), "unexpected quoting in\n{text}");
    let mut lines = text.lines();
    let header = lines
        .next()
        .expect("the CSV has no header")
        .split(',')
        .map(str::to_owned)
        .collect();
    let rows = lines
        .map(|line| line.split(',').map(str::to_owned).collect())
        .collect();
    (header, rows)
}

/// Checks cut CSV against the product brief (`k,t,return_time,<states>`, return time empty
/// for k = 0 only, k from 0, times increasing, every number a finite f64) and parses it.
fn cut_points(text: &str, names: &[String]) -> Points {
    let (header, rows) = split_csv(text);
    let mut expected = vec!["k".to_owned(), "t".into(), "return_time".into()];
    expected.extend(names.iter().cloned());
    assert_eq!(header, expected, "cut CSV header");
    let mut points = Points {
        t: Vec::new(),
        return_time: Vec::new(),
        states: Vec::new(),
    };
    for (idx, row) in rows.iter().enumerate() {
        assert_eq!(row.len(), expected.len(), "row {idx}: {row:?}");
        assert_eq!(row[0], idx.to_string(), "k counts from 0");
        let t = parse_number(&row[1], "t");
        if let Some(&previous) = points.t.last() {
            assert!(t > previous, "row {idx}: t = {t} after {previous}");
        }
        let return_time = if idx == 0 {
            assert_eq!(row[2], "", "return_time is empty for k = 0");
            None
        } else {
            let r = parse_number(&row[2], "return_time");
            // [analytic] the return time is the time since the previous cut point.
            let previous = points.t[idx - 1];
            assert!(
                (r - (t - previous)).abs() <= 1e-9 * t.abs().max(1.0),
                "row {idx}: return time {r} but t - t_prev = {}",
                t - previous
            );
            Some(r)
        };
        points.t.push(t);
        points.return_time.push(return_time);
        points
            .states
            .push(row[3..].iter().map(|c| parse_number(c, "state")).collect());
    }
    points
}

/// Checks strobe CSV against the product brief (`k,t,<states>`, k from 0, times increasing
/// at equal steps, every number a finite f64) and parses it.
fn strobe_samples(text: &str, names: &[String]) -> Points {
    let (header, rows) = split_csv(text);
    let mut expected = vec!["k".to_owned(), "t".into()];
    expected.extend(names.iter().cloned());
    assert_eq!(header, expected, "strobe CSV header");
    let mut points = Points {
        t: Vec::new(),
        return_time: Vec::new(),
        states: Vec::new(),
    };
    for (idx, row) in rows.iter().enumerate() {
        assert_eq!(row.len(), expected.len(), "row {idx}: {row:?}");
        assert_eq!(row[0], idx.to_string(), "k counts from 0");
        let t = parse_number(&row[1], "t");
        if let Some(&previous) = points.t.last() {
            assert!(t > previous, "row {idx}: t = {t} after {previous}");
        }
        points.t.push(t);
        points.return_time.push(None);
        points
            .states
            .push(row[2..].iter().map(|c| parse_number(c, "state")).collect());
    }
    // [analytic] strobe samples are taken at t0 + k T: equal steps.
    if points.t.len() >= 3 {
        let step = points.t[1] - points.t[0];
        for pair in points.t.windows(2) {
            assert!(
                ((pair[1] - pair[0]) - step).abs() <= 1e-9 * pair[1].abs().max(1.0),
                "uneven strobe steps: {} and {step}",
                pair[1] - pair[0]
            );
        }
    }
    points
}

fn assert_rel(actual: f64, expected: f64, rel: f64, what: &str) {
    let err = ((actual - expected) / expected).abs();
    assert!(
        err <= rel,
        "{what}: {actual} vs {expected} (relative error {err:e} > {rel:e})"
    );
}

/// A small valid scenario with a cut and a strobe; the bad inputs below are made from it by
/// one replacement each.
const BASE: &str = r#"(
    format: 2,
    title: "Damped oscillator",
    states: [
        (name: "x", start: 1.0, rate: "v"),
        (name: "v", start: 0.0, rate: "-c*v - w*w*x"),
    ],
    parameters: [
        (name: "c", value: 0.1, range: (0.0, 1.0)),
        (name: "w", value: 2.0, range: (0.5, 3.0)),
    ],
    integrator: (method: Dp5, rtol: 1e-8, atol: 1e-10),
    time: (start: 0.0, settle: 0.0, span: 50.0),
    cut: Some((
        surface: Plane(normal: {"v": 1.0}, offset: 0.0),
        direction: Falling,
        axes: ("x", "v"),
    )),
    strobe: Some((period: "2*pi/w", first_at: 0.0, axes: ("x", "v"))),
)
"#;

/// `base` with its single occurrence of `from` replaced by `to`.
fn with(base: &str, from: &str, to: &str) -> String {
    assert_eq!(base.matches(from).count(), 1, "'{from}' must occur once");
    base.replacen(from, to, 1)
}

/// The 1-based line of `base` on which `from` occurs.
fn line_of(base: &str, from: &str) -> usize {
    base.lines()
        .position(|line| line.contains(from))
        .expect("text not found")
        + 1
}

#[test]
fn help_lists_the_commands_and_options() {
    let output = lamina()
        .arg("--help")
        .assert()
        .success()
        .get_output()
        .clone();
    let help = stdout_of(&output);
    // one tagline: the package description, the first line of --help and the About box
    assert_eq!(env!("CARGO_PKG_DESCRIPTION"), lamina_explorer::TAGLINE);
    assert!(help.starts_with(lamina_explorer::TAGLINE), "{help}");
    for command in ["check", "cut", "strobe", "open"] {
        assert!(help.contains(command), "--help lacks '{command}':\n{help}");
    }
    for command in ["cut", "strobe"] {
        lamina()
            .args([command, "--help"])
            .assert()
            .success()
            .stdout(
                predicate::str::contains("--count")
                    .and(predicate::str::contains("--out"))
                    .and(predicate::str::contains("--recheck")),
            );
    }
}

#[test]
fn check_accepts_every_demo() {
    for path in demos() {
        lamina()
            .arg("check")
            .arg(&path)
            .assert()
            .code(0)
            .stderr(predicate::str::contains("ok").and(predicate::str::contains("format 1").not()));
    }
}

#[test]
fn cut_of_every_demo_is_valid_csv() {
    for path in demos() {
        let (names, has_cut, _) = outline(&path);
        let assert = lamina()
            .arg("cut")
            .arg(&path)
            .args(["--count", "20"])
            .assert();
        if !has_cut {
            assert
                .failure()
                .stdout("")
                .stderr(predicate::str::contains("no cut"));
            continue;
        }
        let output = assert.success().get_output().clone();
        let points = cut_points(&stdout_of(&output), &names);
        assert_eq!(points.t.len(), 20, "{}", path.display());
    }
}

#[test]
fn strobe_of_every_demo_is_valid_csv() {
    let mut with_strobe = 0;
    for path in demos() {
        let (names, _, has_strobe) = outline(&path);
        let assert = lamina()
            .arg("strobe")
            .arg(&path)
            .args(["--count", "20"])
            .assert();
        if !has_strobe {
            assert
                .failure()
                .stdout("")
                .stderr(predicate::str::contains("no strobe"));
            continue;
        }
        with_strobe += 1;
        let output = assert.success().get_output().clone();
        let samples = strobe_samples(&stdout_of(&output), &names);
        assert_eq!(samples.t.len(), 20, "{}", path.display());
    }
    assert!(with_strobe > 0, "no demo scenario has a strobe");
}

#[test]
fn count_gives_exactly_that_many_rows() {
    let path = demo("clocked_resonator.ron");
    let (names, _, _) = outline(&path);
    for n in [1, 3, 11] {
        let output = lamina()
            .arg("cut")
            .arg(&path)
            .args(["--count", &n.to_string()])
            .assert()
            .success()
            .get_output()
            .clone();
        assert_eq!(cut_points(&stdout_of(&output), &names).t.len(), n);
        let output = lamina()
            .arg("strobe")
            .arg(&path)
            .args(["--count", &n.to_string()])
            .assert()
            .success()
            .get_output()
            .clone();
        assert_eq!(strobe_samples(&stdout_of(&output), &names).t.len(), n);
    }
    lamina()
        .arg("cut")
        .arg(&path)
        .args(["--count", "0"])
        .assert()
        .code(1)
        .stdout("")
        .stderr(predicate::str::contains("--count"));
}

#[test]
fn a_run_shorter_than_count_writes_what_it_has() {
    let dir = TempDir::new().unwrap();
    // Span 4 with period pi: samples at 0, pi only.
    let text = with(BASE, "span: 50.0", "span: 4.0");
    let path = write(dir.path(), "short.ron", &text);
    let output = lamina()
        .arg("strobe")
        .arg(&path)
        .args(["--count", "100"])
        .assert()
        .success()
        .get_output()
        .clone();
    let names = ["x".to_owned(), "v".to_owned()];
    assert_eq!(strobe_samples(&stdout_of(&output), &names).t.len(), 2);
}

#[test]
fn out_writes_the_same_csv_and_nothing_on_stdout() {
    let path = demo("clocked_resonator.ron");
    let dir = TempDir::new().unwrap();
    for command in ["cut", "strobe"] {
        let output = lamina()
            .arg(command)
            .arg(&path)
            .args(["--count", "15"])
            .assert()
            .success()
            .get_output()
            .clone();
        let expected = output.stdout;
        // An existing file is replaced.
        let out = write(dir.path(), "points.csv", "old contents\n");
        lamina()
            .arg(command)
            .arg(&path)
            .args(["--count", "15", "--out"])
            .arg(&out)
            .assert()
            .success()
            .stdout("");
        assert_eq!(fs::read(&out).unwrap(), expected, "{command} --out");
        assert_eq!(listing(dir.path()), ["points.csv"], "temporary files left");
    }
}

#[test]
fn a_failed_run_leaves_the_out_file_alone() {
    let scenarios = TempDir::new().unwrap();
    let bad = write(
        scenarios.path(),
        "bad.ron",
        &with(BASE, "rate: \"v\"", "rate: \"v + q\""),
    );
    let not_ron = write(scenarios.path(), "not_ron.ron", "x' = -x\n");
    let no_strobe = write(
        scenarios.path(),
        "no_strobe.ron",
        &with(
            BASE,
            "    strobe: Some((period: \"2*pi/w\", first_at: 0.0, axes: (\"x\", \"v\"))),\n",
            "",
        ),
    );
    let missing = scenarios.path().join("missing.ron");
    let out_dir = TempDir::new().unwrap();
    let good = "k,t,x,v\n0,0.0,1.0,0.0\n";
    let out = write(out_dir.path(), "good.csv", good);
    let runs: [(&str, &Path, &[&str]); 6] = [
        ("cut", &bad, &[]),
        ("strobe", &bad, &[]),
        ("cut", &not_ron, &[]),
        ("strobe", &missing, &[]),
        ("strobe", &no_strobe, &[]),
        ("cut", &no_strobe, &["--count", "0"]),
    ];
    for (command, scenario, extra) in runs {
        lamina()
            .arg(command)
            .arg(scenario)
            .args(extra)
            .arg("--out")
            .arg(&out)
            .assert()
            .code(1)
            .stdout("")
            .stderr(predicate::str::contains("panicked").not());
        assert_eq!(
            fs::read_to_string(&out).unwrap(),
            good,
            "{command} {} changed the file",
            scenario.display()
        );
        assert_eq!(
            listing(out_dir.path()),
            ["good.csv"],
            "temporary files left"
        );
    }
}

/// x' = x^2 from x(0) = 1: x = 1 / (1 - t) [analytic], which passes the escape size 1e6 at
/// t = 1 - 1e-6.
const BLOW_UP: &str = r#"(
    format: 2,
    title: "Blow-up in finite time",
    states: [
        (name: "x", start: 1.0, rate: "x^2"),
    ],
    parameters: [],
    integrator: (method: Dp5, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 5.0),
    cut: Some((surface: Level("x - 1.5"), direction: Rising, axes: ("x", "x"))),
    strobe: Some((period: "0.1", first_at: 0.0, axes: ("x", "x"))),
    limits: (max_points: 1000, escape: 1e6),
)
"#;

/// The number after the last `t = ` in `text`.
fn stop_time(text: &str) -> f64 {
    let (_, rest) = text
        .rsplit_once("t = ")
        .unwrap_or_else(|| panic!("no 't = ' in\n{text}"));
    let number: String = rest
        .chars()
        .take_while(|c| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e' | 'E'))
        .collect();
    number
        .parse()
        .unwrap_or_else(|_| panic!("no time after 't = ' in\n{text}"))
}

#[test]
fn an_escape_keeps_the_valid_points_and_says_when() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "blow_up.ron", BLOW_UP);
    let names = ["x".to_owned()];

    let output = lamina()
        .arg("strobe")
        .arg(&path)
        .assert()
        .failure()
        .get_output()
        .clone();
    let stderr = stderr_of(&output);
    assert!(
        stderr.contains("a state passed the escape size 1e6 at t = "),
        "no reason in\n{stderr}"
    );
    assert!(!stderr.contains("panicked"), "{stderr}");
    // [analytic] the escape size 1e6 is passed at t = 1 - 1e-6.
    let t_stop = stop_time(&stderr);
    assert!(t_stop > 0.99 && t_stop <= 1.0, "stopped at {t_stop}");
    let samples = strobe_samples(&stdout_of(&output), &names);
    // [analytic] samples at t = 0, 0.1, ..., 0.9 come before the escape.
    assert_eq!(samples.t.len(), 10);
    for (t, state) in samples.t.iter().zip(&samples.states) {
        // [analytic] x(t) = 1 / (1 - t).
        assert_rel(state[0], 1.0 / (1.0 - t), 1e-6, "x");
    }

    // With --out the file holds the same valid points.
    let out = write(dir.path(), "samples.csv", "old contents\n");
    lamina()
        .arg("strobe")
        .arg(&path)
        .arg("--out")
        .arg(&out)
        .assert()
        .failure()
        .stdout("")
        .stderr(predicate::str::contains("escape size 1e6").and(predicate::str::contains("t = ")));
    assert_eq!(fs::read(&out).unwrap(), output.stdout);
    assert_eq!(listing(dir.path()), ["blow_up.ron", "samples.csv"]);

    // The cut x = 1.5 is crossed once, at t = 1/3 [analytic], before the escape.
    let output = lamina()
        .arg("cut")
        .arg(&path)
        .assert()
        .failure()
        .stderr(predicate::str::contains("escape size 1e6"))
        .get_output()
        .clone();
    let points = cut_points(&stdout_of(&output), &names);
    assert_eq!(points.t.len(), 1);
    assert_rel(points.t[0], 1.0 / 3.0, 1e-8, "t of x = 1.5");
}

#[test]
fn a_nan_keeps_the_valid_points_and_says_when() {
    // x' = -1, y' = sqrt(x) from (0.95, 0): x = 0.95 - t, y = 2/3 (0.95^1.5 - x^1.5)
    // [analytic]; the square root of a negative x is NaN past t = 0.95, between samples.
    let text = with(
        BLOW_UP,
        "(name: \"x\", start: 1.0, rate: \"x^2\"),",
        "(name: \"x\", start: 0.95, rate: \"-1\"),\n        (name: \"y\", start: 0.0, rate: \"sqrt(x)\"),",
    );
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "nan.ron", &text);
    let output = lamina()
        .arg("strobe")
        .arg(&path)
        .assert()
        .failure()
        .get_output()
        .clone();
    let stderr = stderr_of(&output);
    assert!(stderr.contains("NaN"), "no reason in\n{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    let t_stop = stop_time(&stderr);
    assert!(t_stop > 0.9 && t_stop <= 0.95 + 1e-9, "stopped at {t_stop}");
    let samples = strobe_samples(&stdout_of(&output), &["x".to_owned(), "y".to_owned()]);
    assert_eq!(samples.t.len(), 10);
    for (t, state) in samples.t.iter().zip(&samples.states) {
        // [analytic]
        assert!((state[0] - (0.95 - t)).abs() <= 1e-12, "x at {t}");
        let y = 2.0 / 3.0 * (0.95_f64.powf(1.5) - (0.95 - t).powf(1.5));
        assert!((state[1] - y).abs() <= 1e-8, "y at {t}: {}", state[1]);
    }
}

/// Each bad input: the replacement made in [`BASE`], what the message must contain, and
/// whether it must give the line of the replaced text.
struct Bad {
    from: &'static str,
    to: &'static str,
    needles: &'static [&'static str],
    located: bool,
}

const BAD: &[Bad] = &[
    Bad {
        from: "rtol: 1e-8",
        to: "rtoll: 1e-8",
        needles: &["unknown field", "rtoll"],
        located: true,
    },
    Bad {
        from: "    title: \"Damped oscillator\",\n",
        to: "",
        needles: &["missing field", "title"],
        located: false,
    },
    Bad {
        from: "start: 1.0",
        to: "start: \"1.0\"",
        needles: &["states[0].start", "number"],
        located: true,
    },
    Bad {
        from: "format: 2",
        to: "format: 3",
        needles: &["format 3", "format 2"],
        located: false,
    },
    Bad {
        from: "(name: \"v\", start",
        to: "(name: \"x\", start",
        needles: &["states[1].name", "'x'", "already"],
        located: true,
    },
    Bad {
        from: "(name: \"c\"",
        to: "(name: \"sin\"",
        needles: &["parameters[0].name", "'sin'", "function"],
        located: true,
    },
    Bad {
        from: "(name: \"w\"",
        to: "(name: \"t\"",
        needles: &["parameters[1].name", "'t'", "time"],
        located: true,
    },
    Bad {
        from: "        axes: (\"x\", \"v\"),\n",
        to: "        axes: (\"x\", \"q\"),\n",
        needles: &["cut.axes.1", "'q' is not a state"],
        located: true,
    },
    Bad {
        from: "normal: {\"v\": 1.0}",
        to: "normal: {\"q\": 1.0}",
        needles: &["cut.surface.normal", "'q'", "not a state"],
        located: true,
    },
    Bad {
        from: "normal: {\"v\": 1.0}",
        to: "normal: {\"v\": 0.0}",
        needles: &["cut.surface.normal", "zero"],
        located: true,
    },
    Bad {
        from: "rtol: 1e-8",
        to: "rtol: 0.0",
        needles: &["integrator.rtol", "positive"],
        located: true,
    },
    Bad {
        from: "atol: 1e-10",
        to: "atol: -1e-10",
        needles: &["integrator.atol", "positive"],
        located: true,
    },
    Bad {
        from: "span: 50.0",
        to: "span: 0.0",
        needles: &["time.span", "positive"],
        located: true,
    },
    Bad {
        from: "span: 50.0",
        to: "span: -5.0",
        needles: &["time.span", "positive"],
        located: true,
    },
    Bad {
        from: "period: \"2*pi/w\"",
        to: "period: \"w - w\"",
        needles: &["strobe.period", "w - w", "positive"],
        located: true,
    },
    Bad {
        from: "period: \"2*pi/w\"",
        to: "period: \"-1\"",
        needles: &["strobe.period", "-1", "positive"],
        located: true,
    },
    Bad {
        from: "period: \"2*pi/w\"",
        to: "period: \"2*pi/w + x\"",
        needles: &["strobe.period", "only parameters"],
        located: true,
    },
    Bad {
        from: "-c*v - w*w*x",
        to: "-c*v - q*x",
        needles: &["states[1].rate", "unknown name 'q'", "x, v, c, w"],
        located: true,
    },
    Bad {
        from: "-c*v - w*w*x",
        to: "-c*v - w**x",
        needles: &["states[1].rate", "at character 10", "-c*v - w**x\n", "^"],
        located: true,
    },
];

#[test]
fn check_rejects_each_bad_input_by_name() {
    let dir = TempDir::new().unwrap();
    for (idx, bad) in BAD.iter().enumerate() {
        let text = with(BASE, bad.from, bad.to);
        let path = write(dir.path(), &format!("bad{idx}.ron"), &text);
        for command in ["check", "cut", "strobe"] {
            let output = lamina()
                .arg(command)
                .arg(&path)
                .assert()
                .code(1)
                .stdout("")
                .get_output()
                .clone();
            let stderr = stderr_of(&output);
            let case = format!("{command} with '{}' -> '{}':\n{stderr}", bad.from, bad.to);
            assert!(!stderr.contains("panicked"), "{case}");
            for needle in bad.needles {
                assert!(stderr.contains(needle), "no '{needle}' in {case}");
            }
            if bad.located {
                let line = line_of(BASE, bad.from.trim_end_matches('\n'));
                let location = format!("line {line}, column ");
                assert!(stderr.contains(&location), "no '{location}' in {case}");
            }
        }
    }
}

#[test]
fn check_rejects_missing_and_non_ron_files() {
    let dir = TempDir::new().unwrap();
    let missing = dir.path().join("no_such_scenario.ron");
    let not_ron = write(dir.path(), "not_ron.ron", "x' = -x; x(0) = 1\n");
    let empty = write(dir.path(), "empty.ron", "");
    for command in ["check", "cut", "strobe"] {
        lamina()
            .arg(command)
            .arg(&missing)
            .assert()
            .code(1)
            .stdout("")
            .stderr(
                predicate::str::contains("no_such_scenario.ron")
                    .and(predicate::str::contains("panicked").not()),
            );
        for path in [&not_ron, &empty] {
            lamina()
                .arg(command)
                .arg(path)
                .assert()
                .code(1)
                .stdout("")
                .stderr(
                    predicate::str::contains("line 1, column 1")
                        .and(predicate::str::contains("panicked").not()),
                );
        }
    }
}

#[test]
fn cut_without_a_cut_and_strobe_without_a_strobe_fail_clearly() {
    let dir = TempDir::new().unwrap();
    let cut_block = "    cut: Some((
        surface: Plane(normal: {\"v\": 1.0}, offset: 0.0),
        direction: Falling,
        axes: (\"x\", \"v\"),
    )),
";
    let strobe_block =
        "    strobe: Some((period: \"2*pi/w\", first_at: 0.0, axes: (\"x\", \"v\"))),\n";
    let no_cut = write(dir.path(), "no_cut.ron", &with(BASE, cut_block, ""));
    let no_strobe = write(dir.path(), "no_strobe.ron", &with(BASE, strobe_block, ""));
    lamina().arg("check").arg(&no_cut).assert().success();
    lamina().arg("check").arg(&no_strobe).assert().success();
    lamina()
        .arg("cut")
        .arg(&no_cut)
        .assert()
        .code(1)
        .stdout("")
        .stderr(predicate::str::contains("has no cut"));
    lamina()
        .arg("strobe")
        .arg(&no_strobe)
        .assert()
        .code(1)
        .stdout("")
        .stderr(predicate::str::contains("has no strobe"));
    // The other command still works on each.
    lamina()
        .arg("strobe")
        .arg(&no_cut)
        .args(["--count", "3"])
        .assert()
        .success();
    lamina()
        .arg("cut")
        .arg(&no_strobe)
        .args(["--count", "3"])
        .assert()
        .success();
}

/// The planar limit cycle of REFERENCES.md case 3, cut y = 0 rising, from (`x0`, 0).
fn limit_cycle(x0: f64) -> String {
    format!(
        r#"(
    format: 2,
    title: "Planar limit cycle",
    states: [
        (name: "x", start: {x0:?}, rate: "x*(1 - x^2 - y^2) - w*y"),
        (name: "y", start: 0.0, rate: "y*(1 - x^2 - y^2) + w*x"),
    ],
    parameters: [
        (name: "w", value: 2.0, range: (0.5, 3.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-12, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 30.0),
    cut: Some((
        surface: Plane(normal: {{"y": 1.0}}, offset: 0.0),
        direction: Rising,
        axes: ("x", "y"),
    )),
)
"#
    )
}

#[test]
fn limit_cycle_cut_matches_the_exact_return_map() {
    let dir = TempDir::new().unwrap();
    let names = ["x".to_owned(), "y".to_owned()];
    // REFERENCES.md case 3 [A]: P(0.5) = 0.99721055100, P(2) = 1.00070102750, and the return
    // time is exactly pi for every start.
    for (x0, first) in [(0.5, 0.99721055100), (2.0, 1.00070102750)] {
        let path = write(dir.path(), "cycle.ron", &limit_cycle(x0));
        let output = lamina()
            .arg("cut")
            .arg(&path)
            .args(["--count", "6"])
            .assert()
            .success()
            .get_output()
            .clone();
        let points = cut_points(&stdout_of(&output), &names);
        assert_eq!(points.t.len(), 6);
        // REFERENCES.md case 3 [A]
        assert_rel(points.states[0][0], first, 1e-9, "first cut point x");
        // REFERENCES.md case 3 [A]: the start lies on the cut, the first return is at pi.
        assert_rel(points.t[0], std::f64::consts::PI, 1e-9, "first cut time");
        for (k, r) in points.return_time.iter().enumerate().skip(1) {
            // REFERENCES.md case 3 [A]
            assert_rel(
                r.unwrap(),
                std::f64::consts::PI,
                1e-9,
                &format!("return time {k}"),
            );
        }
        for state in &points.states {
            // REFERENCES.md case 15 [T]: the surface residual at a cut point is <= 1e-12.
            assert!(state[1].abs() <= 1e-12, "y = {} on the cut y = 0", state[1]);
        }
    }
}

#[test]
fn linear_decay_strobe_matches_the_exact_map_factor() {
    let text = r#"(
    format: 2,
    title: "Linear decay",
    states: [
        (name: "x", start: 1.0, rate: "-k*x"),
    ],
    parameters: [
        (name: "k", value: 0.7, range: (0.0, 1.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-12, atol: 1e-14),
    time: (start: 0.0, settle: 0.0, span: 20.0),
    strobe: Some((period: "2", first_at: 0.0, axes: ("x", "x"))),
)
"#;
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "decay.ron", text);
    let output = lamina()
        .arg("strobe")
        .arg(&path)
        .assert()
        .success()
        .get_output()
        .clone();
    let samples = strobe_samples(&stdout_of(&output), &["x".to_owned()]);
    // [analytic] samples at t = 0, 2, ..., 20.
    assert_eq!(samples.t.len(), 11);
    for (k, t) in samples.t.iter().enumerate() {
        // [analytic] strobe times are t0 + k T.
        assert!((t - 2.0 * k as f64).abs() <= 1e-12, "t_{k} = {t}");
    }
    for pair in samples.states.windows(2) {
        // REFERENCES.md case 1 [A]: map factor exp(-1.4).
        assert_rel(pair[1][0] / pair[0][0], 0.2465969639416065, 1e-10, "ratio");
    }
}

#[test]
fn recheck_of_cut_points_and_strobe_samples_goes_to_stderr() {
    let dir = TempDir::new().unwrap();
    let text = with(
        &limit_cycle(0.5),
        "rtol: 1e-12, atol: 1e-12",
        "rtol: 1e-9, atol: 1e-9",
    );
    let path = write(dir.path(), "cycle.ron", &text);
    let plain = lamina()
        .arg("cut")
        .arg(&path)
        .args(["--count", "8"])
        .assert()
        .success()
        .get_output()
        .clone();
    let rechecked = lamina()
        .arg("cut")
        .arg(&path)
        .args(["--count", "8", "--recheck"])
        .assert()
        .success()
        .get_output()
        .clone();
    // the CSV is the same; the recheck is a line on stderr
    assert_eq!(stdout_of(&plain), stdout_of(&rechecked));
    let err = stderr_of(&rechecked);
    assert!(
        err.contains("recheck: ") && err.contains("significant digit(s) agree"),
        "{err}"
    );
    // [analytic] both tolerances divided by 100
    assert!(err.contains("rtol 1.0e-11, atol 1.0e-11"), "{err}");
    assert!(
        err.contains("all 7 points after the common start compared"),
        "{err}"
    );
    let digits: u32 = err
        .split("recheck: ")
        .nth(1)
        .and_then(|rest| rest.split(' ').next())
        .and_then(|d| d.parse().ok())
        .unwrap_or_else(|| panic!("no digits in {err}"));
    // [analytic] REFERENCES case 3: the points converge onto r = 1 with return time pi; at
    // rtol 1e-9 a handful of digits agree, never all of them
    assert!((5..15).contains(&digits), "{err}");

    // a strobe: REFERENCES case 1, linear decay sampled every 2
    let decay = r#"(
    format: 2,
    title: "Linear decay",
    states: [
        (name: "x", start: 1.0, rate: "-k*x"),
    ],
    parameters: [
        (name: "k", value: 0.7, range: (0.0, 1.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-8, atol: 1e-14),
    time: (start: 0.0, settle: 0.0, span: 20.0),
    strobe: Some((period: "2", first_at: 0.0, axes: ("x", "x"))),
)
"#;
    let path = write(dir.path(), "decay.ron", decay);
    lamina()
        .arg("strobe")
        .arg(&path)
        .arg("--recheck")
        .assert()
        .success()
        .stderr(
            predicate::str::contains("recheck: ").and(predicate::str::contains(
                "all 10 points after the common start",
            )),
        );
}
