//! `lamina check` on hostile scenario files: brackets nested without end (refused in bounded
//! memory), byte order marks and bytes that are not UTF-8, unclosed comments, counts too large,
//! tolerances and times that cannot mean anything, rates and surfaces that are not numbers or
//! never change. Each is refused (or warned about) with its line, column and field, and the
//! last line counts errors and warnings.

mod common;

use std::process::Command as Process;

use assert_cmd::Command;
use common::write;
use tempfile::TempDir;

fn lamina() -> Command {
    Command::cargo_bin("lamina").expect("the lamina binary is built")
}

/// A driven, damped oscillator with a level cut and a strobe (invented values).
const BASE: &str = r#"(
    format: 2,
    title: "Driven oscillator",
    states: [
        (name: "x", start: 1.0, rate: "v"),
        (name: "v", start: 0.0, rate: "-c*v - x + a*cos(w*t)"),
    ],
    parameters: [
        (name: "c", value: 0.3, range: (0.0, 1.0)),
        (name: "a", value: 0.5, range: (0.0, 2.0)),
        (name: "w", value: 1.4, range: (0.5, 3.0)),
    ],
    integrator: (method: Dp853, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 20.0, span: 100.0),
    cut: Some((surface: Level("v"), direction: Falling, axes: ("x", "v"))),
    strobe: Some((period: "2*pi/w", first_at: 0.0, axes: ("x", "v"))),
    sweep: Some((parameter: "a", from: 0.1, to: 0.6, values: 11, settle: 50.0,
                 keep: 8, follow: true, source: Strobe, coordinate: "x")),
)
"#;

/// `BASE` with the one occurrence of `from` replaced by `to`.
fn with(from: &str, to: &str) -> String {
    assert_eq!(BASE.matches(from).count(), 1, "{from}");
    BASE.replacen(from, to, 1)
}

/// Runs `lamina check` on `text` and returns its exit code and stderr.
fn check(dir: &TempDir, name: &str, text: &[u8]) -> (i32, String) {
    let path = dir.path().join(name);
    std::fs::write(&path, text).expect("scenario written");
    let output = lamina().arg("check").arg(&path).output().expect("runs");
    assert_eq!(output.stdout, b"");
    let stderr = String::from_utf8_lossy(&output.stderr).into_owned();
    assert!(!stderr.contains("panicked"), "{stderr}");
    (output.status.code().unwrap_or(-1), stderr)
}

#[test]
fn the_base_scenario_is_ok() {
    let dir = TempDir::new().unwrap();
    let (code, stderr) = check(&dir, "base.ron", BASE.as_bytes());
    assert_eq!(code, 0, "{stderr}");
    assert!(stderr.ends_with("base.ron: ok\n"), "{stderr}");
}

#[test]
fn deep_nesting_is_refused_in_bounded_memory() {
    // 100 000 '(' then as many ')', and 100 KB of '[': the scan that locates fields once grew
    // with the square of the depth (2 GB at 30 000 deep) and aborted; under a 1 GB limit on
    // the address space the refusal still comes, at the 33rd bracket
    let dir = TempDir::new().unwrap();
    let parens = format!("{}{}", "(".repeat(100_000), ")".repeat(100_000));
    let squares = "[".repeat(100_000);
    let binary = assert_cmd::cargo::cargo_bin("lamina");
    for (name, text) in [("parens.ron", parens), ("squares.ron", squares)] {
        let path = write(dir.path(), name, &text);
        let output = Process::new("sh")
            .arg("-c")
            .arg("ulimit -v 1048576 && exec \"$0\" check \"$1\"")
            .arg(&binary)
            .arg(&path)
            .output()
            .expect("runs under sh");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(1), "{name}: {stderr}");
        assert!(
            stderr.contains("line 1, column 33: the scenario: this '")
                && stderr.contains("nests brackets more than 32 deep"),
            "{name}: {stderr}"
        );
    }
}

#[test]
fn encodings_comments_and_counts_are_located() {
    let dir = TempDir::new().unwrap();
    // a byte order mark is skipped
    let mut marked = vec![0xEF, 0xBB, 0xBF];
    marked.extend_from_slice(BASE.as_bytes());
    let (code, stderr) = check(&dir, "marked.ron", &marked);
    assert_eq!(code, 0, "{stderr}");
    // a Latin-1 byte: its line and column (in characters)
    let latin1 = with("Driven oscillator", "Driven \u{1}scillator").replace('\u{1}', "\u{7f}");
    let mut bytes = latin1.into_bytes();
    let at = bytes.iter().position(|&b| b == 0x7f).expect("marker");
    bytes[at] = 0xF6;
    let (code, stderr) = check(&dir, "latin1.ron", &bytes);
    assert_eq!(code, 1);
    assert!(
        stderr.contains("line 3, column 20: the file is not UTF-8 text: byte 0xF6"),
        "{stderr}"
    );
    // a comment never closed: where it starts, no stray number
    let text = with("    time:", "    /* time:");
    let (code, stderr) = check(&dir, "comment.ron", text.as_bytes());
    assert_eq!(code, 1);
    assert!(
        stderr.contains(
            "line 14, column 5: the block comment that starts here with '/*' is never closed"
        ),
        "{stderr}"
    );
    // a count too large for its field
    let text = with("keep: 8", "keep: 1000000000000");
    let (code, stderr) = check(&dir, "keep.ron", text.as_bytes());
    assert_eq!(code, 1);
    assert!(
        stderr
            .contains("sweep.keep: 1000000000000 is too large; the largest it takes is 4294967295"),
        "{stderr}"
    );
}

#[test]
fn meaningless_settings_are_errors_naming_the_field() {
    let dir = TempDir::new().unwrap();
    let cases = [
        (
            "rtol: 1e-9",
            "rtol: 1e308",
            "error in integrator.rtol: rtol 1e308 allows errors",
        ),
        (
            "rtol: 1e-9",
            "rtol: 10.0",
            "error in integrator.rtol: rtol 10 allows errors",
        ),
        (
            "atol: 1e-12",
            "atol: -1.0",
            "error in integrator.atol: must be a positive number",
        ),
        (
            "atol: 1e-12",
            "atol: 1e-12, max_step: 1e-300",
            "error in integrator.max_step: max_step 1e-300 is below",
        ),
        (
            "time: (start: 0.0",
            "time: (start: 1e20",
            "error in time.start: the settle time of 20 after t = 1e20 comes out as 0",
        ),
        (
            "first_at: 0.0",
            "first_at: 1e18",
            "error in strobe.first_at: strobe samples at first_at + k T with first_at = 1e18",
        ),
        (
            "Level(\"v\")",
            "Level(\"1\")",
            "error in cut.surface: the surface '1' depends on neither the states nor t",
        ),
        (
            "Level(\"v\")",
            "Level(\"0/0 + v\")",
            "error in cut.surface: the surface '0/0 + v' is NaN (not a number) at the start",
        ),
        (
            "rate: \"v\"",
            "rate: \"0/0\"",
            "error in states[0].rate: this rate is NaN (not a number) at the start",
        ),
        (
            "period: \"2*pi/w\"",
            "period: \"-1e308\"",
            "error in strobe.period: the strobe period '-1e308' evaluates to -1e308",
        ),
    ];
    for (idx, (from, to, part)) in cases.into_iter().enumerate() {
        let text = with(from, to);
        let (code, stderr) = check(&dir, &format!("bad{idx}.ron"), text.as_bytes());
        assert_eq!(code, 1, "{to}: {stderr}");
        assert!(stderr.contains(part), "{to}: no '{part}' in {stderr}");
        assert!(stderr.contains(": line "), "{to}: not located: {stderr}");
    }
}

#[test]
fn times_too_far_from_zero_for_the_model_are_named() {
    // [analytic] no step below 10 * 2^-52 * 1e13 = 0.0222 changes t near 1e13, while the
    // oscillator (time scale about 1) takes far smaller steps at rtol 1e-9: its run stops at
    // once there (the strobe times, 2^-9 = 0.00195 apart, could still be formed to a
    // thousandth of the period 2 pi / 1.4 = 4.49)
    let dir = TempDir::new().unwrap();
    let text = with("time: (start: 0.0", "time: (start: 1e13");
    let (code, stderr) = check(&dir, "far.ron", text.as_bytes());
    assert_eq!(code, 1, "{stderr}");
    assert!(
        stderr.contains(
            "error in time.start: the run stops at its start: its step size collapses at t = 1e13"
        ),
        "{stderr}"
    );
    // a span reaching that far: a warning on the span, and the last line counts it
    let text = with("span: 100.0", "span: 1e12");
    let (code, stderr) = check(&dir, "long.ron", text.as_bytes());
    assert_eq!(code, 0, "{stderr}");
    assert!(
        stderr.contains("warning in time.span: near the end of the window, at t = 1e12")
            && stderr.contains("step size collapsed"),
        "{stderr}"
    );
    assert!(stderr.ends_with("long.ron: ok, 1 warning\n"), "{stderr}");
    // numbers in short form, not hundreds of digits
    let text = with("value: 0.5", "value: 1e308");
    let (code, stderr) = check(&dir, "huge.ron", text.as_bytes());
    assert_eq!(code, 0, "{stderr}");
    assert!(
        stderr.contains("the value 1e308 is outside the range"),
        "{stderr}"
    );
}
