//! How `lamina cut` and `lamina strobe` end when their output or their user goes away: a
//! reader that closes the pipe (`| head`); and the messages for a scenario that repeats a
//! state's name.

#![cfg(unix)]

use std::fs;
use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use tempfile::TempDir;

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

/// An undamped oscillator (period 2 pi) cut at v = 0 and strobed every time unit, over
/// `span`: a run with many cheap rows.
fn oscillator(span: &str) -> String {
    format!(
        r#"(
    format: 1,
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
    strobe: Some((period: "1", phase: 0.0, axes: ("x", "v"))),
    limits: (max_points: 1000000000, bound: 1e6),
)
"#
    )
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    fs::write(&path, text).expect("scenario written");
    path
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
