//! How `lamina cut` and `lamina strobe` end when their output or their user goes away: a
//! reader that closes the pipe (`| head`), Ctrl-C with `--out` and on stdout; and the
//! messages for a scenario that repeats a state's name.

#![cfg(unix)]

use std::fs;
use std::io::{BufRead, BufReader, Read};
use std::process::{Child, Command, Output, Stdio};
use std::thread::sleep;
use std::time::Duration;

use tempfile::TempDir;

mod common;
use common::{listing, write};

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

/// An undamped oscillator (period 2 pi) cut at v = 0 and strobed every time unit, over
/// `span`: a run with many cheap rows.
fn oscillator(span: &str) -> String {
    format!(
        r#"(
    format: 2,
    title: "Long oscillator run",
    states: [
        (name: "x", start: 1.0, rate: "v"),
        (name: "v", start: 0.0, rate: "-x"),
    ],
    parameters: [],
    integrator: (method: Dp5, rtol: 1e-6, atol: 1e-9),
    time: (start: 0.0, settle: 0.0, span: {span}),
    cut: Some((
        surface: Plane(normal: {{"v": 1.0}}, offset: 0.0),
        direction: Falling,
        axes: ("x", "v"),
    )),
    strobe: Some((period: "1", first_at: 0.0, axes: ("x", "v"))),
    limits: (max_points: 1000000000, escape: 1e6),
)
"#
    )
}

/// Sends SIGINT (what Ctrl-C sends) to `child`.
fn ctrl_c(child: &Child) {
    let status = Command::new("kill")
        .arg("-INT")
        .arg(child.id().to_string())
        .status()
        .expect("kill runs");
    assert!(status.success(), "kill -INT failed");
}

fn stderr_text(output: &Output) -> String {
    String::from_utf8(output.stderr.clone()).expect("stderr is UTF-8")
}

#[test]
fn a_closed_pipe_ends_the_command_quietly_with_success() {
    let dir = TempDir::new().unwrap();
    // far more rows than a pipe and the writer's buffer hold, so lamina is still writing
    // when the reader goes
    let path = write(dir.path(), "long.ron", &oscillator("1000000.0"));
    for command in ["cut", "strobe"] {
        let mut child = lamina()
            .arg(command)
            .arg(&path)
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("lamina starts");
        let mut reader = BufReader::new(child.stdout.take().expect("stdout"));
        let mut header = String::new();
        reader.read_line(&mut header).expect("header read");
        assert!(header.starts_with("k,t,"), "{command}: {header}");
        drop(reader); // what `head -1` does after its line
        let output = child.wait_with_output().expect("lamina ends");
        let stderr = stderr_text(&output);
        // [common practice] a Unix filter whose reader has gone ends quietly and successfully
        assert_eq!(output.status.code(), Some(0), "{command}: {stderr}");
        assert_eq!(stderr, "", "{command}");
    }
}

#[test]
fn ctrl_c_with_out_leaves_the_target_alone_and_no_temporary_file() {
    let scenarios = TempDir::new().unwrap();
    let path = write(scenarios.path(), "endless.ron", &oscillator("1e12"));
    let out_dir = TempDir::new().unwrap();
    let out = write(out_dir.path(), "points.csv", "good\n");
    let mut child = lamina()
        .arg("cut")
        .arg(&path)
        .arg("--out")
        .arg(&out)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("lamina starts");
    // the run has started once its temporary file is there (the endless run cannot finish)
    let mut waited = 0;
    while listing(out_dir.path()).len() < 2 {
        assert!(
            child.try_wait().expect("status").is_none(),
            "lamina ended before the run started"
        );
        assert!(waited < 12_000, "no temporary file appeared");
        sleep(Duration::from_millis(10));
        waited += 1;
    }
    let partial = listing(out_dir.path());
    assert!(
        partial.iter().any(|name| name.ends_with(".partial")),
        "{partial:?}"
    );
    ctrl_c(&child);
    let output = child.wait_with_output().expect("lamina ends");
    let stderr = stderr_text(&output);
    // [common practice] a program stopped by Ctrl-C exits with 128 + SIGINT
    assert_eq!(output.status.code(), Some(130), "{stderr}");
    assert!(stderr.contains("stopped at t = "), "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert_eq!(output.stdout, b"");
    assert_eq!(fs::read_to_string(&out).unwrap(), "good\n");
    assert_eq!(
        listing(out_dir.path()),
        ["points.csv"],
        "temporary file left"
    );
}

#[test]
fn ctrl_c_on_stdout_ends_on_a_whole_row() {
    let dir = TempDir::new().unwrap();
    let path = write(dir.path(), "endless.ron", &oscillator("1e12"));
    let mut child = lamina()
        .arg("cut")
        .arg(&path)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("lamina starts");
    let mut reader = BufReader::new(child.stdout.take().expect("stdout"));
    let mut text = String::new();
    for _ in 0..2 {
        reader.read_line(&mut text).expect("a line");
    }
    ctrl_c(&child);
    reader.read_to_string(&mut text).expect("the rest");
    let output = child.wait_with_output().expect("lamina ends");
    let stderr = stderr_text(&output);
    // [common practice] a program stopped by Ctrl-C exits with 128 + SIGINT
    assert_eq!(output.status.code(), Some(130), "{stderr}");
    assert!(stderr.contains("stopped at t = "), "{stderr}");
    assert!(text.ends_with('\n'), "the last row is cut off");
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("k,t,return_time,x,v"));
    let mut n_rows = 0;
    for (k, line) in lines.enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells.len(), 5, "row {k}: {line}");
        assert_eq!(cells[0], k.to_string(), "row {k}: {line}");
        for cell in &cells[3..] {
            cell.parse::<f64>()
                .unwrap_or_else(|_| panic!("row {k}: '{cell}' is not a number"));
        }
        n_rows += 1;
    }
    assert!(n_rows >= 1);
    assert!(
        stderr.contains(&format!("wrote {n_rows} cut point(s)")),
        "{stderr}"
    );
}

#[test]
fn a_repeated_state_name_is_named_once_and_clearly() {
    let dir = TempDir::new().unwrap();
    // the second state repeats `x`; the cut's axes then name `v`, which is no longer a state
    let text = oscillator("10.0").replacen("(name: \"v\", start", "(name: \"x\", start", 1);
    let path = write(dir.path(), "repeated.ron", &text);
    for command in ["check", "cut", "strobe"] {
        let output = lamina()
            .arg(command)
            .arg(&path)
            .output()
            .expect("lamina runs");
        let stderr = stderr_text(&output);
        assert_eq!(output.status.code(), Some(1), "{command}: {stderr}");
        assert!(
            stderr.contains("states[1].name: 'x' is already the name of states[0]"),
            "{command}: {stderr}"
        );
        assert!(
            stderr.contains("(states: x; 'x' is given twice)"),
            "{command}: {stderr}"
        );
        assert!(!stderr.contains("x, x"), "{command}: {stderr}");
    }
}
