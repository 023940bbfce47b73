//! The model panel's sweep settings and copy buttons through the window (egui_kittest).

use egui_kittest::kittest::Queryable;

mod common;
use common::{app, harness, steps};

#[test]
fn choosing_another_swept_parameter_takes_its_slider_range() {
    let mut h = harness(app());
    steps(&mut h, 3);
    let sweep = h.state().scenario().sweep.clone().expect("the demo sweeps");
    assert_eq!(sweep.parameter, "a");
    // the demo opens with its notes shown: the sweep's settings are further down the panel
    h.get_by_label("Sweep (orbit diagram)").scroll_to_me();
    steps(&mut h, 5);
    h.get_by_label("Sweep (orbit diagram)").click();
    steps(&mut h, 3);
    h.get_by_role_and_label(egui::accesskit::Role::ComboBox, "parameter")
        .scroll_to_me();
    steps(&mut h, 3);
    h.get_by_role_and_label(egui::accesskit::Role::ComboBox, "parameter")
        .click();
    steps(&mut h, 3);
    // the option in the open list (the model panel also shows the name in its field)
    h.query_all_by_label("w")
        .last()
        .expect("the option w")
        .click();
    steps(&mut h, 3);
    let scenario = h.state().scenario();
    let sweep = scenario.sweep.as_ref().expect("still a sweep");
    assert_eq!(sweep.parameter, "w");
    let w = scenario
        .parameters
        .iter()
        .find(|p| p.name == "w")
        .expect("w");
    assert_eq!((sweep.from, sweep.to), w.range, "the slider's range of w");
}

#[test]
fn copy_gives_the_resting_points_as_tab_separated_text() {
    let mut h = harness(common::van_der_pol_app());
    steps(&mut h, 2);
    h.state_mut().show_analysis_panel(true);
    h.state_mut()
        .command(lamina_explorer::Command::FindRestingPoints);
    common::wait_until(&mut h, |a| !a.is_analysing());
    let copy = h
        .query_all_by_label("copy")
        .last()
        .expect("the resting points' copy button");
    copy.click();
    h.step();
    let copied: Vec<String> = h
        .output()
        .platform_output
        .commands
        .iter()
        .filter_map(|c| match c {
            egui::OutputCommand::CopyText(text) => Some(text.clone()),
            _ => None,
        })
        .collect();
    let text = copied.first().expect("copied text");
    let lines: Vec<Vec<&str>> = text.lines().map(|l| l.split('\t').collect()).collect();
    assert_eq!(
        lines[0],
        [
            "point",
            "stability",
            "x",
            "v",
            "eigenvalue 1 re",
            "eigenvalue 1 im",
            "eigenvalue 2 re",
            "eigenvalue 2 im"
        ]
    );
    assert_eq!(lines.len(), 2, "one resting point: {text}");
    // [analytic] van der Pol with mu = 1 rests only at the origin, eigenvalues
    // (1 +- i sqrt(3)) / 2
    assert_eq!(lines[1][0], "1");
    let value = |k: usize| lines[1][k].parse::<f64>().expect("a number");
    assert!(value(2).abs() < 1e-9 && value(3).abs() < 1e-9);
    assert!((value(4) - 0.5).abs() < 1e-9);
    assert!((value(5).abs() - 3f64.sqrt() / 2.0).abs() < 1e-9);
}

#[test]
fn the_path_field_suggests_a_whole_path_in_a_folder() {
    let mut h = harness(app());
    steps(&mut h, 2);
    h.state_mut().command(lamina_explorer::Command::SaveAs);
    steps(&mut h, 3);
    let text = h.get_by_label("path").value().expect("the field's text");
    let path = std::path::PathBuf::from(&text);
    // [common practice] a save dialog starts in a folder with a file name filled in
    assert!(path.is_absolute(), "{text}");
    assert_eq!(
        path.parent(),
        Some(std::env::current_dir().expect("cwd").as_path())
    );
    assert_eq!(
        path.file_name().and_then(|n| n.to_str()),
        Some("clocked_resonator.ron")
    );
}

#[test]
fn the_camera_and_3d_axes_are_saved_in_the_view_block_and_restored_on_open() {
    let dir = tempfile::tempdir().expect("tempdir");
    let file = dir.path().join("turned.ron");
    let mut window = app();
    window.set_camera(33.0, -12.5, 1.75);
    window.set_space_axes([1, 0, 2]);
    let mut h = harness(window);
    steps(&mut h, 2);
    h.state_mut().command(lamina_explorer::Command::SaveAs);
    steps(&mut h, 3);
    let path = h.get_by_label("path");
    path.focus();
    path.set_text_value_accesskit(&file.display().to_string());
    steps(&mut h, 2);
    h.get_by_label("OK").click();
    steps(&mut h, 3);
    let saved = lamina_scenario::load_file(&file).expect("saved file loads");
    let view = saved.view.expect("a view block");
    assert_eq!(
        view.axes,
        Some(("v".to_string(), "x".to_string(), "t".to_string()))
    );

    let options = lamina_explorer::Options {
        autostart: false,
        ..Default::default()
    };
    let reopened = lamina_explorer::ExplorerApp::new(Some(file), Default::default(), options);
    let (yaw, pitch, zoom) = reopened.camera();
    assert!(
        (yaw - 33.0).abs() < 1e-3 && (pitch + 12.5).abs() < 1e-3,
        "{yaw} {pitch}"
    );
    assert!((zoom - 1.75).abs() < 1e-6, "{zoom}");
    assert_eq!(reopened.space_axes(), [1, 0, 2]);
}

#[test]
fn the_time_unit_stands_beside_the_time_settings() {
    let mut window = app();
    window.edit_scenario(|s| s.time.unit = Some("ms".into()));
    let mut h = harness(window);
    steps(&mut h, 3);
    // start time, settle, span and the strobe's first sample, each followed by its unit
    assert!(
        h.query_all_by_label("ms").count() >= 4,
        "{}",
        h.query_all_by_label("ms").count()
    );
}

#[test]
fn a_demo_opens_with_its_notes_shown_and_a_file_without() {
    let mut h = harness(app());
    steps(&mut h, 3);
    let notes = h.state().scenario().notes.clone();
    assert!(!notes.is_empty());
    assert!(
        h.query_by_value(&notes).is_some(),
        "the built-in demo's notes are shown"
    );
    h.state_mut()
        .command(lamina_explorer::Command::LoadDemo("Relay loop"));
    steps(&mut h, 3);
    let notes = h.state().scenario().notes.clone();
    assert!(
        h.query_by_value(&notes).is_some(),
        "another demo's notes too"
    );
}

#[test]
fn the_lower_row_becomes_tabs_in_a_narrow_window() {
    let mut window = app();
    window.show_analysis_panel(true);
    let mut h = egui_kittest::Harness::builder()
        .with_size(egui::vec2(1100.0, 750.0))
        .with_max_steps(20)
        .build_ui_state(
            |ui, app: &mut lamina_explorer::ExplorerApp| app.show_ui(ui),
            window,
        );
    steps(&mut h, 3);
    // one of the three at a time: the log is a tab until chosen
    assert!(
        h.query_by_label_contains("opened the built-in demo")
            .is_none()
    );
    h.get_by_label("Messages").click();
    steps(&mut h, 3);
    h.get_by_label_contains("opened the built-in demo");
}
