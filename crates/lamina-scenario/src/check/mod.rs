//! Semantic checks of a scenario: every problem with its field path and, when the scenario
//! was loaded from text, its line and column. Numbers in messages are in their short form
//! ([`Short`]).
//!
//! Range policy: a parameter range with `low >= high` is an error (no slider can be built
//! from it, and it is almost always a typo), while a value outside its range is only a
//! warning: the model is still well-defined, sweeps go outside slider ranges on purpose, and
//! the explorer widens the slider to include the value.

use std::collections::HashMap;

use lamina_core::expr::{CompileError, ExprError, FUNCTIONS, is_reserved};
use lamina_core::model::{Model, ModelSpec};
use lamina_core::run::{Cut as CoreCut, CutSpec, SpecError, Strobe as CoreStrobe, SurfaceSpec};

use crate::error::{Problem, Severity};
use crate::number::Short;
use crate::scenario::{FORMAT, Scenario, Surface};

mod grids;
mod integration;
mod start;
mod time_window;
mod trial;

impl Scenario {
    /// Every problem of the scenario, errors and warnings, in file order of the checks.
    /// Compiles every expression (rates, level surface, strobe period) and evaluates them at
    /// the start state, where a rate or surface that is not a number, or a surface that never
    /// changes, is found before any run; and estimates the model's time scale to warn when
    /// the time is too far from 0 for steps of that size.
    pub fn check(&self) -> Vec<Problem> {
        Checker::new(self, true).run()
    }

    /// The checks of [`Scenario::check`] that need no expression compiler: names, numbers,
    /// references between blocks. Cheap enough to run on every edit.
    pub fn check_fields(&self) -> Vec<Problem> {
        Checker::new(self, false).run()
    }

    /// The scenario if [`Scenario::check`] finds no error; otherwise
    /// [`crate::ScenarioError::Invalid`] with every problem, warnings included.
    pub fn validated(self) -> Result<Self, crate::ScenarioError> {
        let problems = self.check();
        if problems.iter().any(Problem::is_error) {
            Err(crate::ScenarioError::Invalid(problems))
        } else {
            Ok(self)
        }
    }
}

/// Whether `name` is an identifier: a letter or `_`, then letters, digits or `_` (ASCII).
pub fn is_identifier(name: &str) -> bool {
    let mut chars = name.chars();
    chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_')
}

/// Whether `text` is a colour `#rrggbb` or `#rrggbbaa`.
pub fn is_colour(text: &str) -> bool {
    text.strip_prefix('#')
        .is_some_and(|hex| matches!(hex.len(), 6 | 8) && hex.chars().all(|c| c.is_ascii_hexdigit()))
}

struct Checker<'a> {
    scenario: &'a Scenario,
    expressions: bool,
    problems: Vec<Problem>,
    /// Whether all state and parameter names are valid and distinct, so expressions can be
    /// compiled against them.
    names_ok: bool,
    /// The model with its real rates, or with rates `0` if those do not compile; `None` until
    /// compiled or when names are broken.
    model: Option<Model>,
    /// Whether `model` has the scenario's own rates.
    rates_compiled: bool,
    /// The strobe, once its period compiled to a positive number.
    strobe: Option<CoreStrobe>,
}

impl<'a> Checker<'a> {
    fn new(scenario: &'a Scenario, expressions: bool) -> Self {
        Self {
            scenario,
            expressions,
            problems: Vec::new(),
            names_ok: true,
            model: None,
            rates_compiled: false,
            strobe: None,
        }
    }

    fn run(mut self) -> Vec<Problem> {
        if self.scenario.format != FORMAT {
            let found = self.scenario.format;
            self.error(
                "format",
                format!("format {found} is not format {FORMAT}, the one this Lamina writes"),
            );
        }
        self.names();
        self.states_and_parameters();
        self.integrator();
        self.time();
        self.cut();
        self.strobe();
        self.sweep();
        self.map();
        self.limits();
        self.view();
        self.time_resolution();
        self.problems
    }

    fn push(&mut self, severity: Severity, field: &str, message: String) {
        let location = self.scenario.source.location(field);
        self.problems.push(Problem {
            severity,
            field: field.to_owned(),
            message,
            location,
        });
    }

    fn error(&mut self, field: &str, message: String) {
        self.push(Severity::Error, field, message);
    }

    fn warning(&mut self, field: &str, message: String) {
        self.push(Severity::Warning, field, message);
    }

    /// One problem per expression error, located at the offending character when the
    /// string is written plainly. `string_path` is where the string itself is in the file.
    fn expression_error(&mut self, field: &str, string_path: &str, err: &ExprError) {
        let location = self
            .scenario
            .source
            .location_in_string(string_path, err.position)
            .or_else(|| self.scenario.source.location(field));
        let message = format!(
            "at character {}: {}\n    {}\n    {}^",
            err.position + 1,
            err.kind,
            err.expression,
            " ".repeat(err.position)
        );
        self.problems.push(Problem {
            severity: Severity::Error,
            field: field.to_owned(),
            message,
            location,
        });
    }

    fn spec_error(&mut self, field: &str, string_path: &str, err: &SpecError) {
        match err {
            SpecError::Expression(compile) => {
                for e in &compile.errors {
                    self.expression_error(field, string_path, e);
                }
            }
            SpecError::BadPeriod { expression, value } => {
                let message = format!(
                    "the strobe period '{expression}' evaluates to {}, not a positive number",
                    describe_value(*value)
                );
                self.error(field, message);
            }
            other => self.error(field, other.to_string()),
        }
    }

    fn finite(&mut self, field: &str, value: f64) -> bool {
        if value.is_finite() {
            true
        } else {
            self.error(
                field,
                format!("must be a finite number, not {}", Short(value)),
            );
            false
        }
    }

    fn positive(&mut self, field: &str, value: f64) -> bool {
        if value.is_finite() && value > 0.0 {
            true
        } else {
            self.error(
                field,
                format!("must be a positive number, not {}", Short(value)),
            );
            false
        }
    }

    fn not_negative(&mut self, field: &str, value: f64) -> bool {
        if value.is_finite() && value >= 0.0 {
            true
        } else {
            self.error(
                field,
                format!("must be 0 or a positive number, not {}", Short(value)),
            );
            false
        }
    }

    fn state_names(&self) -> String {
        name_list(self.scenario.states.iter().map(|s| s.name.as_str()))
    }

    fn is_state(&self, name: &str) -> bool {
        self.scenario.states.iter().any(|s| s.name == name)
    }

    /// Requires `name` (at `field`) to be a state.
    fn state_ref(&mut self, field: &str, name: &str) {
        if !self.is_state(name) {
            let known = self.state_names();
            self.error(field, format!("'{name}' is not a state (states: {known})"));
        }
    }

    fn names(&mut self) {
        let scenario = self.scenario;
        if scenario.states.is_empty() {
            self.error("states", "a scenario needs at least one state".to_owned());
            self.names_ok = false;
        }
        let mut seen: HashMap<&str, String> = HashMap::new();
        let named = scenario
            .states
            .iter()
            .enumerate()
            .map(|(idx, s)| (format!("states[{idx}]"), s.name.as_str()))
            .chain(
                scenario
                    .parameters
                    .iter()
                    .enumerate()
                    .map(|(idx, p)| (format!("parameters[{idx}]"), p.name.as_str())),
            );
        for (item, name) in named {
            let field = format!("{item}.name");
            if let Some(message) = name_problem(name) {
                self.error(&field, message);
                self.names_ok = false;
            } else if let Some(first) = seen.get(name) {
                let message = format!("'{name}' is already the name of {first}; names must differ");
                self.error(&field, message);
                self.names_ok = false;
            } else {
                seen.insert(name, item);
            }
        }
    }

    fn states_and_parameters(&mut self) {
        let scenario = self.scenario;
        for (idx, state) in scenario.states.iter().enumerate() {
            self.finite(&format!("states[{idx}].start"), state.start);
        }
        for (idx, parameter) in scenario.parameters.iter().enumerate() {
            let value_ok = self.finite(&format!("parameters[{idx}].value"), parameter.value);
            let (low, high) = (Short(parameter.range.0), Short(parameter.range.1));
            let field = format!("parameters[{idx}].range");
            if !low.0.is_finite() || !high.0.is_finite() {
                self.error(
                    &field,
                    format!("the range ({low}, {high}) must be two finite numbers"),
                );
            } else if low.0 >= high.0 {
                self.error(
                    &field,
                    format!(
                        "the range ({low}, {high}) must have its low end first, below its high end"
                    ),
                );
            } else if value_ok && !(low.0..=high.0).contains(&parameter.value) {
                let message = format!(
                    "the value {} is outside the range ({low}, {high}); the slider will be widened to include it",
                    Short(parameter.value)
                );
                self.warning(&format!("parameters[{idx}].value"), message);
            }
        }
        if self.expressions && self.names_ok {
            self.compile_model();
        }
    }

    /// Compiles the rates, reporting each error at its state, and keeps a model for the
    /// cut and strobe checks (with rates `0` if the real ones do not compile).
    fn compile_model(&mut self) {
        let scenario = self.scenario;
        let spec = scenario.model_spec();
        match Model::compile_plain(&spec) {
            Ok(model) => {
                self.model = Some(model);
                self.rates_compiled = true;
                self.rates_at_start();
            }
            Err(err) => {
                self.rate_errors(&err);
                let mut placeholder: ModelSpec = spec;
                for state in &mut placeholder.states {
                    state.rate = "0".to_owned();
                }
                self.model = Model::compile_plain(&placeholder).ok();
            }
        }
    }

    /// Assigns each error to its state by label and expression; errors come in source order,
    /// so two states with the same text are told apart by position.
    fn rate_errors(&mut self, err: &CompileError) {
        let scenario = self.scenario;
        let mut cursor = 0;
        for e in &err.errors {
            let matches = |(_, s): &(usize, &crate::scenario::State)| {
                e.label == format!("rate of state '{}'", s.name) && e.expression == s.rate
            };
            let found = scenario
                .states
                .iter()
                .enumerate()
                .skip(cursor)
                .find(matches)
                .or_else(|| scenario.states.iter().enumerate().find(matches));
            match found {
                Some((idx, _)) => {
                    cursor = idx;
                    let field = format!("states[{idx}].rate");
                    self.expression_error(&field, &field, e);
                }
                None => self.error("states", e.to_string()),
            }
        }
    }

    fn cut(&mut self) {
        let Some(cut) = &self.scenario.cut else {
            return;
        };
        match &cut.surface {
            Surface::Plane { normal, offset } => {
                let mut seen: Vec<&str> = Vec::new();
                for (name, weight) in &normal.0 {
                    let field = format!("cut.surface.normal[{name:?}]");
                    if seen.contains(&name.as_str()) {
                        self.error(&field, format!("'{name}' is given twice in the normal"));
                        continue;
                    }
                    seen.push(name);
                    if self.is_state(name) {
                        self.finite(&field, *weight);
                    } else {
                        let known = self.state_names();
                        self.error(
                            &field,
                            format!(
                                "the normal names '{name}', which is not a state (states: {known})"
                            ),
                        );
                    }
                }
                let all_zero = normal.0.iter().all(|(_, w)| *w == 0.0);
                if all_zero {
                    self.error(
                        "cut.surface.normal",
                        "the normal is zero: give at least one state a non-zero weight, like {\"x\": 1.0}"
                            .to_owned(),
                    );
                }
                self.finite("cut.surface.offset", *offset);
            }
            Surface::Level(expression) => {
                if self.expressions
                    && self.names_ok
                    && let Some(model) = &self.model
                {
                    let spec = CutSpec {
                        surface: SurfaceSpec::Level(expression.clone()),
                        direction: cut.direction.into(),
                    };
                    match CoreCut::compile(&spec, model) {
                        Ok(compiled) => self.level_surface(expression, compiled),
                        Err(err) => self.spec_error("cut.surface", "cut.surface.0", &err),
                    }
                }
            }
        }
        self.state_ref("cut.axes.0", &cut.axes.0);
        self.state_ref("cut.axes.1", &cut.axes.1);
    }

    fn strobe(&mut self) {
        let Some(strobe) = &self.scenario.strobe else {
            return;
        };
        if self.expressions
            && self.names_ok
            && let (Some(model), Some(spec)) = (&self.model, self.scenario.strobe_spec())
        {
            match CoreStrobe::compile(&spec, model) {
                Ok(compiled) => self.strobe = Some(compiled),
                Err(err) => self.spec_error("strobe.period", "strobe.period", &err),
            }
        }
        self.finite("strobe.first_at", strobe.first_at);
        self.state_ref("strobe.axes.0", &strobe.axes.0);
        self.state_ref("strobe.axes.1", &strobe.axes.1);
    }

    fn limits(&mut self) {
        let limits = &self.scenario.limits;
        if limits.max_points < 1 {
            self.error("limits.max_points", "must be at least 1".to_owned());
        }
        if limits.escape.is_nan() || limits.escape <= 0.0 {
            self.error(
                "limits.escape",
                format!("must be a positive number, not {}", Short(limits.escape)),
            );
        }
    }

    fn view(&mut self) {
        let Some(view) = &self.scenario.view else {
            return;
        };
        if let Some(camera) = &view.camera {
            self.finite("view.camera.yaw_deg", camera.yaw_deg);
            if self.finite("view.camera.pitch_deg", camera.pitch_deg)
                && camera.pitch_deg.abs() > 90.0
            {
                self.error(
                    "view.camera.pitch_deg",
                    format!(
                        "must be between -90 and 90, not {}",
                        Short(camera.pitch_deg)
                    ),
                );
            }
            self.positive("view.camera.zoom", camera.zoom);
        }
        if let Some((a, b, c)) = &view.axes {
            for (idx, name) in [a, b, c].into_iter().enumerate() {
                if name != "t" && !self.is_state(name) {
                    let known = self.state_names();
                    self.error(
                        &format!("view.axes.{idx}"),
                        format!("'{name}' is neither a state nor the time t (states: {known})"),
                    );
                }
            }
        }
        if let Some(colours) = &view.colours {
            let fields = [
                ("view.colours.trajectory", &colours.trajectory),
                ("view.colours.surface", &colours.surface),
                ("view.colours.cut_points", &colours.cut_points),
                ("view.colours.strobe_samples", &colours.strobe_samples),
            ];
            for (field, colour) in fields {
                if let Some(colour) = colour
                    && !is_colour(colour)
                {
                    let message = format!(
                        "'{colour}' is not a colour; write #rrggbb or #rrggbbaa, like #3a6ea5"
                    );
                    self.error(field, message);
                }
            }
        }
    }
}

/// A value as a message says it: `NaN (not a number)`, `infinite`, or the number.
fn describe_value(value: f64) -> String {
    if value.is_nan() {
        "NaN (not a number)".to_owned()
    } else if value.is_infinite() {
        format!("{}infinite", if value < 0.0 { "minus " } else { "" })
    } else {
        Short(value).to_string()
    }
}

/// The names in order, each once, for a message that lists what is known; a name that is
/// given more than once is said so after the list (`x, v; 'x' is given twice`), so the list
/// never reads `x, x`.
fn name_list<'n>(names: impl Iterator<Item = &'n str>) -> String {
    let mut distinct: Vec<(&str, usize)> = Vec::new();
    for name in names {
        match distinct.iter_mut().find(|(seen, _)| *seen == name) {
            Some((_, count)) => *count += 1,
            None => distinct.push((name, 1)),
        }
    }
    let list: Vec<&str> = distinct.iter().map(|(name, _)| *name).collect();
    let repeats: Vec<String> = distinct
        .iter()
        .filter(|(_, count)| *count > 1)
        .map(|(name, count)| match count {
            2 => format!("'{name}' is given twice"),
            n => format!("'{name}' is given {n} times"),
        })
        .collect();
    if repeats.is_empty() {
        list.join(", ")
    } else {
        format!("{}; {}", list.join(", "), repeats.join(", "))
    }
}

/// What is wrong with a state or parameter name, if anything.
fn name_problem(name: &str) -> Option<String> {
    if name.is_empty() {
        return Some("the name is empty".to_owned());
    }
    if !is_identifier(name) {
        return Some(format!(
            "'{name}' is not a name: start with a letter or _, then use letters, digits and _"
        ));
    }
    if is_reserved(name) {
        let what = if FUNCTIONS.iter().any(|(f, _)| *f == name) {
            "a function"
        } else if name == "t" {
            "the time"
        } else {
            "a constant"
        };
        return Some(format!(
            "'{name}' is {what} in expressions; choose another name"
        ));
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn identifiers() {
        for good in ["x", "_", "x1", "k_3", "Vout", "_tmp"] {
            assert!(is_identifier(good), "{good}");
        }
        for bad in ["", "1x", "x-y", "x y", "ω", "a.b"] {
            assert!(!is_identifier(bad), "{bad}");
        }
    }

    #[test]
    fn colours() {
        assert!(is_colour("#3a6ea5"));
        assert!(is_colour("#3A6EA5ff"));
        assert!(!is_colour("3a6ea5"));
        assert!(!is_colour("#3a6ea"));
        assert!(!is_colour("#3a6eag"));
    }

    #[test]
    fn reserved_names_say_what_they_are() {
        assert!(name_problem("sin").is_some_and(|m| m.contains("function")));
        assert!(name_problem("t").is_some_and(|m| m.contains("time")));
        assert!(name_problem("pi").is_some_and(|m| m.contains("constant")));
        assert_eq!(name_problem("x"), None);
    }
}
