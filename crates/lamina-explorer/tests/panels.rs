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
