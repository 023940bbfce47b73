//! "Run on" through the window (egui_kittest): off with its reason while the model cannot
//! run, and the status line's run time agreeing with the log's after a Run on.

use egui_kittest::kittest::{NodeT, Queryable};
use lamina_explorer::{Command, RunState};

mod common;
use common::{harness, steps, van_der_pol_app, wait_until};

#[test]
fn run_on_is_off_while_the_model_is_invalid() {
    let mut h = harness(van_der_pol_app());
    steps(&mut h, 2);
    assert!(
        h.get_by_label("Run on").accesskit_node().is_disabled(),
        "no run yet"
    );
    h.state_mut().command(Command::Run);
    wait_until(&mut h, |a| !a.is_running());
    assert_eq!(*h.state().run_state(), RunState::Finished);
    assert!(
        !h.get_by_label("Run on").accesskit_node().is_disabled(),
        "a finished run"
    );

    h.state_mut()
        .edit_scenario(|s| s.states[1].rate = "mu*(1 - x^2".into());
    steps(&mut h, 2);
    assert!(
        h.get_by_label("Run on").accesskit_node().is_disabled(),
        "an invalid model"
    );
    // F6 does nothing either, and says why
    let runs = h.state().n_runs_started();
    h.key_press(egui::Key::F6);
    steps(&mut h, 2);
    assert_eq!(h.state().n_runs_started(), runs);
    assert!(
        h.state()
            .messages()
            .any(|m| m.starts_with("cannot run on:")),
        "the log says why"
    );

    // fixed again (undo): Run on waits for a new Run, as the run no longer matches
    h.state_mut().command(Command::Undo);
    steps(&mut h, 2);
    assert!(
        h.get_by_label("Run on").accesskit_node().is_disabled(),
        "a stale run"
    );
}

#[test]
fn after_run_on_the_log_and_status_line_give_the_same_total_time() {
    let mut h = harness(van_der_pol_app());
    steps(&mut h, 2);
    h.state_mut().command(Command::Run);
    wait_until(&mut h, |a| !a.is_running());
    h.state_mut().command(Command::RunOn);
    steps(&mut h, 1);
    wait_until(&mut h, |a| !a.is_running());
    let last = h
        .state()
        .messages()
        .filter(|m| m.starts_with("run finished"))
        .last()
        .expect("the run on's line")
        .to_string();
    let in_all = last
        .split(" (")
        .nth(1)
        .and_then(|rest| rest.split(" s in all").next())
        .expect("the whole run's time in the log")
        .to_string();
    // the log line and the status line
    let shown = format!("({in_all} s in all, 2 parts)");
    assert_eq!(h.query_all_by_label_contains(&shown).count(), 2, "{shown}");
}
