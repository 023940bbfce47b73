//! Checks of the blocks that run the model over a grid of parameter values: the sweep (one
//! parameter) and the regime map (two).

use super::{Checker, name_list};
use crate::number::Short;
use crate::scenario::{MapAxis, SweepSource};

impl Checker<'_> {
    /// Requires `name` (at `field`) to be a parameter; whether it is.
    fn parameter_ref(&mut self, field: &str, name: &str) -> bool {
        let parameters = &self.scenario.parameters;
        if parameters.iter().any(|p| p.name == name) {
            return true;
        }
        let message = if parameters.is_empty() {
            format!("'{name}' is not a parameter; the scenario has no parameters")
        } else {
            format!(
                "'{name}' is not a parameter (parameters: {})",
                name_list(parameters.iter().map(|p| p.name.as_str()))
            )
        };
        self.error(field, message);
        false
    }

    /// `from` and `to` finite and different, and at least two values; `block` is `sweep` or
    /// `map.x`, `what` says it in words (`the sweep`, `the map's x axis`).
    fn value_range(&mut self, block: &str, what: &str, from: f64, to: f64, values: u32) {
        let from_ok = self.finite(&format!("{block}.from"), from);
        if self.finite(&format!("{block}.to"), to) && from_ok && from == to {
            self.error(
                &format!("{block}.to"),
                format!(
                    "{what} must end at another value than it starts ({})",
                    Short(from)
                ),
            );
        }
        if values < 2 {
            self.error(
                &format!("{block}.values"),
                format!("must be at least 2 (from and to), not {values}"),
            );
        }
    }

    /// The sweep's or map's source must be a block the scenario has.
    fn source_ref(&mut self, field: &str, what: &str, source: SweepSource) {
        let scenario = self.scenario;
        match source {
            SweepSource::Cut if scenario.cut.is_none() => self.error(
                field,
                format!("the {what} keeps cut points, but the scenario has no cut"),
            ),
            SweepSource::Strobe if scenario.strobe.is_none() => self.error(
                field,
                format!("the {what} keeps strobe samples, but the scenario has no strobe"),
            ),
            _ => {}
        }
    }

    pub(super) fn sweep(&mut self) {
        let Some(sweep) = &self.scenario.sweep else {
            return;
        };
        self.parameter_ref("sweep.parameter", &sweep.parameter);
        self.value_range("sweep", "the sweep", sweep.from, sweep.to, sweep.values);
        if sweep.keep < 1 {
            self.error("sweep.keep", "must be at least 1".to_owned());
        }
        self.not_negative("sweep.settle", sweep.settle);
        self.state_ref("sweep.coordinate", &sweep.coordinate);
        self.source_ref("sweep.source", "sweep", sweep.source);
    }

    pub(super) fn map(&mut self) {
        let Some(map) = &self.scenario.map else {
            return;
        };
        let axes: [(&str, &MapAxis); 2] = [("x", &map.x), ("y", &map.y)];
        let mut known = [false; 2];
        for (idx, (name, axis)) in axes.into_iter().enumerate() {
            let block = format!("map.{name}");
            known[idx] = self.parameter_ref(&format!("{block}.parameter"), &axis.parameter);
            let what = format!("the map's {name} axis");
            self.value_range(&block, &what, axis.from, axis.to, axis.values);
        }
        if known == [true, true] && map.x.parameter == map.y.parameter {
            self.error(
                "map.y.parameter",
                format!(
                    "the map's two axes both vary '{}'; choose two different parameters",
                    map.y.parameter
                ),
            );
        }
        self.not_negative("map.settle", map.settle);
        self.positive("map.span", map.span);
        self.source_ref("map.source", "map", map.source);
    }
}
