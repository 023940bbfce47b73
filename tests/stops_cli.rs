//! How the long commands stop: at once with a located reason where the time has no resolution
//! left, on a sliding mode in `lyapunov`, on Ctrl-C saying where and what was not written
//! (exit 130), with a JSON object on stdout under `--json`; and what `lyapunov` and `cycle`
//! say of runs that escaped, stopped early or settled at rest.

#![cfg(unix)]

use std::fs;
use std::path::Path;
use std::process::{Child, Command, Output, Stdio};
use std::thread::sleep;
use std::time::{Duration, Instant};

use tempfile::TempDir;

mod common;
use common::{listing, write};

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

fn stderr_text(output: &Output) -> String {
    String::from_utf8_lossy(&output.stderr).into_owned()
}

fn stdout_text(output: &Output) -> String {
    String::from_utf8_lossy(&output.stdout).into_owned()
}

/// Runs `command`, killing it (and failing) if it has not ended within a few minutes: a hang
/// is a failure, not a stuck test.
fn run_bounded(command: &mut Command) -> Output {
    let mut child = command
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("lamina starts");
    let started = Instant::now();
    while child.try_wait().expect("status").is_none() {
        if started.elapsed() > Duration::from_secs(240) {
            child.kill().expect("kill");
            panic!("{command:?} did not end");
        }
        sleep(Duration::from_millis(20));
    }
    child.wait_with_output().expect("output")
}

/// An oscillator x' = v, v' = -x with a cut at v = 0 and a strobe of period 1 from
/// `first_at`, over `settle` and `span` after `start`.
fn oscillator(start: &str, settle: &str, span: &str, first_at: &str) -> String {
    format!(
        r#"(
    format: 1,
    title: "Oscillator",
    states: [
        (name: "x", start: 1.0, rate: "v"),
        (name: "v", start: 0.0, rate: "-x"),
    ],
    parameters: [(name: "w", value: 1.0, range: (0.5, 2.0))],
    integrator: (method: Dp5, rtol: 1e-6, atol: 1e-9),
    time: (start: {start}, settle: {settle}, span: {span}),
    cut: Some((
        surface: Plane(normal: {{"v": 1.0}}, offset: 0.0),
        direction: Falling,
        axes: ("x", "v"),
    )),
    strobe: Some((period: "1", phase: {first_at}, axes: ("x", "v"))),
    sweep: Some((parameter: "w", from: 0.5, to: 2.0, steps: 40, settle: 0.0,
                 keep: 100000000, follow: false, source: Strobe, coordinate: "x")),
    limits: (max_points: 1000000000, bound: 1e6),
)
"#
    )
}

#[test]
fn times_far_from_zero_stop_at_once_with_a_located_reason() {
    let dir = TempDir::new().unwrap();
    // [analytic] near 1e20 floating-point times are 16384 apart: a span of 100 there, or
    // strobe times 1e20 + k near t = 0, cannot be formed; near 1e15 they are 0.125 apart,
    // too coarse for steps of the oscillator's size
    let all = ["cut", "strobe", "lyapunov", "cycle"];
    let cases = [
        (oscillator("1e20", "0.0", "100.0", "0.0"), "span", &all[..]),
        (oscillator("0.0", "1e20", "100.0", "0.0"), "span", &all[..]),
        // (only the strobe uses the strobe's times)
        (
            oscillator("0.0", "0.0", "100.0", "1e20"),
            "strobe samples",
            &["strobe"][..],
        ),
        (
            oscillator("1e15", "0.0", "100.0", "1e15"),
            "nearer 0",
            &all[..],
        ),
    ];
    for (i, (text, what, commands)) in cases.iter().enumerate() {
        let path = write(dir.path(), &format!("far{i}.ron"), text);
        for command in commands.iter() {
            let output = run_bounded(lamina().arg(command).arg(&path));
            let stderr = stderr_text(&output);
            assert_eq!(output.status.code(), Some(1), "{command} {i}: {stderr}");
            assert!(
                stderr.contains(what) && stderr.contains("nearer 0"),
                "{command} {i}: {stderr}"
            );
            assert!(!stderr.contains("panicked"), "{stderr}");
        }
        let output = run_bounded(lamina().arg("lyapunov").arg(&path));
        assert!(
            !stderr_text(&output).contains("needs a finite start"),
            "{}",
            stderr_text(&output)
        );
    }
}

#[test]
fn lyapunov_on_a_sliding_model_reports_chattering_and_no_verdict() {
    let dir = TempDir::new().unwrap();
    // [analytic] x' = -sign(x) from 1 reaches x = 0 at t = 1 and slides there
    let path = write(
        dir.path(),
        "slide.ron",
        r#"(
    format: 1,
    title: "Sliding",
    states: [(name: "x", start: 1.0, rate: "-sign(x)"), (name: "y", start: 0.5, rate: "-y")],
    parameters: [],
    integrator: (method: Auto, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 10.0),
    limits: (max_points: 200000, bound: 1e6),
)
"#,
    );
    let output = run_bounded(lamina().arg("lyapunov").arg(&path).arg("--json"));
    let stderr = stderr_text(&output);
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    // [analytic] the slide starts at t = 1 (to rounding: the time is a located switch)
    let t: f64 = stderr
        .split("chatters at t = ")
        .nth(1)
        .and_then(|rest| rest.split(':').next())
        .and_then(|number| number.parse().ok())
        .unwrap_or_else(|| panic!("no time of chattering in: {stderr}"));
    assert!((t - 1.0).abs() < 1e-9, "{stderr}");
    let json: serde_json::Value = serde_json::from_str(&stdout_text(&output)).unwrap();
    assert_eq!(json["verdict"], "undecided");
    assert!(json["kaplan_yorke"].is_null());
    assert!(
        json["error"].as_str().unwrap().contains("chatters"),
        "{json}"
    );
}

#[test]
fn lyapunov_on_an_escaping_run_says_unbounded_and_gives_no_dimension() {
    let dir = TempDir::new().unwrap();
    // [analytic] x' = 0.3 x, y' = -3 y passes 1e6 at t = ln(1e6) / 0.3 = 46: exponents
    // (0.3, -3) that would read as chaos with dimension 1.1
    let path = write(
        dir.path(),
        "saddle.ron",
        r#"(
    format: 1,
    title: "Saddle",
    states: [(name: "x", start: 1.0, rate: "0.3*x"), (name: "y", start: 1.0, rate: "-3*y")],
    parameters: [],
    integrator: (method: Dp853, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 100.0),
    limits: (max_points: 200000, bound: 1e6),
)
"#,
    );
    let output = run_bounded(lamina().arg("lyapunov").arg(&path));
    let stdout = stdout_text(&output);
    assert_eq!(output.status.code(), Some(1), "{}", stderr_text(&output));
    assert!(stdout.contains("verdict: unbounded"), "{stdout}");
    assert!(!stdout.contains("chaotic"), "{stdout}");
    assert!(stdout.contains("not determined"), "{stdout}");
    let output = run_bounded(lamina().arg("lyapunov").arg(&path).arg("--json"));
    let json: serde_json::Value = serde_json::from_str(&stdout_text(&output)).unwrap();
    assert_eq!(json["verdict"], "unbounded");
    assert!(json["kaplan_yorke"].is_null());
}

#[test]
fn cycle_on_a_strobe_map_at_rest_says_it_is_a_resting_point() {
    let dir = TempDir::new().unwrap();
    // [analytic] x' = v, v' = -x - 0.5 v settles at the origin: its strobe map's fixed point
    // is a resting point, not a periodic orbit (and neither stable orbit nor torus birth)
    let path = write(
        dir.path(),
        "damped.ron",
        r#"(
    format: 1,
    title: "Damped",
    states: [(name: "x", start: 1.0, rate: "v"), (name: "v", start: 0.0, rate: "-x - 0.5*v")],
    parameters: [],
    integrator: (method: Dp853, rtol: 1e-10, atol: 1e-12),
    time: (start: 0.0, settle: 200.0, span: 50.0),
    strobe: Some((period: "2*pi", phase: 0.0, axes: ("x", "v"))),
    limits: (max_points: 200000, bound: 1e6),
)
"#,
    );
    let output = run_bounded(
        lamina()
            .args(["cycle", "--map", "strobe", "--from-start"])
            .arg(&path),
    );
    let stderr = stderr_text(&output);
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    assert!(
        stderr.contains("resting point") && stderr.contains("x = "),
        "{stderr}"
    );
    assert!(!stdout_text(&output).contains("torus"));
    let output = run_bounded(
        lamina()
            .args(["cycle", "--map", "strobe", "--from-start", "--json"])
            .arg(&path),
    );
    let json: serde_json::Value = serde_json::from_str(&stdout_text(&output)).unwrap();
    assert!(json["error"].as_str().unwrap().contains("resting point"));
    // [analytic] the origin, to the Newton tolerance
    assert!(
        json["resting_point"]["x"].as_f64().unwrap().abs() < 1e-6,
        "{json}"
    );
}

#[test]
fn with_json_a_failing_command_still_prints_a_json_object() {
    let dir = TempDir::new().unwrap();
    let missing = dir.path().join("missing.ron");
    let no_map = write(
        dir.path(),
        "bare.ron",
        &oscillator("0.0", "0.0", "10.0", "0.0")
            .replace(
                "strobe: Some((period: \"1\", phase: 0.0, axes: (\"x\", \"v\"))),",
                "",
            )
            .replace("cut: Some((", "cut: None, /*")
            .replace("axes: (\"x\", \"v\"),\n    )),", "*/"),
    );
    for (command, path) in [
        ("cycle", &missing),
        ("lyapunov", &missing),
        ("cycle", &no_map),
    ] {
        let output = run_bounded(lamina().arg(command).arg(path).arg("--json"));
        assert_eq!(output.status.code(), Some(1));
        let json: serde_json::Value = serde_json::from_str(&stdout_text(&output))
            .unwrap_or_else(|e| panic!("{command}: {e}: {}", stdout_text(&output)));
        assert!(json["error"].is_string(), "{json}");
        assert_eq!(json["command"], command);
    }
}

/// Waits until `child` has installed its Ctrl-C handler (SIGINT in the caught signals of
/// /proc/PID/status), so the signal is not the default one that ends it at once.
fn wait_for_handler(child: &mut Child) {
    let status = format!("/proc/{}/status", child.id());
    for _ in 0..24_000 {
        assert!(
            child.try_wait().expect("status").is_none(),
            "lamina ended before it could be interrupted"
        );
        let caught = fs::read_to_string(&status)
            .ok()
            .and_then(|text| {
                let line = text.lines().find(|l| l.starts_with("SigCgt:"))?.to_owned();
                u64::from_str_radix(line.split_whitespace().nth(1)?, 16).ok()
            })
            .unwrap_or(0);
        // SIGINT is signal 2
        if caught & 0b10 != 0 {
            return;
        }
        sleep(Duration::from_millis(10));
    }
    panic!("no Ctrl-C handler appeared");
}

/// Starts `args` on `scenario`, lets it work a moment, sends Ctrl-C and returns the output.
fn interrupt(scenario: &Path, args: &[&str]) -> Output {
    let mut child = lamina()
        .arg(args[0])
        .arg(scenario)
        .args(&args[1..])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("lamina starts");
    wait_for_handler(&mut child);
    sleep(Duration::from_millis(300));
    let sent = Command::new("kill")
        .arg("-INT")
        .arg(child.id().to_string())
        .status()
        .expect("kill runs");
    assert!(sent.success());
    child.wait_with_output().expect("lamina ends")
}

#[test]
fn ctrl_c_stops_every_long_command_saying_where_and_what_was_not_written() {
    let scenarios = TempDir::new().unwrap();
    let endless = write(
        scenarios.path(),
        "endless.ron",
        &oscillator("0.0", "0.0", "1e12", "0.0"),
    );
    let outputs = TempDir::new().unwrap();
    let out = write(outputs.path(), "out.csv", "good\n");
    let png = write(outputs.path(), "out.png", "good\n");
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (
            vec!["sweep", "--out", "OUT", "--png", "PNG"],
            "of 41 value(s)",
        ),
        (vec!["lyapunov", "--trace", "OUT"], "stopped at t = "),
        (vec!["lyapunov", "--json"], "stopped at t = "),
        (
            vec!["render", "--view", "strobe", "--png", "PNG"],
            "stopped at t = ",
        ),
        (vec!["cycle", "--map", "strobe"], "stopped at t = "),
        (
            vec!["branch", "--of", "rest", "--out", "OUT", "--png", "PNG"],
            "stopped on a signal",
        ),
    ];
    for (args, where_) in cases {
        let args: Vec<&str> = args
            .iter()
            .map(|a| match *a {
                "OUT" => out.to_str().unwrap(),
                "PNG" => png.to_str().unwrap(),
                other => other,
            })
            .collect();
        let output = interrupt(&endless, &args);
        let stderr = stderr_text(&output);
        // [common practice] a program stopped by Ctrl-C exits with 128 + SIGINT
        assert_eq!(output.status.code(), Some(130), "{args:?}: {stderr}");
        assert!(
            stderr.contains("on a signal") && stderr.contains(where_),
            "{args:?}: {stderr}"
        );
        assert!(!stderr.contains("panicked"), "{stderr}");
        if args.contains(&"--json") {
            let json: serde_json::Value = serde_json::from_str(&stdout_text(&output)).unwrap();
            assert_eq!(json["stopped_on_signal"], true, "{json}");
        } else {
            assert_eq!(stdout_text(&output), "", "{args:?}");
        }
        if args.len() > 1 && !args.contains(&"--json") && !args.contains(&"--map") {
            assert!(
                stderr.contains("nothing was written to"),
                "{args:?}: {stderr}"
            );
        }
        // the outputs are as they were, with no temporary file beside them
        assert_eq!(fs::read_to_string(&out).unwrap(), "good\n");
        assert_eq!(fs::read_to_string(&png).unwrap(), "good\n");
        assert_eq!(listing(outputs.path()), ["out.csv", "out.png"], "{args:?}");
    }
}

/// A chain of `n` states `x_i' = -x_i + 0.1 x_(i+1)` (cyclic), strobed every 0.1, over 0.2.
fn chain(n: usize) -> String {
    let states: Vec<String> = (0..n)
        .map(|i| {
            format!(
                "(name: \"x{i}\", start: 0.1, rate: \"-x{i} + 0.1*x{}\")",
                (i + 1) % n
            )
        })
        .collect();
    format!(
        r#"(
    format: 1,
    title: "Chain",
    states: [{}],
    parameters: [],
    integrator: (method: Auto, rtol: 1e-6, atol: 1e-9),
    time: (start: 0.0, settle: 0.0, span: 0.2),
    strobe: Some((period: "0.1", phase: 0.0, axes: ("x0", "x1"))),
    limits: (max_points: 200000, bound: 1e6),
)
"#,
        states.join(", ")
    )
}

#[test]
fn variational_work_of_a_hundred_states_fits_in_memory_of_their_square() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "chain.ron", &chain(100));
    // under a 1.5 GB address space: the 10 100 x 10 100 matrices of the whole variational
    // system (1.6 GB) would not fit; the model's 100 x 100 ones and the vectors do
    let limited = |args: &str| {
        let script = format!(
            "ulimit -v 1500000; exec '{}' {args} '{}'",
            env!("CARGO_BIN_EXE_lamina"),
            path.display()
        );
        run_bounded(Command::new("sh").arg("-c").arg(script))
    };
    let output = limited("lyapunov --json");
    assert_eq!(output.status.code(), Some(0), "{}", stderr_text(&output));
    let json: serde_json::Value = serde_json::from_str(&stdout_text(&output)).unwrap();
    let sum = json["sum"].as_f64().unwrap();
    // [analytic] the sum of all finite-time exponents is the Jacobian's trace, -100
    assert!((sum + 100.0).abs() < 1e-4, "{sum}");
    let output = limited("cycle --map strobe --from-start");
    let stderr = stderr_text(&output);
    // [analytic] the chain decays to rest at the origin
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    assert!(stderr.contains("resting point"), "{stderr}");
}
