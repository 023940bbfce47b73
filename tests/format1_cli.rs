//! A scenario file of format 1 (the first release's words) runs through every command and
//! gives the same numbers, byte for byte, as its format-2 twin; `lamina check` says which
//! format it read and that saving writes format 2.

mod common;

use assert_cmd::Command;
use common::write;
use predicates::prelude::*;
use tempfile::TempDir;

fn lamina() -> Command {
    Command::cargo_bin("lamina").expect("the lamina binary is built")
}

/// A driven, damped oscillator in format 1: `Auto`, strobe `phase`, sweep `steps`,
/// `limits.bound`.
const FORMAT1: &str = r#"(
    format: 1,
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
    integrator: (method: Auto, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 150.0, span: 60.0),
    cut: Some((
        surface: Plane(normal: {"v": 1.0}, offset: 0.0),
        direction: Falling,
        axes: ("x", "v"),
    )),
    strobe: Some((period: "2*pi/w", phase: 0.5, axes: ("x", "v"))),
    sweep: Some((parameter: "a", from: 0.1, to: 0.4, steps: 3, settle: 30.0,
                 keep: 4, follow: false, source: Strobe, coordinate: "x")),
    limits: (max_points: 5000, bound: 1e3),
)
"#;

/// The same scenario written by hand in format 2.
const FORMAT2: &str = r#"(
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
    integrator: (method: Automatic, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 150.0, span: 60.0),
    cut: Some((
        surface: Plane(normal: {"v": 1.0}, offset: 0.0),
        direction: Falling,
        axes: ("x", "v"),
    )),
    strobe: Some((period: "2*pi/w", first_at: 0.5, axes: ("x", "v"))),
    sweep: Some((parameter: "a", from: 0.1, to: 0.4, values: 4, settle: 30.0,
                 keep: 4, follow: false, source: Strobe, coordinate: "x")),
    limits: (max_points: 5000, escape: 1e3),
)
"#;

/// stdout and stderr of `lamina <args> FILE`, which must succeed.
fn run(args: &[&str], file: &std::path::Path) -> (String, String) {
    let output = lamina()
        .args(args)
        .arg(file)
        .assert()
        .success()
        .get_output()
        .clone();
    (
        String::from_utf8(output.stdout).expect("utf8"),
        String::from_utf8(output.stderr).expect("utf8"),
    )
}

#[test]
fn a_format1_file_gives_the_numbers_of_its_format2_twin() {
    let dir = TempDir::new().expect("temp dir");
    let old = write(dir.path(), "old.ron", FORMAT1);
    let new = write(dir.path(), "new.ron", FORMAT2);
    for command in [&["cut"][..], &["strobe"], &["cycle", "--json"], &["cycle"]] {
        let (old_out, _) = run(command, &old);
        let (new_out, _) = run(command, &new);
        assert!(!old_out.is_empty(), "{command:?}");
        assert_eq!(old_out, new_out, "{command:?}");
    }
    // the strobe's first sample is at first_at = 0.5 plus whole periods, after the settle
    let (strobe, _) = run(&["strobe"], &old);
    let first_t: f64 = strobe
        .lines()
        .nth(1)
        .and_then(|row| row.split(',').nth(1))
        .and_then(|t| t.parse().ok())
        .expect("a sample");
    // [analytic] the first k with 0.5 + k 2 pi / 1.4 >= 150 is k = 34
    let expected = 0.5 + 34.0 * 2.0 * std::f64::consts::PI / 1.4;
    assert!(
        (first_t - expected).abs() < 1e-12,
        "{first_t} vs {expected}"
    );
    // steps: 3 is values: 4, with the same values and the same change list
    let (old_sweep, old_changes) = run(&["sweep"], &old);
    let (new_sweep, new_changes) = run(&["sweep"], &new);
    assert_eq!(old_sweep, new_sweep);
    assert_eq!(old_changes, new_changes);
    let values: std::collections::BTreeSet<&str> = old_sweep
        .lines()
        .skip(1)
        .filter_map(|row| row.split(',').next())
        .collect();
    // [analytic] 4 values from 0.1 to 0.4 are 0.1, 0.2, 0.3, 0.4, printed as such
    assert_eq!(
        values.into_iter().collect::<Vec<_>>(),
        ["0.1", "0.2", "0.3", "0.4"]
    );
}

#[test]
fn check_says_it_read_format1_and_saving_writes_format2() {
    let dir = TempDir::new().expect("temp dir");
    let old = write(dir.path(), "old.ron", FORMAT1);
    lamina().arg("check").arg(&old).assert().success().stderr(
        predicate::str::contains(
            "read format 1 (its old words are mapped to format 2's); saving writes format 2",
        )
        .and(predicate::str::contains("ok")),
    );
    let new = write(dir.path(), "new.ron", FORMAT2);
    lamina()
        .arg("check")
        .arg(&new)
        .assert()
        .success()
        .stderr(predicate::str::contains("format 1").not());
}

#[test]
fn a_file_of_a_newer_format_is_refused_naming_both_versions() {
    let dir = TempDir::new().expect("temp dir");
    let path = write(
        dir.path(),
        "newer.ron",
        &FORMAT2.replacen("format: 2", "format: 3", 1),
    );
    lamina()
        .arg("check")
        .arg(&path)
        .assert()
        .failure()
        .stderr(predicate::str::contains(
            "this file is format 3; this Lamina reads format 2 and older",
        ));
}
