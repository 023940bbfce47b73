//! The captions of pictures: a sweep's names the sweep's range, settle and keep, not the main
//! run's window or the swept parameter's current value.

#[test]
fn a_sweep_caption_names_the_sweeps_range_settle_and_keep() {
    let text = include_str!("../../../demo_scenarios/clocked_resonator.ron");
    let scenario = lamina_scenario::load_str(text).expect("the demo loads");
    let spec = scenario.sweep_spec().expect("the demo has a sweep");
    let name = &scenario.parameters[spec.parameter].name;
    let caption = scenario.sweep_caption(&spec);
    // [analytic] the caption is made from the sweep block's own numbers
    assert!(caption.contains(&format!("{name} from ")), "{caption}");
    assert!(
        caption.contains(&format!("({} values", spec.values)),
        "{caption}"
    );
    assert!(
        caption.contains(&format!("keep {} ", spec.keep)),
        "{caption}"
    );
    assert!(caption.contains("per value: settle "), "{caption}");
    // the swept parameter's current value is not a fixed parameter of the sweep
    let fixed = caption
        .split("   |   ")
        .nth(1)
        .expect("the fixed parameters");
    assert!(
        fixed
            .split(", ")
            .all(|p| !p.starts_with(&format!("{name} = "))),
        "{caption}"
    );
    // nor the main run's window
    assert!(!caption.contains("t from"), "{caption}");
}
