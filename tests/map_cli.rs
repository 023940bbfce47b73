//! `lamina map` and `lamina merge` end to end: the CSV columns and row order, the Brusselator
//! plane, shards merged into the whole file byte for byte, missing and doubled shards refused
//! with nothing written, `--shard auto`, JSON, the picture and Ctrl-C.

#![cfg(unix)]

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::thread::sleep;
use std::time::Duration;

use tempfile::TempDir;

mod common;
use common::{listing, write};

fn lamina() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lamina"))
}

fn run(args: &[&str], files: &[&Path]) -> Output {
    let mut command = lamina();
    command.arg(args[0]);
    for f in files {
        command.arg(f);
    }
    command.args(&args[1..]).output().expect("lamina runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Brusselator x' = A - (B + 1) x + x^2 y, y' = B x - x^2 y over (A, B), cut x = A rising,
/// with a sweep in B as well (for the sweep's merge).
fn brusselator(dir: &Path, settle: &str) -> PathBuf {
    let scenario = format!(
        r#"(
    format: 2,
    title: "Brusselator plane",
    states: [
        (name: "x", start: 1.3, rate: "a - (b + 1)*x + x^2*y"),
        (name: "y", start: 2.0, rate: "b*x - x^2*y"),
    ],
    parameters: [
        (name: "a", value: 1.0, range: (0.5, 2.0)),
        (name: "b", value: 2.2, range: (0.5, 5.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 100.0),
    cut: Some((surface: Level("x - a"), direction: Rising, axes: ("x", "y"))),
    sweep: Some((parameter: "b", from: 1.5, to: 2.5, values: 7, settle: 200.0,
                 keep: 4, follow: false, source: Cut, coordinate: "y")),
    map: Some((x: (parameter: "a", from: 0.6, to: 1.4, values: 3),
               y: (parameter: "b", from: 0.5, to: 4.5, values: 3),
               settle: {settle}, span: 120.0, source: Cut)),
)"#
    );
    write(dir, "brusselator.ron", &scenario)
}

#[test]
fn the_map_csv_has_the_product_columns_by_rows_and_the_brusselator_halves() {
    let dir = TempDir::new().unwrap();
    let path = brusselator(dir.path(), "120.0");
    let output = run(&["map"], &[&path]);
    assert!(output.status.success(), "{}", text(&output.stderr));
    let csv = text(&output.stdout);
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines[0], "a,b,regime,returns,lyapunov");
    assert_eq!(lines.len(), 10);
    // rows by b, then a ([analytic] 3 values from 0.6 to 1.4 and from 0.5 to 4.5)
    let cells: Vec<(f64, f64, &str, &str)> = lines[1..]
        .iter()
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (f[0].parse().unwrap(), f[1].parse().unwrap(), f[2], f[3])
        })
        .collect();
    let order: Vec<(f64, f64)> = cells.iter().map(|c| (c.0, c.1)).collect();
    assert_eq!(
        order,
        [
            (0.6, 0.5),
            (1.0, 0.5),
            (1.4, 0.5),
            (0.6, 2.5),
            (1.0, 2.5),
            (1.4, 2.5),
            (0.6, 4.5),
            (1.0, 4.5),
            (1.4, 4.5)
        ]
    );
    for (a, b, regime, returns) in cells {
        let critical = 1.0 + a * a;
        if (b - critical).abs() < 0.5 {
            continue;
        }
        // REFERENCES case 23 [analytic]: resting below B = 1 + A^2, periodic with one return
        // to the cut x = A above
        if b < critical {
            assert_eq!((regime, returns), ("resting", ""), "a = {a}, b = {b}");
        } else {
            assert_eq!((regime, returns), ("periodic", "1"), "a = {a}, b = {b}");
        }
    }
    let summary = text(&output.stderr);
    assert!(summary.contains("9 cell(s) of a x b"), "{summary}");
}

/// Runs the map (or sweep) whole and in `n` shards; returns the whole file and the shards.
fn whole_and_shards(command: &str, path: &Path, dir: &Path, n: usize) -> (Vec<u8>, Vec<PathBuf>) {
    let whole = dir.join(format!("{command}.csv"));
    let output = run(&[command, "--out", whole.to_str().expect("utf8")], &[path]);
    assert!(output.status.success(), "{}", text(&output.stderr));
    let shards: Vec<PathBuf> = (0..n)
        .map(|i| {
            let out = dir.join(format!("{command}-{i}.csv"));
            let shard = format!("{i}/{n}");
            let output = run(
                &[
                    command,
                    "--shard",
                    &shard,
                    "--out",
                    out.to_str().expect("utf8"),
                ],
                &[path],
            );
            assert!(output.status.success(), "{}", text(&output.stderr));
            out
        })
        .collect();
    (fs::read(&whole).expect("whole file"), shards)
}

fn merge(path: &Path, shards: &[&PathBuf], out: &Path) -> Output {
    let mut command = lamina();
    command.arg("merge").arg(path);
    for s in shards {
        command.arg(s);
    }
    command.arg("--out").arg(out).output().expect("lamina runs")
}

#[test]
fn shards_merged_equal_the_whole_map_and_sweep_byte_for_byte() {
    let dir = TempDir::new().unwrap();
    let path = brusselator(dir.path(), "60.0");
    for (command, n) in [("map", 4), ("sweep", 3)] {
        let (whole, shards) = whole_and_shards(command, &path, dir.path(), n);
        let out = dir.path().join(format!("{command}-merged.csv"));
        // in any order on the command line
        let mut given: Vec<&PathBuf> = shards.iter().collect();
        given.reverse();
        let output = merge(&path, &given, &out);
        assert!(output.status.success(), "{}", text(&output.stderr));
        // [common practice] the cells and values are independent runs on bit-identical grid
        // values, so their rows are the same bytes whichever machine ran them
        assert_eq!(fs::read(&out).unwrap(), whole, "{command}");
    }
}

#[test]
fn a_missing_or_doubled_shard_is_named_and_nothing_is_written() {
    let dir = TempDir::new().unwrap();
    let path = brusselator(dir.path(), "60.0");
    let outputs = TempDir::new().unwrap();
    let kept = write(outputs.path(), "kept.csv", "good\n");
    for (command, n) in [("map", 3), ("sweep", 3)] {
        let (_, shards) = whole_and_shards(command, &path, dir.path(), n);
        let fresh = outputs.path().join("fresh.csv");
        let cases: [(Vec<&PathBuf>, &str); 3] = [
            (vec![&shards[0], &shards[2]], "in none of the shards"),
            (
                vec![&shards[0], &shards[1], &shards[1], &shards[2]],
                "given twice",
            ),
            (
                vec![&shards[0], &shards[1], &shards[2], &shards[0]],
                "given twice",
            ),
        ];
        for (given, message) in cases {
            for out in [&fresh, &kept] {
                let output = merge(&path, &given, out);
                let stderr = text(&output.stderr);
                assert!(!output.status.success(), "{command}: {stderr}");
                assert!(stderr.contains(message), "{command}: {stderr}");
                assert!(!stderr.contains("panicked"), "{stderr}");
            }
            // nothing written: no new file, the old one as it was, nothing beside it
            assert_eq!(listing(outputs.path()), ["kept.csv"], "{command}");
            assert_eq!(fs::read_to_string(&kept).unwrap(), "good\n");
        }
        // the missing cells or values are named
        let output = merge(&path, &[&shards[0], &shards[2]], &fresh);
        let stderr = text(&output.stderr);
        let named = if command == "map" {
            "a = 1, b = 0.5"
        } else {
            "b = 1.6666666666666"
        };
        assert!(stderr.contains(named), "{command}: {stderr}");
    }
    // a shard of another scenario's map is refused by its header
    let other = write(dir.path(), "other.csv", "p,q,regime,returns,lyapunov\n");
    let output = merge(&path, &[&other], &outputs.path().join("x.csv"));
    assert!(text(&output.stderr).contains("its header is 'p,q,regime,returns,lyapunov'"));
}

#[test]
fn shard_auto_reads_the_array_variables_and_says_when_they_are_missing() {
    let dir = TempDir::new().unwrap();
    let path = brusselator(dir.path(), "60.0");
    let by_hand = run(&["map", "--shard", "1/4"], &[&path]);
    let auto = lamina()
        .arg("map")
        .arg(&path)
        .args(["--shard", "auto"])
        .env("SLURM_ARRAY_TASK_ID", "1")
        .env("SLURM_ARRAY_TASK_COUNT", "4")
        .output()
        .unwrap();
    assert!(auto.status.success(), "{}", text(&auto.stderr));
    assert_eq!(auto.stdout, by_hand.stdout);
    let missing = lamina()
        .arg("sweep")
        .arg(&path)
        .args(["--shard", "auto"])
        .env_remove("SLURM_ARRAY_TASK_ID")
        .env_remove("SLURM_ARRAY_TASK_COUNT")
        .output()
        .unwrap();
    assert!(!missing.status.success());
    assert!(text(&missing.stderr).contains("SLURM_ARRAY_TASK_ID"));
}

#[test]
fn json_and_the_picture_name_regimes_in_words() {
    let dir = TempDir::new().unwrap();
    let path = brusselator(dir.path(), "60.0");
    let png = dir.path().join("map.png");
    let output = run(
        &[
            "map",
            "--json",
            "--png",
            png.to_str().unwrap(),
            "--shard",
            "0/3",
        ],
        &[&path],
    );
    assert!(output.status.success(), "{}", text(&output.stderr));
    let json: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    assert_eq!(json["x"]["parameter"], "a");
    let cells = json["cells"].as_array().unwrap();
    assert_eq!(cells.len(), 3);
    for cell in cells {
        let regime = cell["regime"].as_str().unwrap();
        assert!(
            [
                "resting",
                "periodic",
                "quasi_periodic",
                "chaotic",
                "escaped",
                "failed"
            ]
            .contains(&regime),
            "{cell}"
        );
    }
    // [common practice] a PNG file starts with its signature
    assert_eq!(&fs::read(&png).unwrap()[..4], b"\x89PNG");
    let rendered = dir.path().join("render.png");
    let output = run(
        &[
            "render",
            "--view",
            "map",
            "--png",
            rendered.to_str().unwrap(),
            "--size",
            "400x300",
        ],
        &[&path],
    );
    assert!(output.status.success(), "{}", text(&output.stderr));
    assert_eq!(&fs::read(&rendered).unwrap()[..4], b"\x89PNG");
}

#[test]
fn ctrl_c_stops_a_map_and_writes_nothing() {
    let dir = TempDir::new().unwrap();
    let path = brusselator(dir.path(), "1e9");
    let outputs = TempDir::new().unwrap();
    let out = write(outputs.path(), "out.csv", "good\n");
    let child = lamina()
        .arg("map")
        .arg(&path)
        .arg("--out")
        .arg(&out)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // wait until the handler is installed (SIGINT among the caught signals)
    let status = format!("/proc/{}/status", child.id());
    for _ in 0..24_000 {
        let caught = fs::read_to_string(&status)
            .ok()
            .and_then(|t| {
                let line = t.lines().find(|l| l.starts_with("SigCgt:"))?.to_owned();
                u64::from_str_radix(line.split_whitespace().nth(1)?, 16).ok()
            })
            .unwrap_or(0);
        if caught & 0b10 != 0 {
            break;
        }
        sleep(Duration::from_millis(10));
    }
    sleep(Duration::from_millis(300));
    let sent = Command::new("kill")
        .arg("-INT")
        .arg(child.id().to_string())
        .status()
        .unwrap();
    assert!(sent.success());
    let output = child.wait_with_output().unwrap();
    let stderr = text(&output.stderr);
    // [common practice] a program stopped by Ctrl-C exits with 128 + SIGINT
    assert_eq!(output.status.code(), Some(130), "{stderr}");
    assert!(stderr.contains("of 9 cell(s)") && stderr.contains("nothing was written to"));
    assert_eq!(fs::read_to_string(&out).unwrap(), "good\n");
    assert_eq!(listing(outputs.path()), ["out.csv"]);
}
