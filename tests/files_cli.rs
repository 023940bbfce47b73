//! What the command line's output files do to what is already there: links written through,
//! FIFOs written directly and never replaced, permissions kept or given as usual, a failed
//! run's output set beside an existing file, outputs that would overwrite the scenario or each
//! other refused before running, and every output path checked before a long run.

#![cfg(unix)]

use std::fs;
use std::io::Read;
use std::os::unix::fs::{FileTypeExt, PermissionsExt, symlink};
use std::path::Path;
use std::process::{Command, Output};

use tempfile::TempDir;

mod common;
use common::{listing, write};

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

fn stderr_text(output: &Output) -> String {
    String::from_utf8_lossy(&output.stderr).into_owned()
}

fn mode(path: &Path) -> u32 {
    fs::metadata(path).expect("exists").permissions().mode() & 0o7777
}

/// An undamped oscillator with a strobe of period 1 over a span of 20, and a sweep of `w`
/// over 5 values, with `escaping_sweep` from 1 down to -1: for `w < 0` the motion grows like
/// `exp(sqrt(-w) t)` [analytic] and passes the escape size 10 within the kept samples.
fn oscillator(escaping_sweep: bool) -> String {
    let (to, escape) = if escaping_sweep {
        (-1.0, 10.0)
    } else {
        (1.5, 1e3)
    };
    format!(
        r#"(
    format: 1,
    title: "Oscillator",
    states: [
        (name: "x", start: 1.0, rate: "v"),
        (name: "v", start: 0.0, rate: "-w*x"),
    ],
    parameters: [(name: "w", value: 1.0, range: (-2.0, 2.0))],
    integrator: (method: Dp853, rtol: 1e-8, atol: 1e-10),
    time: (start: 0.0, settle: 0.0, span: 20.0),
    strobe: Some((period: "1", phase: 0.0, axes: ("x", "v"))),
    sweep: Some((parameter: "w", from: 1.0, to: {to}, steps: 4, settle: 0.0,
                 keep: 5, follow: false, source: Strobe, coordinate: "x")),
    limits: (max_points: 200000, bound: {escape}),
)
"#
    )
}

#[test]
fn out_through_a_link_writes_the_linked_file_and_keeps_the_link() {
    let dir = TempDir::new().unwrap();
    let scenario = write(dir.path(), "osc.ron", &oscillator(false));
    let real = write(dir.path(), "real.csv", "old\n");
    let link = dir.path().join("link.csv");
    symlink(&real, &link).unwrap();
    let output = lamina()
        .args(["strobe", scenario.to_str().unwrap(), "--out"])
        .arg(&link)
        .output()
        .unwrap();
    assert!(output.status.success(), "{}", stderr_text(&output));
    assert!(
        fs::symlink_metadata(&link)
            .unwrap()
            .file_type()
            .is_symlink()
    );
    let text = fs::read_to_string(&real).unwrap();
    assert!(text.starts_with("k,t,x,v\n"), "{text}");
    assert_eq!(listing(dir.path()), ["link.csv", "osc.ron", "real.csv"]);
}

#[test]
fn out_onto_a_fifo_streams_into_it_and_leaves_the_fifo() {
    let dir = TempDir::new().unwrap();
    let scenario = write(dir.path(), "osc.ron", &oscillator(false));
    let fifo = dir.path().join("pipe");
    assert!(
        Command::new("mkfifo")
            .arg(&fifo)
            .status()
            .unwrap()
            .success()
    );
    let reader_path = fifo.clone();
    let reader = std::thread::spawn(move || {
        let mut text = String::new();
        fs::File::open(&reader_path)
            .unwrap()
            .read_to_string(&mut text)
            .unwrap();
        text
    });
    let output = lamina()
        .arg("strobe")
        .arg(&scenario)
        .arg("--out")
        .arg(&fifo)
        .output()
        .unwrap();
    assert!(output.status.success(), "{}", stderr_text(&output));
    let text = reader.join().unwrap();
    assert!(text.starts_with("k,t,x,v\n"), "{text}");
    assert!(fs::metadata(&fifo).unwrap().file_type().is_fifo());
    assert_eq!(listing(dir.path()), ["osc.ron", "pipe"]);
}

#[test]
fn outputs_keep_an_existing_files_mode_and_new_ones_get_the_usual_one() {
    let dir = TempDir::new().unwrap();
    let scenario = write(dir.path(), "osc.ron", &oscillator(false));
    let shared = write(dir.path(), "shared.csv", "old\n");
    fs::set_permissions(&shared, fs::Permissions::from_mode(0o664)).unwrap();
    let reference = dir.path().join("reference");
    fs::File::create(&reference).unwrap();
    let fresh = dir.path().join("fresh.csv");
    let trace = dir.path().join("trace.csv");
    let picture = dir.path().join("picture.png");
    for (args, path) in [
        (vec!["strobe", "--out"], &shared),
        (vec!["strobe", "--out"], &fresh),
        (vec!["lyapunov", "--trace"], &trace),
        (vec!["render", "--view", "strobe", "--png"], &picture),
    ] {
        let output = lamina()
            .arg(args[0])
            .arg(&scenario)
            .args(&args[1..])
            .arg(path)
            .output()
            .unwrap();
        assert!(
            output.status.success(),
            "{args:?}: {}",
            stderr_text(&output)
        );
    }
    // [common practice] replacing a file's contents keeps its permissions; a new file gets
    // 0666 under the umask, as the standard library's own files do (not owner-only 0600)
    assert_eq!(mode(&shared), 0o664);
    for path in [&fresh, &trace, &picture] {
        assert_eq!(mode(path), mode(&reference), "{path:?}");
    }
}

#[test]
fn failed_runs_set_their_output_beside_an_existing_file() {
    let dir = TempDir::new().unwrap();
    // x' = x^2 from 1 escapes at t = 1 [analytic]
    let blow_up = write(
        dir.path(),
        "blow_up.ron",
        r#"(
    format: 1,
    title: "Blow-up",
    states: [(name: "x", start: 1.0, rate: "x^2"), (name: "y", start: 0.0, rate: "1")],
    parameters: [],
    integrator: (method: Dp853, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 5.0),
    strobe: Some((period: "0.1", phase: 0.0, axes: ("x", "y"))),
    limits: (max_points: 200000, bound: 1e6),
)
"#,
    );
    let trace = write(dir.path(), "trace.csv", "good trace\n");
    let picture = write(dir.path(), "picture.png", "good picture\n");
    for (args, path, beside) in [
        (vec!["lyapunov", "--trace"], &trace, "trace.unfinished.csv"),
        (
            vec!["render", "--view", "strobe", "--png"],
            &picture,
            "picture.unfinished.png",
        ),
    ] {
        let output = lamina()
            .arg(args[0])
            .arg(&blow_up)
            .args(&args[1..])
            .arg(path)
            .output()
            .unwrap();
        let stderr = stderr_text(&output);
        assert_eq!(output.status.code(), Some(1), "{args:?}: {stderr}");
        assert!(
            stderr.contains("was left as it was") && stderr.contains(beside),
            "{args:?}: {stderr}"
        );
        assert!(dir.path().join(beside).exists());
    }
    assert_eq!(fs::read_to_string(&trace).unwrap(), "good trace\n");
    assert_eq!(fs::read_to_string(&picture).unwrap(), "good picture\n");
    // a sweep with a value that escapes (w < 0) failed too
    let sweep = write(dir.path(), "sweep.ron", &oscillator(true));
    let csv = write(dir.path(), "sweep.csv", "good sweep\n");
    let output = lamina()
        .arg("sweep")
        .arg(&sweep)
        .arg("--out")
        .arg(&csv)
        .output()
        .unwrap();
    let stderr = stderr_text(&output);
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    assert!(stderr.contains("sweep.unfinished.csv"), "{stderr}");
    assert_eq!(fs::read_to_string(&csv).unwrap(), "good sweep\n");
}

#[test]
fn outputs_that_would_overwrite_the_scenario_or_each_other_are_refused_before_running() {
    let dir = TempDir::new().unwrap();
    let text = oscillator(false);
    let scenario = write(dir.path(), "osc.ron", &text);
    let link = dir.path().join("same.ron");
    symlink(&scenario, &link).unwrap();
    let picture = dir.path().join("picture.png");
    let cases: Vec<(Vec<&str>, &str)> = vec![
        (
            vec!["cut", "--out", "osc.ron"],
            "--out osc.ron is the scenario file",
        ),
        (vec!["strobe", "--out", "same.ron"], "is the scenario file"),
        (
            vec!["lyapunov", "--trace", "./osc.ron"],
            "--trace ./osc.ron is the scenario",
        ),
        (
            vec!["render", "--view", "strobe", "--png", "osc.ron"],
            "--png osc.ron is the scenario",
        ),
        (
            vec!["sweep", "--out", "picture.png", "--png", "picture.png"],
            "--out picture.png and --png picture.png are the same file",
        ),
    ];
    for (args, message) in cases {
        let output = lamina()
            .current_dir(dir.path())
            .arg(args[0])
            .arg("osc.ron")
            .args(&args[1..])
            .output()
            .unwrap();
        let stderr = stderr_text(&output);
        assert_eq!(output.status.code(), Some(1), "{args:?}: {stderr}");
        assert!(stderr.contains(message), "{args:?}: {stderr}");
        assert_eq!(fs::read_to_string(&scenario).unwrap(), text);
        assert!(!picture.exists());
        assert_eq!(listing(dir.path()), ["osc.ron", "same.ron"], "{args:?}");
    }
}

#[test]
fn a_bad_png_path_is_found_before_the_sweep_runs() {
    let dir = TempDir::new().unwrap();
    let scenario = write(dir.path(), "osc.ron", &oscillator(false));
    let csv = dir.path().join("sweep.csv");
    let output = lamina()
        .arg("sweep")
        .arg(&scenario)
        .arg("--out")
        .arg(&csv)
        .arg("--png")
        .arg(dir.path().join("no such folder").join("sweep.png"))
        .output()
        .unwrap();
    let stderr = stderr_text(&output);
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    assert!(
        stderr.contains("--png") && stderr.contains("sweep.png"),
        "{stderr}"
    );
    // nothing was computed: no CSV was written either, and no temporary file is left
    assert!(!stderr.contains("period"), "{stderr}");
    assert_eq!(listing(dir.path()), ["osc.ron"]);
}
