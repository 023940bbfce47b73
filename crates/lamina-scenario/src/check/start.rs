//! Checks at the start state, where every run begins: rates that are not a number there
//! (the run could not take a step), a level surface that never changes or is not a number
//! (the run would find no crossing and give no reason), and estimates of the model's time
//! scale and of how fast its rates change with `t`, for the time-resolution warning.

use lamina_core::integrate::Rates;
use lamina_core::run::{Cut as CoreCut, Surface as CoreSurface};

use super::{Checker, describe_value};
use crate::number::Short;
use crate::scenario::Scenario;

/// States shown when a message lists the start state.
const SHOWN_STATES: usize = 4;
/// The states tried besides the start, as `x * scale + shift` for every state.
const PROBES: [(f64, f64); 7] = [
    (1.0, 1.0),
    (1.0, -1.0),
    (1.0, 10.0),
    (1.0, -10.0),
    (2.0, 0.5),
    (-1.0, 0.0),
    (0.0, 0.0),
];
/// The time-scale estimate moves the state by this fraction of its size (or of 1).
const PROBE_MOVE: f64 = 1e-7;
/// Times at which the rates' change with `t` is sampled (spread so that a periodic forcing
/// of any frequency is caught away from its turning points at some of them).
const PROBE_TIMES: [f64; 8] = [0.0, 0.3, 0.7, 1.1, 1.9, 3.1, 5.3, 8.9];
/// Half the time difference of the central differences in `t`.
const PROBE_DT: f64 = 1e-6;

/// `t = 0, x = 1, v = 0` (the first few states).
fn describe_start(scenario: &Scenario, t: f64, start: &[f64]) -> String {
    let mut parts = vec![format!("t = {}", Short(t))];
    for (state, value) in scenario.states.iter().zip(start).take(SHOWN_STATES) {
        parts.push(format!("{} = {}", state.name, Short(*value)));
    }
    if start.len() > SHOWN_STATES {
        parts.push("...".to_owned());
    }
    parts.join(", ")
}

/// The largest magnitude of `values`.
fn max_norm(values: &[f64]) -> f64 {
    values.iter().fold(0.0, |norm, v| norm.max(v.abs()))
}

impl Checker<'_> {
    /// The start time and state, when they are numbers.
    fn start_point(&self) -> Option<(f64, Vec<f64>)> {
        let t = self.scenario.time.start;
        let start: Vec<f64> = self.scenario.states.iter().map(|s| s.start).collect();
        (t.is_finite() && start.iter().all(|x| x.is_finite())).then_some((t, start))
    }

    /// Each rate that is not a number (or is infinite) at the start state is an error: the
    /// run could not take its first step.
    pub(super) fn rates_at_start(&mut self) {
        let Some((t, start)) = self.start_point() else {
            return;
        };
        let Some(model) = self.model.as_mut() else {
            return;
        };
        let mut rates = vec![0.0; start.len()];
        model.rates(t, &start, &mut rates);
        let at = describe_start(self.scenario, t, &start);
        for (idx, rate) in rates.iter().enumerate() {
            if !rate.is_finite() {
                let message = format!(
                    "this rate is {} at the start ({at}): the run cannot take its first step",
                    describe_value(*rate)
                );
                self.error(&format!("states[{idx}].rate"), message);
            }
        }
    }

    /// A level surface must depend on the states and be a number somewhere near the start:
    /// a constant one is never crossed (an error), one of `t` alone is crossed at fixed times
    /// whatever the motion (a warning), and one that is not a number at the start is a
    /// warning, or an error when it is not a number at any state tried.
    pub(super) fn level_surface(&mut self, expression: &str, mut cut: CoreCut) {
        let CoreSurface::Level { program, .. } = &cut.surface else {
            return;
        };
        let (uses_states, uses_time) = (program.uses_states(), program.uses_time());
        let Some(model) = &self.model else {
            return;
        };
        let parameters = model.parameters().to_vec();
        let field = "cut.surface";
        let Some((t, start)) = self.start_point() else {
            return;
        };
        let value = cut.value(t, &start, &parameters);
        if !uses_states && !uses_time {
            let message = format!(
                "the surface '{expression}' depends on neither the states nor t: it is {} \
                 everywhere, so no motion ever crosses it",
                describe_value(value)
            );
            self.error(field, message);
            return;
        }
        if !uses_states {
            let message = format!(
                "the surface '{expression}' depends on t only, not on the states: it is crossed \
                 at fixed times whatever the motion (a strobe samples at fixed times)"
            );
            self.warning(field, message);
            return;
        }
        if value.is_finite() {
            return;
        }
        let at = describe_start(self.scenario, t, &start);
        let finite_elsewhere = PROBES.iter().any(|&(scale, shift)| {
            let probe: Vec<f64> = start.iter().map(|x| x * scale + shift).collect();
            cut.value(t, &probe, &parameters).is_finite()
        });
        let what = describe_value(value);
        if finite_elsewhere {
            let message = format!(
                "the surface '{expression}' is {what} at the start ({at}); crossings are found \
                 only where it is a number"
            );
            self.warning(field, message);
        } else {
            let message = format!(
                "the surface '{expression}' is {what} at the start ({at}) and at every other \
                 state tried: no crossing can be found"
            );
            self.error(field, message);
        }
    }

    /// The model's time scale near the start: the smaller of the strobe period and the time
    /// its rates take to change by their own size along the motion (from two rate
    /// evaluations at `t = 0`, where times are exact). `None` at rest or when the rates do
    /// not compile or are not numbers.
    pub(super) fn time_scale(&mut self) -> Option<f64> {
        let period = self.strobe.map(|s| s.period);
        let flow = self.flow_time_scale();
        match (period, flow) {
            (Some(a), Some(b)) => Some(a.min(b)),
            (a, b) => a.or(b),
        }
    }

    /// For a model whose rates use `t`: for each state, how fast its rate changes with `t`
    /// at the start state (the largest of central differences at a few times near 0).
    /// `None` for a model that does not use `t`.
    pub(super) fn rates_change_with_time(&mut self) -> Option<Vec<f64>> {
        if !self.rates_compiled {
            return None;
        }
        let (_, start) = self.start_point()?;
        let model = self.model.as_mut().filter(|m| m.uses_time())?;
        let n = start.len();
        let (mut before, mut after) = (vec![0.0; n], vec![0.0; n]);
        let mut largest = vec![0.0_f64; n];
        for t in PROBE_TIMES {
            model.rates(t - PROBE_DT, &start, &mut before);
            model.rates(t + PROBE_DT, &start, &mut after);
            for ((slope, a), b) in largest.iter_mut().zip(&after).zip(&before) {
                let change = ((a - b) / (2.0 * PROBE_DT)).abs();
                if change.is_finite() {
                    *slope = slope.max(change);
                }
            }
        }
        Some(largest)
    }

    fn flow_time_scale(&mut self) -> Option<f64> {
        if !self.rates_compiled {
            return None;
        }
        let (_, start) = self.start_point()?;
        let model = self.model.as_mut()?;
        let n = start.len();
        let mut rates = vec![0.0; n];
        model.rates(0.0, &start, &mut rates);
        let rate_size = max_norm(&rates);
        if !(rate_size.is_finite() && rate_size > 0.0) {
            return None;
        }
        let h = PROBE_MOVE * max_norm(&start).max(1.0) / rate_size;
        let moved: Vec<f64> = start.iter().zip(&rates).map(|(x, f)| x + h * f).collect();
        let mut moved_rates = vec![0.0; n];
        model.rates(h, &moved, &mut moved_rates);
        let change: Vec<f64> = moved_rates.iter().zip(&rates).map(|(a, b)| a - b).collect();
        let change_rate = max_norm(&change) / (h * rate_size);
        (change_rate.is_finite() && change_rate > 0.0).then(|| 1.0 / change_rate)
    }
}
