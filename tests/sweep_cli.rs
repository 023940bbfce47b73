//! `lamina sweep` and `lamina render` end to end: CSV columns, shards, pictures of the
//! requested size for every view.

use std::path::{Path, PathBuf};

use assert_cmd::Command;

fn lamina() -> Command {
    Command::cargo_bin("lamina").expect("binary")
}

/// Brusselator x' = A - (B + 1) x + x^2 y, y' = B x - x^2 y (REFERENCES case 12), swept in B.
fn brusselator(dir: &Path, follow: bool) -> PathBuf {
    let text = format!(
        r#"(
    format: 2,
    title: "Brusselator sweep",
    states: [
        (name: "x", start: 1.3, rate: "a - (b + 1)*x + x^2*y"),
        (name: "y", start: 2.0, rate: "b*x - x^2*y"),
    ],
    parameters: [
        (name: "a", value: 1.0, range: (0.5, 2.0)),
        (name: "b", value: 2.2, range: (1.0, 3.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 200.0),
    cut: Some((surface: Plane(normal: {{"x": 1.0}}, offset: 1.0), direction: Rising, axes: ("x", "y"))),
    sweep: Some((parameter: "b", from: 1.5, to: 2.5, values: 11, settle: 600.0,
                 keep: 4, follow: {follow}, source: Cut, coordinate: "y")),
)"#
    );
    let path = dir.join(if follow { "follow.ron" } else { "restart.ron" });
    std::fs::write(&path, text).expect("write scenario");
    path
}

fn rows(text: &str) -> Vec<String> {
    text.lines().skip(1).map(str::to_string).collect()
}

#[test]
fn sweep_csv_has_the_product_columns_and_every_value() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = brusselator(dir.path(), false);
    let output = lamina()
        .args(["sweep"])
        .arg(&path)
        .assert()
        .success()
        .get_output()
        .clone();
    let text = String::from_utf8(output.stdout).expect("utf8");
    assert_eq!(text.lines().next(), Some("b,k,x,y"));
    // the change list: the first value's repeat, then each change in one wording, the values
    // in shortest round-trip form ([analytic] 11 values from 1.5 to 2.5 are 1.5, 1.6, ...)
    let changes = String::from_utf8(output.stderr).expect("utf8");
    let mut lines = changes
        .lines()
        .filter(|l| l.starts_with("b = ") || l.contains(" between b = "));
    let first = lines.next().expect("the first value's line");
    assert!(first.starts_with("b = 1.5: "), "{changes}");
    for line in lines {
        let (words, values) = line.split_once(" between b = ").expect("a change line");
        assert!(words.contains(" to "), "{line}");
        for part in [words.split(" to ").next(), words.split(" to ").nth(1)] {
            let part = part.expect("two sides");
            assert!(
                part.ends_with("-return orbit")
                    || [
                        "no repeat within 12 returns",
                        "not settled",
                        "too few points"
                    ]
                    .contains(&part),
                "{line}"
            );
        }
        let (below, above) = values.split_once(" and ").expect("two values");
        for value in [below, above] {
            assert!(value.len() <= 3, "not the shortest form: {line}");
        }
    }
    let values: std::collections::BTreeSet<String> = rows(&text)
        .iter()
        .map(|r| r.split(',').next().unwrap_or("").to_string())
        .collect();
    // [analytic] REFERENCES case 12: below B = 2 the orbit settles on the equilibrium, which does
    // not cross a cut through it, so those values may keep no points; every value from 2 on does
    for b in ["2.1", "2.2", "2.3", "2.4", "2.5"] {
        assert!(values.contains(b), "{b} missing from {values:?}");
    }
    for row in rows(&text) {
        let fields: Vec<&str> = row.split(',').collect();
        let b: f64 = fields[0].parse().expect("number");
        let y: f64 = fields[3].parse().expect("number");
        if b < 1.95 {
            // whatever is kept below the onset sits on the equilibrium y = B / A
            assert!((y - b).abs() < 1e-3, "b = {b}, y = {y}");
        }
        if b > 2.05 {
            // [analytic] REFERENCES case 12: above B = 2 a cycle crosses x = 1 away from y = B
            assert!((y - b).abs() > 0.05, "b = {b}, y = {y}");
        }
    }
}

#[test]
fn shards_together_equal_the_whole_sweep_exactly() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = brusselator(dir.path(), false);
    let whole = String::from_utf8(
        lamina()
            .arg("sweep")
            .arg(&path)
            .assert()
            .success()
            .get_output()
            .stdout
            .clone(),
    )
    .expect("utf8");
    let mut joined = Vec::new();
    for shard in ["0/3", "1/3", "2/3"] {
        let out = dir.path().join(format!("shard{}.csv", &shard[..1]));
        lamina()
            .arg("sweep")
            .arg(&path)
            .args(["--shard", shard, "--out"])
            .arg(&out)
            .assert()
            .success();
        let text = std::fs::read_to_string(&out).expect("shard file");
        assert_eq!(text.lines().next(), Some("b,k,x,y"));
        joined.extend(rows(&text));
    }
    // the rows of the shards together are the rows of the whole sweep (`lamina merge`
    // puts them in order: see map_cli.rs)
    joined.sort();
    let mut expected = rows(&whole);
    expected.sort();
    assert_eq!(joined, expected);
}

#[test]
fn a_following_sweep_cannot_be_sharded() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = brusselator(dir.path(), true);
    lamina()
        .arg("sweep")
        .arg(&path)
        .args(["--shard", "0/2"])
        .assert()
        .failure()
        .stderr(predicates::str::contains("cannot be sharded"));
    lamina()
        .arg("sweep")
        .arg(&path)
        .args(["--shard", "3/2"])
        .assert()
        .failure();
}

/// Width and height from a PNG's IHDR chunk.
fn png_size(path: &Path) -> (u32, u32) {
    let bytes = std::fs::read(path).expect("png");
    assert_eq!(&bytes[1..4], b"PNG");
    let w = u32::from_be_bytes([bytes[16], bytes[17], bytes[18], bytes[19]]);
    let h = u32::from_be_bytes([bytes[20], bytes[21], bytes[22], bytes[23]]);
    (w, h)
}

#[test]
fn render_writes_every_view_at_the_requested_size() {
    let dir = tempfile::tempdir().expect("tempdir");
    let demo = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/demo_scenarios/clocked_resonator.ron"
    ))
    .expect("demo");
    // a shorter window and a coarser sweep, so the test stays quick in a debug build
    let quick = demo
        .replace("span: 20000.0", "span: 600.0")
        .replace("values: 301", "values: 13")
        .replace("settle: 300.0", "settle: 100.0");
    let path = dir.path().join("quick.ron");
    std::fs::write(&path, quick).expect("write");
    for (view, size) in [
        ("trajectory", (640, 480)),
        ("cut", (800, 500)),
        ("strobe", (500, 500)),
        ("sweep", (900, 400)),
    ] {
        let png = dir.path().join(format!("{view}.png"));
        lamina()
            .arg("render")
            .arg(&path)
            .args(["--view", view, "--png"])
            .arg(&png)
            .args(["--size", &format!("{}x{}", size.0, size.1)])
            .assert()
            .success();
        assert_eq!(png_size(&png), size, "{view}");
    }
    lamina()
        .arg("render")
        .arg(&path)
        .args(["--view", "cut", "--png"])
        .arg(dir.path().join("x.png"))
        .args(["--size", "10x10"])
        .assert()
        .failure();
}

#[test]
fn sweep_png_is_written_beside_the_csv() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = brusselator(dir.path(), true);
    let png = dir.path().join("diagram.png");
    let csv = dir.path().join("diagram.csv");
    lamina()
        .arg("sweep")
        .arg(&path)
        .arg("--out")
        .arg(&csv)
        .arg("--png")
        .arg(&png)
        .assert()
        .success();
    assert_eq!(png_size(&png), (1200, 900));
    assert!(
        std::fs::read_to_string(&csv)
            .expect("csv")
            .starts_with("b,k,x,y\n")
    );
}

#[test]
fn the_listed_behaviour_follows_the_one_recurrence_detector() {
    // Brusselator (REFERENCES case 12) sampled once per time unit, B = 1.7, 1.9, 2.1, 2.3
    let text = r#"(
    format: 2,
    title: "Brusselator strobed",
    states: [
        (name: "x", start: 1.3, rate: "a - (b + 1)*x + x^2*y"),
        (name: "y", start: 2.0, rate: "b*x - x^2*y"),
    ],
    parameters: [
        (name: "a", value: 1.0, range: (0.5, 2.0)),
        (name: "b", value: 2.2, range: (1.0, 3.0)),
    ],
    integrator: (method: Automatic, rtol: 1e-9, atol: 1e-12),
    time: (start: 0.0, settle: 0.0, span: 100.0),
    strobe: Some((period: "1", first_at: 0.0, axes: ("x", "y"))),
    sweep: Some((parameter: "b", from: 1.7, to: 2.3, values: 4, settle: 600.0,
                 keep: 32, follow: false, source: Strobe, coordinate: "y")),
)"#;
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("strobed.ron");
    std::fs::write(&path, text).expect("write");
    let png = dir.path().join("diagram.png");
    let output = lamina()
        .arg("sweep")
        .arg(&path)
        .arg("--png")
        .arg(&png)
        .assert()
        .success()
        .get_output()
        .clone();
    let err = String::from_utf8(output.stderr).expect("utf8");
    // [analytic] REFERENCES case 12: below B = 2 every sample sits on the equilibrium (a
    // 1-return orbit); above it the samples go round the cycle without closing (no repeat)
    assert!(err.contains("b = 1.7: 1-return orbit\n"), "{err}");
    let changes: Vec<&str> = err
        .lines()
        .filter(|l| l.contains(" between b = "))
        .collect();
    assert_eq!(
        changes,
        ["1-return orbit to no repeat within 12 returns between b = 1.9 and 2.1"],
        "{err}"
    );
    assert_eq!(png_size(&png), (1200, 900));
}
