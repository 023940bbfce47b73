//! The explorer driven headless through egui_kittest: editing, running, cutting, saving.

use std::time::Duration;

use egui::accesskit::Role;
use egui_kittest::Harness;
use egui_kittest::kittest::{NodeT, Queryable};
use lamina_explorer::{ExplorerApp, Options, RunState};

/// A window on the built-in demo with a short time window, not started.
fn app() -> ExplorerApp {
    let options = Options {
        autostart: false,
        ..Options::default()
    };
    let mut app = ExplorerApp::new(None, Default::default(), options);
    app.edit_scenario(|s| {
        s.time.settle = 50.0;
        s.time.span = 400.0;
    });
    app
}

fn harness(app: ExplorerApp) -> Harness<'static, ExplorerApp> {
    Harness::builder()
        .with_size(egui::vec2(1500.0, 950.0))
        .with_max_steps(20)
        .build_ui_state(|ui, app: &mut ExplorerApp| app.show_ui(ui), app)
}

/// Steps frames until the run is no longer going (at most a minute).
fn wait_for_run(h: &mut Harness<'static, ExplorerApp>) {
    for _ in 0..12_000 {
        h.step();
        if !h.state().is_running() && *h.state().run_state() != RunState::Running {
            h.step();
            return;
        }
        std::thread::sleep(Duration::from_millis(5));
    }
    panic!("the run did not finish");
}

/// A few frames: windows and modals appear one frame after they are asked for.
fn steps(h: &mut Harness<'static, ExplorerApp>, n: usize) {
    for _ in 0..n {
        h.step();
    }
}

/// The Run button beside the menus (the menu of that name comes first).
fn run_button<'h>(h: &'h Harness<'static, ExplorerApp>) -> egui_kittest::Node<'h> {
    h.get_all_by_label("Run").last().expect("the Run button")
}

fn click_run(h: &mut Harness<'static, ExplorerApp>) {
    run_button(h).click();
    h.step();
    h.step();
}

#[test]
fn running_the_demo_produces_cut_points_and_strobe_samples() {
    let mut h = harness(app());
    h.step();
    click_run(&mut h);
    wait_for_run(&mut h);
    assert_eq!(*h.state().run_state(), RunState::Finished);
    assert!(
        h.state().n_cut_points() > 10,
        "{}",
        h.state().n_cut_points()
    );
    // [analytic] one strobe sample per drive period 2 pi / w over the 400-unit window
    let period = 2.0 * std::f64::consts::PI / 1.1;
    let expected = (400.0 / period).floor() as usize;
    let n = h.state().n_strobe_samples();
    assert!(n == expected || n == expected + 1, "{n} vs {expected}");
    // the status line counts them
    h.get_by_label(&format!("{} cut points", h.state().n_cut_points()));
}

#[test]
fn a_bad_rate_shows_its_message_and_turns_run_off() {
    let mut h = harness(app());
    h.step();
    let rate = h.get_by_label("dv/dt =");
    rate.focus();
    rate.type_text(" + q9");
    h.step();
    h.step();
    assert!(h.state().document().first_error().is_some());
    // shown in place under the field (and repeated beside the switched-off Run button)
    assert!(h.get_all_by_label_contains("unknown name 'q9'").count() >= 1);
    let run = run_button(&h);
    assert!(
        run.accesskit_node().is_disabled(),
        "Run must be off while a rate is wrong"
    );
    h.get_by_label_contains("Run is off");
}

#[test]
fn switching_direction_to_both_doubles_the_count_without_a_new_run() {
    let mut h = harness(app());
    h.state_mut().edit_scenario(|s| {
        // a single stable cycle: every rising crossing is followed by a falling one
        s.parameters
            .iter_mut()
            .find(|p| p.name == "a")
            .expect("a")
            .value = 0.2;
        if let Some(cut) = &mut s.cut {
            cut.direction = lamina_scenario::Direction::Rising;
        }
    });
    h.step();
    click_run(&mut h);
    wait_for_run(&mut h);
    let rising = h.state().n_cut_points();
    let runs = h.state().n_runs_started();
    assert!(rising > 10);
    // the demo opens with its notes shown: the cut's settings are further down the panel
    h.get_by_label("both").scroll_to_me();
    steps(&mut h, 5);
    h.get_by_label("both").click();
    h.step();
    h.step();
    let both = h.state().n_cut_points();
    // [analytic] on a closed orbit rising and falling crossings alternate: both = 2 x rising (+-1)
    assert!(
        both.abs_diff(2 * rising) <= 1,
        "rising {rising}, both {both}"
    );
    assert_eq!(
        h.state().n_runs_started(),
        runs,
        "re-sliced from the stored run, not run again"
    );
}

#[test]
fn moving_the_cut_offset_re_slices_without_a_new_run() {
    let mut h = harness(app());
    h.step();
    click_run(&mut h);
    wait_for_run(&mut h);
    let before: Vec<f64> = h.state().cut_times().to_vec();
    let runs = h.state().n_runs_started();
    h.get_by_label("= offset").set_value_accesskit(0.3);
    h.step();
    h.step();
    let after: Vec<f64> = h.state().cut_times().to_vec();
    assert_eq!(h.state().n_runs_started(), runs, "no new run");
    assert!(!after.is_empty());
    assert_ne!(before, after, "the cut points moved with the plane");
    if let Some(lamina_scenario::Cut {
        surface: lamina_scenario::Surface::Plane { offset, .. },
        ..
    }) = &h.state().scenario().cut
    {
        assert_eq!(*offset, 0.3);
    }
}

#[test]
fn a_parameter_slider_change_runs_the_model_again() {
    let mut h = harness(app());
    h.step();
    click_run(&mut h);
    wait_for_run(&mut h);
    let runs = h.state().n_runs_started();
    let sliders = h.get_all_by_role(Role::Slider).collect::<Vec<_>>();
    assert!(!sliders.is_empty());
    sliders[0].set_value_accesskit(0.2);
    drop(sliders);
    // the re-run waits for the slider to rest
    for _ in 0..200 {
        h.step();
        std::thread::sleep(Duration::from_millis(5));
        if h.state().n_runs_started() > runs {
            break;
        }
    }
    assert_eq!(h.state().n_runs_started(), runs + 1);
    wait_for_run(&mut h);
    assert_eq!(*h.state().run_state(), RunState::Finished);
}

#[test]
fn opening_a_demo_file_and_saving_it_gives_the_same_scenario() {
    let dir = tempfile::tempdir().expect("tempdir");
    let source = dir.path().join("relay.ron");
    std::fs::copy(
        concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../../demo_scenarios/relay_loop.ron"
        ),
        &source,
    )
    .expect("copy");
    let mut h = harness(app());
    steps(&mut h, 3);
    h.get_by_label("File").click();
    steps(&mut h, 3);
    h.get_by_label("Open…").click_accesskit();
    steps(&mut h, 3);
    // the edit made above (the short window) is unsaved: the window asks first
    h.get_by_label("Discard changes").click();
    steps(&mut h, 3);
    // the field suggests a folder: replace it
    let path = h.get_by_label("path");
    path.focus();
    path.set_text_value_accesskit(&source.display().to_string());
    steps(&mut h, 3);
    h.get_by_label("OK").click();
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().title, "Relay loop");
    let saved = dir.path().join("relay_saved.ron");
    h.get_by_label("File").click();
    steps(&mut h, 3);
    h.get_by_label("Save as…").click_accesskit();
    steps(&mut h, 3);
    // the field suggests the current file: replace it
    let path = h.get_by_label("path");
    path.focus();
    path.set_text_value_accesskit(&saved.display().to_string());
    steps(&mut h, 3);
    h.get_by_label("OK").click();
    steps(&mut h, 3);
    let original = lamina_scenario::load_file(&source).expect("original loads");
    let written = lamina_scenario::load_file(&saved).expect("saved file loads");
    assert_eq!(original, written);
    assert!(!h.state().document().is_dirty());
}

#[test]
fn the_sweep_fills_the_orbit_diagram() {
    let mut app = app();
    app.edit_scenario(|s| {
        if let Some(sweep) = &mut s.sweep {
            sweep.values = 7;
            sweep.keep = 8;
            sweep.settle = 60.0;
            sweep.follow = false;
        }
    });
    let mut h = harness(app);
    steps(&mut h, 2);
    h.get_by_label("Run sweep").click();
    for _ in 0..12_000 {
        h.step();
        if !h.state().is_sweeping() && h.state().n_sweep_values() > 0 {
            break;
        }
        std::thread::sleep(Duration::from_millis(5));
    }
    steps(&mut h, 2);
    assert_eq!(h.state().n_sweep_values(), 7, "values = 7 gives 7 values");
    h.get_by_label("7 values");
    assert!(
        h.state().n_runs_started() <= 1,
        "a sweep does not start single runs"
    );
}

/// The window with a scenario replaced by the given states and parameters, a cut, no strobe.
fn model_app(
    states: &[(&str, f64, &str)],
    parameters: &[(&str, f64)],
    cut_state: &str,
    span: f64,
) -> ExplorerApp {
    let mut app = app();
    app.edit_scenario(|s| {
        s.states = states
            .iter()
            .map(|(n, start, rate)| lamina_scenario::State {
                name: n.to_string(),
                start: *start,
                rate: rate.to_string(),
                unit: None,
            })
            .collect();
        s.parameters = parameters
            .iter()
            .map(|(n, v)| lamina_scenario::Parameter {
                name: n.to_string(),
                value: *v,
                range: (v - 1.0, v + 1.0),
                unit: None,
            })
            .collect();
        s.cut = Some(lamina_scenario::Cut {
            surface: lamina_scenario::Surface::Plane {
                normal: lamina_scenario::Weights(vec![(cut_state.to_string(), 1.0)]),
                offset: 0.0,
            },
            direction: lamina_scenario::Direction::Falling,
            axes: (states[0].0.to_string(), states[1].0.to_string()),
        });
        s.strobe = None;
        s.sweep = None;
        s.map = None;
        s.view = None;
        s.integrator.rtol = 1e-10;
        s.integrator.atol = 1e-12;
        s.time.settle = 60.0;
        s.time.span = span;
    });
    app
}

fn wait_for_analysis(h: &mut Harness<'static, ExplorerApp>) {
    for _ in 0..24_000 {
        h.step();
        if !h.state().is_analysing() {
            steps(h, 2);
            return;
        }
        std::thread::sleep(Duration::from_millis(5));
    }
    panic!("the analysis did not finish");
}

#[test]
#[allow(clippy::excessive_precision)] // the published digits, kept as printed
fn the_orbit_panel_finds_the_van_der_pol_cycle() {
    let mut h = harness(model_app(
        &[("x", 2.0, "v"), ("v", 0.0, "mu*(1 - x^2)*v - x")],
        &[("mu", 1.0)],
        "v",
        60.0,
    ));
    steps(&mut h, 2);
    click_run(&mut h);
    wait_for_run(&mut h);
    h.get_by_label("Analysis").click();
    steps(&mut h, 3);
    h.get_by_label("Find periodic orbit").click();
    steps(&mut h, 2);
    wait_for_analysis(&mut h);
    let (period, k, verdict) = h.state().orbit_summary().expect("an orbit");
    // Hairer, Norsett & Wanner, Solving ODEs I, sec. I.16, ex. 1 (REFERENCES case 8)
    assert!(
        (period - 6.6632868593231301897).abs() < 1e-7,
        "period {period}"
    );
    assert_eq!(k, 1);
    assert_eq!(verdict, "stable");
    h.get_by_label_contains("verdict: stable");
}

#[test]
fn the_exponents_panel_gives_the_spectrum_of_a_linear_spiral() {
    // x' = -x + 2y, y' = -2x - y: A = [[-1, 2], [-2, -1]]
    let mut h = harness(model_app(
        &[("x", 1.0, "-x + 2*y"), ("y", 0.0, "-2*x - y")],
        &[("k", 1.0)],
        "y",
        300.0,
    ));
    steps(&mut h, 2);
    h.get_by_label("Analysis").click();
    steps(&mut h, 3);
    h.get_by_label("Compute exponents").click();
    steps(&mut h, 2);
    wait_for_analysis(&mut h);
    let exponents = h.state().exponents().expect("a spectrum");
    assert_eq!(exponents.len(), 2);
    for l in exponents {
        // [analytic] REFERENCES case 6: both exponents equal the real part -1
        assert!((l + 1.0).abs() < 1e-2, "exponent {l}");
    }
    h.get_by_label_contains("verdict:");
}

/// Where the title of main view `title` is.
fn title_rect(h: &Harness<'static, ExplorerApp>, title: &str) -> egui::Rect {
    h.get_by_label(title).rect()
}

#[test]
fn four_views_too_narrow_for_one_row_go_into_two() {
    // the demo has a sweep, so it shows four main views; with the analysis panel open, a
    // window 1300 wide leaves each under the narrowest width that stays readable in one row
    let mut app = app();
    app.show_analysis_panel(true);
    let mut h = Harness::builder()
        .with_size(egui::vec2(1300.0, 900.0))
        .with_max_steps(20)
        .build_ui_state(|ui, app: &mut ExplorerApp| app.show_ui(ui), app);
    steps(&mut h, 3);
    // five with the time plot: the 3D view and the time plot above, the 2D views below
    let trajectory = title_rect(&h, "Trajectory (3D)");
    let time_plot = title_rect(&h, "Time plot");
    let cut = title_rect(&h, "Cut points");
    let strobe = title_rect(&h, "Strobe samples");
    let orbit = title_rect(&h, "Orbit diagram");
    assert!(
        (trajectory.top() - time_plot.top()).abs() < 1.0,
        "first row"
    );
    assert!((cut.top() - strobe.top()).abs() < 1.0, "second row");
    assert!((strobe.top() - orbit.top()).abs() < 1.0, "second row");
    assert!(strobe.top() > trajectory.bottom() + 100.0, "rows stacked");
    // wide enough: one row of four
    h.set_size(egui::vec2(2600.0, 900.0));
    steps(&mut h, 3);
    let trajectory = title_rect(&h, "Trajectory (3D)");
    let orbit = title_rect(&h, "Orbit diagram");
    assert!((trajectory.top() - orbit.top()).abs() < 1.0, "one row");
    // too narrow for two side by side: one view at a time, chosen by tabs
    h.set_size(egui::vec2(1050.0, 750.0));
    steps(&mut h, 3);
    assert_eq!(
        h.query_all_by_label("Cut points").count(),
        1,
        "the cut view is a tab only"
    );
    h.get_by_label("Cut points").click();
    steps(&mut h, 3);
    assert_eq!(
        h.query_all_by_label("Cut points").count(),
        2,
        "its tab and its title"
    );
    assert_eq!(h.query_all_by_label("Trajectory (3D)").count(), 1);
}

#[test]
fn a_view_exported_as_png_is_drawn_at_the_chosen_size() {
    let dir = tempfile::TempDir::new().expect("temporary folder");
    let mut app = app();
    app.set_png_size(640, 480);
    let mut h = harness(app);
    steps(&mut h, 2);
    click_run(&mut h);
    wait_for_run(&mut h);
    for (view, name) in [
        (lamina_explorer::ViewKind::Cut, "cut.png"),
        (lamina_explorer::ViewKind::Strobe, "strobe.png"),
        (lamina_explorer::ViewKind::Trajectory, "trajectory.png"),
        (lamina_explorer::ViewKind::ReturnMap, "map.png"),
    ] {
        let path = dir.path().join(name);
        h.state_mut().export_png(view, path.clone());
        for _ in 0..6000 {
            h.step();
            if !h.state().is_exporting_png() {
                break;
            }
            std::thread::sleep(Duration::from_millis(5));
        }
        let bytes = std::fs::read(&path).expect("the picture is written");
        // [common practice] PNG: 8-byte signature, then IHDR with width and height (big-endian)
        assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n", "{name}");
        let width = u32::from_be_bytes([bytes[16], bytes[17], bytes[18], bytes[19]]);
        let height = u32::from_be_bytes([bytes[20], bytes[21], bytes[22], bytes[23]]);
        assert_eq!((width, height), (640, 480), "{name}");
    }
    // no temporary files are left beside them
    let mut names: Vec<String> = std::fs::read_dir(dir.path())
        .expect("listing")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(
        names,
        ["cut.png", "map.png", "strobe.png", "trajectory.png"]
    );
}

#[test]
fn run_on_integrates_another_span_from_the_menu_and_with_f6() {
    let mut h = harness(app());
    steps(&mut h, 2);
    click_run(&mut h);
    wait_for_run(&mut h);
    let last = |h: &Harness<'static, ExplorerApp>| {
        h.state()
            .cut_times()
            .iter()
            .copied()
            .fold(f64::NEG_INFINITY, f64::max)
    };
    // [analytic] the run records t from settle 50 to 50 + span 400
    let first_end = last(&h);
    assert!(first_end <= 450.0, "{first_end}");
    let n_first = h.state().n_cut_points();
    // the Run menu (the button of that name comes after it)
    h.get_all_by_label("Run")
        .next()
        .expect("the Run menu")
        .click();
    steps(&mut h, 3);
    h.get_by_label("Run on   F6").click();
    wait_for_run(&mut h);
    let second_end = last(&h);
    assert!(second_end > 450.0 && second_end <= 850.0, "{second_end}");
    assert!(h.state().n_cut_points() > n_first);
    h.key_press(egui::Key::F6);
    steps(&mut h, 2);
    wait_for_run(&mut h);
    let third_end = last(&h);
    assert!(third_end > 850.0 && third_end <= 1250.0, "{third_end}");
    // the keys are listed in F1
    h.key_press(egui::Key::F1);
    steps(&mut h, 3);
    h.get_by_label("F6");
    h.get_by_label_contains("Run on: integrate another span");
}

#[test]
fn a_format1_file_opens_says_so_and_saves_as_format2() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("old.ron");
    std::fs::copy(
        concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../lamina-scenario/tests/fixtures/format1/clocked_mems_beam.ron"
        ),
        &path,
    )
    .expect("copy");
    let options = Options {
        autostart: false,
        ..Options::default()
    };
    let app = ExplorerApp::new(Some(path.clone()), Default::default(), options);
    let mut h = harness(app);
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().format_read(), Some(1));
    h.get_by_label_contains("read format 1 (its old words are mapped to format 2's)");
    let opened = h.state().scenario().clone();
    h.get_by_label("File").click();
    steps(&mut h, 3);
    h.get_by_label("Save").click_accesskit();
    steps(&mut h, 3);
    let text = std::fs::read_to_string(&path).expect("saved");
    assert!(text.starts_with("(\n    format: 2,\n"), "{text}");
    assert_eq!(lamina_scenario::load_str(&text).expect("loads"), opened);
}
