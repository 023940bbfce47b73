//! Small widgets shared by the panels: a number field that accepts any float notation, a
//! parameter choice that takes the new parameter's range, a unit field, a copy button, and the
//! in-place problem message.

use egui::{Color32, Response, RichText, Ui};
use lamina_scenario::Problem;

pub use crate::vocabulary::unit_suffix;

/// The colour of error text.
pub const ERROR_COLOUR: Color32 = Color32::from_rgb(226, 84, 72);
/// The colour of warning text.
pub const WARNING_COLOUR: Color32 = Color32::from_rgb(222, 170, 60);

/// A combo box choosing the parameter named in `chosen` among `names`, labelled by `label`.
/// When the choice changes, `from` and `to` take the new parameter's slider range (from
/// `ranges`, in the order of `names`): a newly swept parameter gets its own range, not the
/// old one's numbers. Returns the box's response and whether the choice changed.
pub fn parameter_choice_ui(
    ui: &mut Ui,
    id_salt: impl std::hash::Hash + std::fmt::Debug,
    label: egui::Id,
    chosen: &mut String,
    (names, ranges): (&[String], &[(f64, f64)]),
    (from, to): (&mut f64, &mut f64),
) -> (Response, bool) {
    let before = chosen.clone();
    let response = egui::ComboBox::from_id_salt(id_salt)
        .selected_text(chosen.as_str())
        .show_ui(ui, |ui| {
            for name in names {
                ui.selectable_value(chosen, name.clone(), name);
            }
        })
        .response
        .labelled_by(label);
    let changed = *chosen != before;
    if changed
        && let Some(&(lo, hi)) =
            (names.iter().position(|n| n == chosen)).and_then(|i| ranges.get(i))
    {
        *from = lo;
        *to = hi;
    }
    (response, changed)
}

/// A text field for a float that keeps what the user types (so `1e-9` stays `1e-9`) and
/// writes `value` whenever the text parses to a finite number. Marked red while it does not.
/// Returns the field's response; `changed()` is true only when `value` changed.
pub fn number_field_ui(ui: &mut Ui, id: egui::Id, value: &mut f64, width: f32) -> Response {
    let text_id = id.with("text");
    let mut text: String = ui
        .data_mut(|d| d.get_temp::<(f64, String)>(text_id))
        .filter(|(shown, _)| shown.to_bits() == value.to_bits())
        .map(|(_, t)| t)
        .unwrap_or_else(|| format_value(*value));
    let parsed = text.trim().parse::<f64>().ok().filter(|v| v.is_finite());
    let mut edit = egui::TextEdit::singleline(&mut text)
        .id(id)
        .desired_width(width);
    if parsed.is_none() {
        edit = edit.text_color(ERROR_COLOUR);
    }
    let mut response = ui.add(edit);
    let mut changed = false;
    if response.changed()
        && let Some(v) = text.trim().parse::<f64>().ok().filter(|v| v.is_finite())
        && v.to_bits() != value.to_bits()
    {
        *value = v;
        changed = true;
    }
    ui.data_mut(|d| d.insert_temp(text_id, (*value, text)));
    if !changed && response.changed() {
        // typed text that is not (yet) a number: not a change of the value
        response.flags.remove(egui::response::Flags::CHANGED);
    }
    response
}

/// A short text field for an optional unit (free text; empty means none). Returns whether the
/// unit changed.
pub fn unit_field_ui(ui: &mut Ui, unit: &mut Option<String>, hint: &str) -> bool {
    let mut text = unit.clone().unwrap_or_default();
    let response = ui
        .add(
            egui::TextEdit::singleline(&mut text)
                .desired_width(40.0)
                .hint_text("unit"),
        )
        .on_hover_text(hint);
    if response.changed() {
        *unit = (!text.trim().is_empty()).then_some(text);
        true
    } else {
        false
    }
}

/// A small "copy" button that puts `text()` on the clipboard (made only when clicked);
/// `what` says what is copied, in the tooltip.
pub fn copy_button_ui(ui: &mut Ui, what: &str, text: impl FnOnce() -> String) {
    if ui
        .small_button("copy")
        .on_hover_text(format!(
            "Copy {what} as tab-separated text (pastes into a spreadsheet)"
        ))
        .clicked()
    {
        ui.ctx().copy_text(text());
    }
}

/// Gives the widget `response` the name `name` for screen readers (and tests), where no
/// label stands beside it to name it.
pub fn name_for_readers(ui: &Ui, response: &Response, name: &str) {
    ui.ctx().accesskit_node_builder(response.id, |node| {
        node.set_label(name);
    });
}

/// Shortest text that reads back as `v`.
pub fn format_value(v: f64) -> String {
    let plain = format!("{v}");
    let debug = format!("{v:?}");
    if plain.len() <= debug.len() {
        plain
    } else {
        debug
    }
}

/// Shows each problem under its field: red for errors, amber for warnings.
pub fn problems_ui<'a>(ui: &mut Ui, problems: impl Iterator<Item = &'a Problem>) {
    for problem in problems {
        let colour = if problem.is_error() {
            ERROR_COLOUR
        } else {
            WARNING_COLOUR
        };
        // full size: an error is what the user must read next
        ui.label(RichText::new(&problem.message).color(colour).monospace());
    }
}
