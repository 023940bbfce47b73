//! The views' own behaviour in the window: the time plot is a main view at 1280 x 800 and
//! exports its lines; the wheel zooms; a one-value cloud says it is one point; the first-return
//! map starts on a coordinate the cut leaves free; a drag of the cut's handle logs once.

mod common;

use std::time::Duration;

use common::{steps, van_der_pol_app, wait_until};
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use lamina_explorer::{Command, DragPhase, ExplorerApp, PointSet, RunState, ViewKind};

/// A harness of `w` x `h` around `app`.
fn sized(app: ExplorerApp, w: f32, h: f32) -> Harness<'static, ExplorerApp> {
    Harness::builder()
        .with_size(egui::vec2(w, h))
        .with_max_steps(20)
        .with_accessibility_check(false)
        .build_ui_state(|ui, app: &mut ExplorerApp| app.show_ui(ui), app)
}

/// Runs the window's scenario to its end.
fn run(h: &mut Harness<'static, ExplorerApp>) {
    h.state_mut().command(Command::Run);
    wait_until(h, |a| {
        !a.is_running() && *a.run_state() != RunState::Running
    });
}

/// Steps frames until the PNG export is written.
fn wait_for_png(h: &mut Harness<'static, ExplorerApp>) {
    for _ in 0..6000 {
        h.step();
        if !h.state().is_exporting_png() {
            return;
        }
        std::thread::sleep(Duration::from_millis(5));
    }
    panic!("the picture was not written");
}

#[test]
fn the_time_plot_is_a_main_view_at_1280_by_800() {
    let mut h = sized(van_der_pol_app(), 1280.0, 800.0);
    steps(&mut h, 3);
    let title = h.get_by_label("Time plot").rect();
    assert!(title.width() > 10.0);
    assert!(
        title.bottom() < 800.0 && title.right() < 1280.0,
        "{title:?}"
    );
    // it stays in the window with a run's results (its CSV button is there)
    run(&mut h);
    steps(&mut h, 2);
    let csv = h.get_by_label("CSV").rect();
    assert!(csv.bottom() < 800.0 && csv.right() < 1280.0, "{csv:?}");
}

#[test]
fn the_time_plot_exports_the_dense_lines_as_csv_and_png() {
    let dir = tempfile::TempDir::new().expect("temporary folder");
    let mut app = van_der_pol_app();
    app.set_png_size(640, 480);
    let mut h = sized(app, 1280.0, 800.0);
    steps(&mut h, 2);
    run(&mut h);
    let csv_path = dir.path().join("time_plot.csv");
    h.state_mut().export_csv(PointSet::TimeSeries, &csv_path);
    let text = std::fs::read_to_string(&csv_path).expect("the CSV is written");
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("t,x,v"));
    let rows: Vec<Vec<f64>> = lines
        .map(|l| l.split(',').map(|v| v.parse().expect("a number")).collect())
        .collect();
    // drawn from the dense output: more rows than the run has recorded steps
    assert!(
        rows.len() > h.state().n_recorded_steps(),
        "{} rows",
        rows.len()
    );
    assert!(rows.windows(2).all(|w| w[0][0] < w[1][0]), "time increases");
    // on the van der Pol limit cycle with mu = 1, x swings between about -2.01 and 2.01
    // (Strogatz, Nonlinear Dynamics and Chaos, sec. 7.5: amplitude close to 2)
    let most = rows.iter().map(|r| r[1].abs()).fold(0.0, f64::max);
    assert!((most - 2.0).abs() < 0.05, "{most}");
    let png_path = dir.path().join("time_plot.png");
    h.state_mut()
        .export_png(ViewKind::TimePlot, png_path.clone());
    wait_for_png(&mut h);
    let bytes = std::fs::read(&png_path).expect("the picture is written");
    // [common practice] PNG: signature, then IHDR with width and height
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    let width = u32::from_be_bytes([bytes[16], bytes[17], bytes[18], bytes[19]]);
    assert_eq!(width, 640);
}

#[test]
fn the_first_return_map_starts_on_a_coordinate_the_cut_leaves_free() {
    // a plane cut x = 0 fixes x at every cut point [analytic]: the map shows v instead
    let mut app = van_der_pol_app();
    app.edit_scenario(|s| {
        s.cut = Some(lamina_scenario::Cut {
            surface: lamina_scenario::Surface::Plane {
                normal: lamina_scenario::Weights(vec![("x".into(), 1.0)]),
                offset: 0.0,
            },
            direction: lamina_scenario::Direction::Falling,
            axes: ("x".into(), "v".into()),
        });
    });
    assert_eq!(app.first_return_coordinate(), "v");
    // the van der Pol cut v = 0 leaves x free: the map stays on x
    assert_eq!(van_der_pol_app().first_return_coordinate(), "x");
}

#[test]
fn a_strobe_view_of_one_value_says_one_point() {
    // x' = 0, v' = 0: every strobe sample is the start state [analytic]
    let mut app = van_der_pol_app();
    app.edit_scenario(|s| {
        s.states = vec![
            common::state("x", 0.8673, "0"),
            common::state("v", 1.25, "0"),
        ];
        s.cut = None;
        s.strobe = Some(lamina_scenario::Strobe {
            period: "1".into(),
            first_at: 0.0,
            axes: ("x".into(), "v".into()),
        });
        s.time.settle = 0.0;
        s.time.span = 20.0;
    });
    let mut h = sized(app, 1500.0, 950.0);
    steps(&mut h, 2);
    run(&mut h);
    steps(&mut h, 3);
    assert!(h.state().n_strobe_samples() > 10);
    h.get_by_label_contains("one point");
}

#[test]
fn the_mouse_wheel_zooms_the_3d_view() {
    let mut h = sized(van_der_pol_app(), 1500.0, 950.0);
    steps(&mut h, 2);
    run(&mut h);
    let before = h.state().space_zoom();
    // the middle of the 3D view, under its title
    let title = h.get_by_label("Trajectory (3D)").rect();
    let inside = egui::pos2(title.left() + 120.0, title.bottom() + 150.0);
    h.hover_at(inside);
    h.event(egui::Event::MouseWheel {
        unit: egui::MouseWheelUnit::Point,
        delta: egui::vec2(0.0, 120.0),
        modifiers: egui::Modifiers::NONE,
        phase: egui::TouchPhase::Move,
        source: egui::MouseWheelSource::Wheel,
    });
    steps(&mut h, 10);
    let after = h.state().space_zoom();
    // [common practice] scrolling up zooms in
    assert!(after > before * 1.05, "{before} -> {after}");
}

#[test]
fn a_drag_of_the_cut_logs_one_line() {
    let mut h = sized(van_der_pol_app(), 1500.0, 950.0);
    steps(&mut h, 2);
    run(&mut h);
    let resliced = |a: &ExplorerApp| a.messages().filter(|m| m.starts_with("re-sliced")).count();
    let before = resliced(h.state());
    for k in 1..=20 {
        h.state_mut().command(Command::MoveCut {
            offset: 0.01 * f64::from(k),
            drag: DragPhase::Continues,
        });
    }
    h.state_mut().command(Command::MoveCut {
        offset: 0.2,
        drag: DragPhase::Ends,
    });
    steps(&mut h, 2);
    assert_eq!(resliced(h.state()), before + 1);
}

/// Rows of a CSV file of numbers, after its header.
fn csv_rows(path: &std::path::Path) -> Vec<Vec<f64>> {
    let text = std::fs::read_to_string(path).expect("the CSV is written");
    text.lines()
        .skip(1)
        .map(|l| {
            l.split(',')
                .map(|v| v.parse().unwrap_or(f64::NAN))
                .collect()
        })
        .collect()
}

#[test]
fn the_buck_converters_cut_points_lie_on_the_drawn_path() {
    let dir = tempfile::TempDir::new().expect("temporary folder");
    let file = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../../demo_scenarios/clocked_buck_converter.ron");
    let options = lamina_explorer::Options {
        autostart: false,
        ..Default::default()
    };
    let app = ExplorerApp::new(Some(file), Default::default(), options);
    let mut h = sized(app, 1280.0, 800.0);
    steps(&mut h, 2);
    run(&mut h);
    let path_csv = dir.path().join("path.csv");
    let cut_csv = dir.path().join("cut.csv");
    h.state_mut().export_csv(PointSet::TimeSeries, &path_csv);
    h.state_mut().export_csv(PointSet::Cut, &cut_csv);
    let path = csv_rows(&path_csv); // t, il, vo
    let cut = csv_rows(&cut_csv); // k, t, return time, il, vo
    assert!(cut.len() >= 90, "{} cut points", cut.len());
    for p in &cut {
        let t = p[1];
        let i = path.partition_point(|r| r[0] < t);
        assert!(
            i > 0 && i < path.len(),
            "cut point at t = {t} inside the path"
        );
        let (a, b) = (&path[i - 1], &path[i]);
        let f = (t - a[0]) / (b[0] - a[0]);
        let il = a[1] + f * (b[1] - a[1]);
        let vo = a[2] + f * (b[2] - a[2]);
        // [analytic] a cut point is a point of the trajectory: the drawn line through it
        // passes within a small part of the ripple (about 1.3 A in il, 0.02 V in vo)
        assert!(
            (il - p[3]).abs() < 1e-3,
            "il {il} against {} at t = {t}",
            p[3]
        );
        assert!(
            (vo - p[4]).abs() < 1e-4,
            "vo {vo} against {} at t = {t}",
            p[4]
        );
    }
}
