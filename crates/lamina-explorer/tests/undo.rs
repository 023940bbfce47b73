//! Undo and redo through the window (egui_kittest): every kind of change to the document
//! can be taken back and done again, a drag of the cut is one step, the Edit menu names the
//! change, Remove sits in a row's menu, and opening another document clears the history.

use egui_kittest::kittest::Queryable;
use lamina_explorer::{Command, DragPhase, ExplorerApp};
use lamina_scenario::Scenario;

mod common;
use common::{app, harness, parameter, state, steps};

/// Makes `edit` as the model panel would, then checks that Undo brings back the scenario
/// before it, Redo the one after it, and that the Edit menu's name for it starts with
/// `named`.
fn undo_and_redo(app: &mut ExplorerApp, named: &str, edit: impl FnOnce(&mut Scenario)) {
    let before = app.scenario().clone();
    app.edit_scenario(edit);
    let after = app.scenario().clone();
    assert_ne!(before, after, "the edit changed something");
    let label = app.undo_label().expect("a step to undo").to_string();
    assert!(label.starts_with(named), "{label:?} names the change");
    app.command(Command::Undo);
    assert_eq!(*app.scenario(), before, "undo of {label}");
    assert_eq!(app.redo_label(), Some(label.as_str()));
    app.command(Command::Redo);
    assert_eq!(*app.scenario(), after, "redo of {label}");
    // a step of its own for the next edit
    app.command(Command::Stop);
}

#[test]
fn every_kind_of_change_can_be_undone_and_redone() {
    let mut app = app();
    undo_and_redo(&mut app, "edit d", |s| s.states[0].rate.push_str(" + 0"));
    undo_and_redo(&mut app, "start of", |s| s.states[1].start = 0.25);
    undo_and_redo(&mut app, "add state s9", |s| {
        s.states.push(state("s9", 0.0, "0"))
    });
    undo_and_redo(&mut app, "remove state s9", |s| {
        s.states.pop();
    });
    let first = app.scenario().parameters[0].name.clone();
    undo_and_redo(&mut app, &format!("{first} = "), |s| {
        s.parameters[0].value *= 1.5
    });
    undo_and_redo(&mut app, "add parameter q7", |s| {
        s.parameters.push(parameter("q7", 1.0, (0.0, 2.0)))
    });
    undo_and_redo(&mut app, &format!("remove parameter {first}"), |s| {
        s.parameters.remove(0);
    });
    undo_and_redo(&mut app, "change the strobe", |s| {
        s.strobe.as_mut().expect("the demo has a strobe").first_at = 0.5
    });
    undo_and_redo(&mut app, "remove the strobe", |s| s.strobe = None);
    undo_and_redo(&mut app, "change the sweep", |s| {
        s.sweep.as_mut().expect("the demo has a sweep").values = 17
    });
    undo_and_redo(&mut app, "change the regime map", |s| {
        s.map.as_mut().expect("the demo has a map").x.from += 0.01
    });
    undo_and_redo(&mut app, "remove the regime map", |s| s.map = None);
    undo_and_redo(&mut app, "integrator settings", |s| {
        s.integrator.rtol = 1e-8
    });
    undo_and_redo(&mut app, "time window", |s| s.time.span *= 2.0);
    undo_and_redo(&mut app, "run limits", |s| s.limits.escape = 1e3);
    undo_and_redo(&mut app, "move the cut", |s| {
        if let Some(lamina_scenario::Cut {
            surface: lamina_scenario::Surface::Plane { offset, .. },
            ..
        }) = &mut s.cut
        {
            *offset += 0.1;
        }
    });
}

#[test]
fn typing_in_one_field_is_one_step_and_a_drag_of_the_cut_is_one_step() {
    let mut app = app();
    let before = app.scenario().clone();
    for text in ["0", "0.", "0.3"] {
        app.edit_scenario(|s| s.states[0].rate = format!("{} + {text}", before.states[0].rate));
    }
    assert_eq!(app.n_undo_steps(), 1, "one field typed in: one step");
    app.command(Command::Stop);
    let typed = app.scenario().clone();
    for k in 1..=20 {
        app.command(Command::MoveCut {
            offset: 0.01 * k as f64,
            drag: drag_phase(k, 20),
        });
    }
    assert_eq!(app.n_undo_steps(), 2, "a drag of the cut: one step");
    assert!(
        app.messages()
            .filter(|m| m.starts_with("re-sliced"))
            .count()
            <= 1,
        "a drag of the cut: at most one line in the log"
    );
    assert_eq!(app.undo_label(), Some("move the cut"));
    app.command(Command::Undo);
    assert_eq!(*app.scenario(), typed);
    app.command(Command::Undo);
    assert_eq!(*app.scenario(), before);
    assert!(app.undo_label().is_none());
    // redo goes forward again in order
    app.command(Command::Redo);
    assert_eq!(*app.scenario(), typed);
    app.command(Command::Redo);
    assert_eq!(app.redo_label(), None);
    assert_ne!(*app.scenario(), typed);
}

#[test]
fn a_new_edit_after_undo_drops_what_could_be_redone() {
    let mut app = app();
    app.edit_scenario(|s| s.time.span = 77.0);
    app.command(Command::Undo);
    assert!(app.redo_label().is_some());
    app.edit_scenario(|s| s.integrator.atol = 1e-11);
    assert!(app.redo_label().is_none());
}

#[test]
fn remove_from_a_rows_menu_is_undone_by_ctrl_z_and_named_in_the_edit_menu() {
    let mut h = harness(app());
    steps(&mut h, 3);
    let parameters = h.state().scenario().parameters.clone();
    let first = parameters[0].name.clone();
    h.get_by_label(&format!("Remove parameter {first}…"))
        .click();
    steps(&mut h, 3);
    h.get_by_label(&format!("Remove parameter {first}")).click();
    steps(&mut h, 3);
    assert_eq!(
        h.state().scenario().parameters.len(),
        parameters.len() - 1,
        "removed"
    );
    // a second click where the menu button was opens the next row's menu: nothing removed
    h.get_by_label(&format!("Remove parameter {}…", parameters[1].name))
        .click();
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().parameters.len(), parameters.len() - 1);
    h.key_press(egui::Key::Escape);
    steps(&mut h, 2);

    h.get_by_label("Edit").click();
    steps(&mut h, 3);
    h.get_by_label_contains(&format!("Undo: remove parameter {first}"));
    h.key_press(egui::Key::Escape);
    steps(&mut h, 2);
    h.key_press_modifiers(egui::Modifiers::COMMAND, egui::Key::Z);
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().parameters, parameters, "back again");
    h.key_press_modifiers(
        egui::Modifiers::COMMAND | egui::Modifiers::SHIFT,
        egui::Key::Z,
    );
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().parameters.len(), parameters.len() - 1);
    h.key_press_modifiers(egui::Modifiers::COMMAND, egui::Key::Z);
    steps(&mut h, 2);
    h.key_press_modifiers(egui::Modifiers::COMMAND, egui::Key::Y);
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().parameters.len(), parameters.len() - 1);
}

#[test]
fn opening_another_document_clears_the_history() {
    let mut h = harness(app());
    steps(&mut h, 2);
    h.state_mut().edit_scenario(|s| s.time.span = 55.0);
    assert!(h.state().undo_label().is_some());
    h.state_mut().command(Command::LoadDemo("Relay loop"));
    steps(&mut h, 3);
    h.get_by_label("Discard changes").click();
    steps(&mut h, 3);
    assert_eq!(h.state().scenario().title, "Relay loop");
    assert!(h.state().undo_label().is_none());
    assert!(h.state().redo_label().is_none());
}

#[test]
fn a_new_parameter_takes_the_keyboard_on_its_name() {
    let mut h = harness(app());
    steps(&mut h, 3);
    h.get_by_label("+ parameter").click();
    steps(&mut h, 4);
    let name = h
        .state()
        .scenario()
        .parameters
        .last()
        .expect("added")
        .name
        .clone();
    assert!(
        h.query_all_by_value(&name).any(|field| field.is_focused()),
        "the new name field has the keyboard"
    );
}

#[test]
fn a_drag_of_the_cut_writes_one_line_in_the_log() {
    let mut h = harness(common::van_der_pol_app());
    steps(&mut h, 2);
    h.state_mut().command(Command::Run);
    common::wait_until(&mut h, |a| !a.is_running());
    for k in 1..=20 {
        h.state_mut().command(Command::MoveCut {
            offset: 0.01 * k as f64,
            drag: drag_phase(k, 20),
        });
        h.step();
    }
    let lines = h
        .state()
        .messages()
        .filter(|m| m.starts_with("re-sliced"))
        .count();
    assert_eq!(lines, 1, "one line for the drag");
    assert!(
        h.state().n_cut_points() > 0,
        "the cut points follow the drag"
    );
}

/// The phase of move `k` of a drag of `n` moves: the last one ends it.
fn drag_phase(k: usize, n: usize) -> DragPhase {
    if k == n {
        DragPhase::Ends
    } else {
        DragPhase::Continues
    }
}
