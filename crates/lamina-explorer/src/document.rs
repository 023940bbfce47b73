//! The scenario being edited: where it came from, whether it has unsaved changes, and its
//! problems (checked again after every edit).

use std::path::PathBuf;
use std::sync::Arc;

use lamina_scenario::{Compiled, Problem, Scenario, ScenarioError};

/// The built-in demo scenario, shown on first start.
pub const DEMO_SCENARIO: &str = include_str!("../../../demo_scenarios/clocked_resonator.ron");

/// Every demo scenario shipped with Lamina: menu name and text. The menu name is the
/// scenario's title, and the file is the title in lower case with `_` for spaces (tested).
pub const DEMOS: &[(&str, &str)] = &[
    ("Clocked resonator", DEMO_SCENARIO),
    (
        "Tunnel diode oscillator",
        include_str!("../../../demo_scenarios/tunnel_diode_oscillator.ron"),
    ),
    (
        "Piecewise circuit",
        include_str!("../../../demo_scenarios/piecewise_circuit.ron"),
    ),
    (
        "Relay loop",
        include_str!("../../../demo_scenarios/relay_loop.ron"),
    ),
    (
        "Coupled oscillators",
        include_str!("../../../demo_scenarios/coupled_oscillators.ron"),
    ),
    (
        "Astable multivibrator",
        include_str!("../../../demo_scenarios/astable_multivibrator.ron"),
    ),
    (
        "Clocked buck converter",
        include_str!("../../../demo_scenarios/clocked_buck_converter.ron"),
    ),
];

/// The scenario in the window.
#[derive(Clone)]
pub struct Document {
    /// The scenario as edited.
    pub scenario: Scenario,
    /// The file it was opened from or saved to.
    pub path: Option<PathBuf>,
    saved: Scenario,
    /// Problems of the current scenario.
    pub problems: Vec<Problem>,
    /// Bumped on every edit.
    pub revision: u64,
    /// The scenario compiled for the core, once per edit (or why it does not compile).
    compiled: Arc<Result<Compiled, ScenarioError>>,
}

impl Document {
    /// A document for `scenario`, as loaded from `path` (not dirty).
    pub fn new(scenario: Scenario, path: Option<PathBuf>) -> Self {
        let problems = scenario.check();
        let compiled = Arc::new(scenario.compile());
        Self {
            saved: scenario.clone(),
            scenario,
            path,
            problems,
            revision: 0,
            compiled,
        }
    }

    /// The built-in demo.
    pub fn demo() -> Self {
        match lamina_scenario::load_str(DEMO_SCENARIO) {
            Ok(scenario) => Self::new(scenario, None),
            Err(_) => Self::new(blank_scenario(), None),
        }
    }

    /// A new, small scenario to start from.
    pub fn blank() -> Self {
        let scenario = blank_scenario();
        let mut doc = Self::new(scenario, None);
        doc.saved.title.push_str(" (unsaved)");
        doc
    }

    /// Whether there are edits not saved to a file.
    pub fn is_dirty(&self) -> bool {
        self.scenario != self.saved || (self.path.is_none() && self.revision > 0)
    }

    /// Call after every edit: re-checks and bumps the revision.
    pub fn changed(&mut self) {
        self.scenario.forget_source();
        self.problems = self.scenario.check();
        self.compiled = Arc::new(self.scenario.compile());
        self.revision += 1;
    }

    /// The scenario compiled for the core, as of the last edit.
    pub fn compiled(&self) -> Result<&Compiled, &ScenarioError> {
        self.compiled.as_ref().as_ref()
    }

    /// Records that the current scenario is what is on disk at `path`.
    pub fn mark_saved(&mut self, path: PathBuf) {
        self.path = Some(path);
        self.saved = self.scenario.clone();
        self.revision = 0;
    }

    /// Problems of one field: the field itself or anything inside it.
    pub fn problems_at<'a>(&'a self, field: &'a str) -> impl Iterator<Item = &'a Problem> + 'a {
        self.problems.iter().filter(move |p| {
            p.field == field
                || p.field
                    .strip_prefix(field)
                    .is_some_and(|rest| rest.starts_with('.') || rest.starts_with('['))
        })
    }

    /// The first error, if the scenario cannot run.
    pub fn first_error(&self) -> Option<&Problem> {
        self.problems.iter().find(|p| p.is_error())
    }

    /// Title for the window: the file name (or the scenario's title) and a mark if dirty.
    pub fn window_title(&self) -> String {
        let name = self
            .path
            .as_ref()
            .and_then(|p| p.file_name())
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| self.scenario.title.clone());
        format!(
            "{}{} — Lamina",
            if self.is_dirty() { "● " } else { "" },
            name
        )
    }
}

fn blank_scenario() -> Scenario {
    use lamina_scenario::{Parameter, State, Time};
    Scenario::new(
        "New model",
        vec![
            State {
                name: "x".into(),
                start: 1.0,
                rate: "v".into(),
                unit: None,
            },
            State {
                name: "v".into(),
                start: 0.0,
                rate: "-x - c*v".into(),
                unit: None,
            },
        ],
        vec![Parameter {
            name: "c".into(),
            value: 0.1,
            range: (0.0, 1.0),
            unit: None,
        }],
        Time {
            start: 0.0,
            settle: 0.0,
            span: 100.0,
            unit: None,
        },
    )
}

/// Replaces every whole-word occurrence of the name `old` in `expression` by `new`.
pub fn rename_in_expression(expression: &str, old: &str, new: &str) -> String {
    let mut out = String::with_capacity(expression.len());
    let mut chars = expression.char_indices().peekable();
    while let Some((start, c)) = chars.next() {
        if c.is_ascii_alphabetic() || c == '_' {
            let mut end = start + c.len_utf8();
            while let Some(&(i, d)) = chars.peek() {
                if d.is_ascii_alphanumeric() || d == '_' {
                    end = i + d.len_utf8();
                    chars.next();
                } else {
                    break;
                }
            }
            let word = &expression[start..end];
            out.push_str(if word == old { new } else { word });
        } else if c.is_ascii_digit() || c == '.' {
            // a number, with a possible exponent: never a name
            out.push(c);
            let mut last = c;
            while let Some(&(_, d)) = chars.peek() {
                let exponent_sign = (d == '+' || d == '-') && (last == 'e' || last == 'E');
                if d.is_ascii_digit() || d == '.' || d == 'e' || d == 'E' || exponent_sign {
                    out.push(d);
                    last = d;
                    chars.next();
                } else {
                    break;
                }
            }
        } else {
            out.push(c);
        }
    }
    out
}

/// Renames a state or parameter everywhere in the scenario: definitions, expressions, the
/// plane normal, axes, the sweep.
pub fn rename_everywhere(scenario: &mut Scenario, old: &str, new: &str) {
    let swap = |s: &mut String| {
        if s == old {
            *s = new.to_string();
        }
    };
    for state in &mut scenario.states {
        swap(&mut state.name);
        state.rate = rename_in_expression(&state.rate, old, new);
    }
    for parameter in &mut scenario.parameters {
        swap(&mut parameter.name);
    }
    if let Some(cut) = &mut scenario.cut {
        match &mut cut.surface {
            lamina_scenario::Surface::Plane { normal, .. } => {
                for (name, _) in &mut normal.0 {
                    swap(name);
                }
            }
            lamina_scenario::Surface::Level(expr) => *expr = rename_in_expression(expr, old, new),
        }
        swap(&mut cut.axes.0);
        swap(&mut cut.axes.1);
    }
    if let Some(strobe) = &mut scenario.strobe {
        strobe.period = rename_in_expression(&strobe.period, old, new);
        swap(&mut strobe.axes.0);
        swap(&mut strobe.axes.1);
    }
    if let Some(sweep) = &mut scenario.sweep {
        swap(&mut sweep.parameter);
        swap(&mut sweep.coordinate);
    }
    if let Some(view) = &mut scenario.view
        && let Some(axes) = &mut view.axes
    {
        swap(&mut axes.0);
        swap(&mut axes.1);
        swap(&mut axes.2);
    }
}

#[cfg(test)]
mod tests {
    use super::{DEMOS, rename_in_expression};

    #[test]
    fn demo_names_titles_and_files_agree() {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../../demo_scenarios");
        let mut files: Vec<String> = std::fs::read_dir(&dir)
            .expect("demo_scenarios/")
            .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
            .filter(|name| name.ends_with(".ron"))
            .collect();
        files.sort();
        let mut listed: Vec<String> = Vec::new();
        for (name, text) in DEMOS {
            let scenario = lamina_scenario::load_str(text).expect("demo loads");
            assert_eq!(scenario.title, *name);
            assert_eq!(
                scenario.format_read(),
                Some(lamina_scenario::FORMAT),
                "{name}"
            );
            let file = format!("{}.ron", name.to_lowercase().replace(' ', "_"));
            let on_disk = std::fs::read_to_string(dir.join(&file)).expect("the demo's file");
            assert_eq!(on_disk, *text, "{file}");
            listed.push(file);
        }
        listed.sort();
        assert_eq!(listed, files, "every demo file is in the menu");
    }

    #[test]
    fn renames_whole_words_only() {
        assert_eq!(
            rename_in_expression("-x - k3*x^3 + xx", "x", "pos"),
            "-pos - k3*pos^3 + xx"
        );
        assert_eq!(
            rename_in_expression("2e-3*e + exp(e)", "e", "q"),
            "2e-3*q + exp(q)"
        );
        assert_eq!(rename_in_expression("a1+a", "a", "b"), "a1+b");
    }
}
