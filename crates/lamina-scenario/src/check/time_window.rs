//! Checks of the time window: a start, settle time and span that are numbers, and times that
//! floating-point numbers can still tell apart where the runs go.
//!
//! Far from `t = 0` floating-point times are coarse (about 16 significant digits): at
//! `t = 1e15` they are 0.125 apart and no step below 2.2 changes the time, at `t = 1e20` they
//! are 16384 apart. A window whose settle time or span is lost in rounding, or strobe times
//! that cannot be formed, is an error. Where the time comes near being too coarse for the
//! steps the model needs (estimated from its time scale, and for a model whose rates use `t`
//! from the error that rounding the time puts into a step), trial runs decide: a run that
//! collapses at its start but steps on from `t = 0` is an error, one that collapses at the
//! far end of its window or an estimate past the limit a warning (the run may stop with its
//! step size collapsed).
//!
//! The error rule is the run's own ([`window_problem`] asks the core's check of a run's time
//! resolution): `check` refuses what a run would stop on.

use lamina_core::run::{
    RunSpec, Strobe as CoreStrobe, TimeResolution, WindowPart, check_time_resolution,
};
pub(super) use lamina_core::run::{smallest_step_at, time_spacing};

use super::Checker;
use super::trial::{MAX_TRIAL_STATES, Trial};
use crate::number::{About, Short};

/// The steps a model needs: this many per time scale.
const STEPS_PER_TIME_SCALE: f64 = 100.0;
/// Trial runs are made when the smallest step that changes the time comes within this factor
/// of the estimated steps the model needs.
const TRIAL_MARGIN: f64 = 1e4;

/// One run window: the settle time and the span of a run that starts at `time.start`, with
/// the fields they come from.
struct Window {
    settle: f64,
    settle_field: &'static str,
    span: f64,
    what: &'static str,
}

/// Why a window cannot be carried by the time axis (the core's rule).
enum WindowProblem {
    /// The settle time or the span comes out much changed in rounding.
    Lost {
        /// `settle time` or `span`.
        part: &'static str,
        t: f64,
        length: f64,
        realised: f64,
    },
    /// Strobe times near `t` cannot be formed to a thousandth of the period.
    StrobeTimes { t: f64, spacing: f64 },
}

/// The first problem of a window starting at `t_start`, by the run's own rule (the core's
/// check of a run's time resolution): its parts must keep their length to 1 % and strobe
/// times be formed to a thousandth of the period with indices that fit.
fn window_problem(
    t_start: f64,
    window: &Window,
    strobe: Option<&CoreStrobe>,
) -> Option<WindowProblem> {
    let spec = RunSpec {
        t_start,
        settle: window.settle,
        span: window.span,
        ..RunSpec::default()
    };
    match check_time_resolution(&spec, strobe).err()? {
        TimeResolution::WindowLost {
            part,
            t,
            length,
            realised,
            ..
        } => Some(WindowProblem::Lost {
            part: match part {
                WindowPart::Settle => "settle time",
                WindowPart::Span => "span",
            },
            t,
            length,
            realised,
        }),
        TimeResolution::StrobeTimes { t, spacing, .. } => {
            Some(WindowProblem::StrobeTimes { t, spacing })
        }
        // not a window's problem: found only when a step collapses
        TimeResolution::StepLost { .. } => None,
    }
}

impl Checker<'_> {
    pub(super) fn time(&mut self) {
        let time = &self.scenario.time;
        let start_ok = self.finite("time.start", time.start);
        let settle_ok = self.not_negative("time.settle", time.settle);
        let span_ok = self.positive("time.span", time.span);
        if start_ok && settle_ok && span_ok && !(time.start + time.settle + time.span).is_finite() {
            self.error(
                "time.span",
                "the run would end beyond the largest representable time".to_owned(),
            );
        }
    }

    /// The windows the scenario runs: its own, and the sweep's and the map's (each with its
    /// own settle time), where their numbers are valid.
    fn windows(&self) -> Vec<Window> {
        let scenario = self.scenario;
        let valid = |settle: f64, span: f64| {
            settle.is_finite() && settle >= 0.0 && span.is_finite() && span > 0.0
        };
        let mut windows = Vec::new();
        let time = &scenario.time;
        if valid(time.settle, time.span) {
            windows.push(Window {
                settle: time.settle,
                settle_field: "time.settle",
                span: time.span,
                what: "the run",
            });
        }
        if let Some(sweep) = &scenario.sweep
            && valid(sweep.settle, time.span)
        {
            windows.push(Window {
                settle: sweep.settle,
                settle_field: "sweep.settle",
                span: time.span,
                what: "each sweep value",
            });
        }
        if let Some(map) = &scenario.map
            && valid(map.settle, map.span)
        {
            windows.push(Window {
                settle: map.settle,
                settle_field: "map.settle",
                span: map.span,
                what: "each map cell",
            });
        }
        windows
    }

    /// The largest time any run reaches, in size, and the longest run: `None` when the time
    /// block is not valid.
    pub(super) fn time_extent(&self) -> Option<(f64, f64)> {
        let t_start = self.scenario.time.start;
        if !t_start.is_finite() {
            return None;
        }
        let windows = self.windows();
        let t_far = windows
            .iter()
            .map(|w| (t_start + w.settle + w.span).abs())
            .fold(t_start.abs(), f64::max);
        let length = windows
            .iter()
            .map(|w| w.settle + w.span)
            .fold(0.0, f64::max);
        (t_far.is_finite() && length > 0.0).then_some((t_far, length))
    }

    /// Windows lost in rounding and strobe times that cannot be formed (errors), else a
    /// warning when the time is too far from 0 for the model's time scale.
    pub(super) fn time_resolution(&mut self) {
        let t_start = self.scenario.time.start;
        if !t_start.is_finite() {
            return;
        }
        let mut refused = false;
        for window in self.windows() {
            let Some(problem) = window_problem(t_start, &window, self.strobe.as_ref()) else {
                continue;
            };
            let (field, message) = self.window_message(t_start, &window, &problem);
            refused = true;
            if !self.problems.iter().any(|p| p.field == field) {
                self.error(field, message);
            }
        }
        if !refused {
            self.time_precision(t_start);
        }
    }

    /// The field to blame for a window problem and what to say.
    fn window_message(
        &self,
        t_start: f64,
        window: &Window,
        problem: &WindowProblem,
    ) -> (&'static str, String) {
        match *problem {
            WindowProblem::Lost {
                part,
                t,
                length,
                realised,
            } => {
                let field = if t_start.abs() >= window.settle {
                    "time.start"
                } else {
                    window.settle_field
                };
                let cure = if field == "time.start" {
                    "start the time nearer 0"
                } else {
                    "a shorter settle time keeps the run nearer 0"
                };
                let message = format!(
                    "the {part} of {} after t = {} comes out as {} for {}: floating-point \
                     times there are {} apart; {cure}",
                    Short(length),
                    Short(t),
                    Short(realised),
                    window.what,
                    Short(time_spacing(t + length)),
                );
                (field, message)
            }
            WindowProblem::StrobeTimes { t, spacing } => {
                let (first_at, period) = self
                    .strobe
                    .as_ref()
                    .map_or((0.0, 0.0), |s| (s.first_at, s.period));
                let field = if first_at.abs() > t.abs() {
                    "strobe.first_at"
                } else {
                    "time.start"
                };
                let message = format!(
                    "strobe samples at first_at + k T with first_at = {} and T = {} cannot be \
                     timed near t = {}: floating-point times there are {} apart, more than a \
                     thousandth of the period; put the first sample and the start time nearer 0",
                    Short(first_at),
                    Short(period),
                    About(t),
                    Short(spacing)
                );
                (field, message)
            }
        }
    }

    /// The time too coarse where the runs go, for the model's steps: when an estimate of the
    /// steps it needs comes near the smallest step that changes the time there, trial runs
    /// tell. A run that collapses at its start but steps on from `t = 0` is an error (the real
    /// run takes the same first steps); one that collapses at the far end of its window, or an
    /// estimate beyond the smallest step, is a warning.
    fn time_precision(&mut self, t_start: f64) {
        let Some((t_far, _)) = self.time_extent() else {
            return;
        };
        let smallest = smallest_step_at(t_far);
        let spacing = time_spacing(t_far);
        let Some((needed, reason)) = self.needed_step(spacing) else {
            return;
        };
        if smallest * TRIAL_MARGIN <= needed {
            return;
        }
        let (field, cure) = self.blamed_for_time(t_start);
        if self.scenario.states.len() <= MAX_TRIAL_STATES
            && let Some(Trial::Stepped { mean_step }) = self.trial(0.0)
        {
            if let Some(Trial::Collapsed { t }) = self.trial(t_start) {
                let message = format!(
                    "the run stops at its start: its step size collapses at t = {} (no step \
                     below {} changes the time there; floating-point times are {} apart), \
                     while the same run started at t = 0 steps on with steps of about {}; start \
                     the time nearer 0",
                    Short(t),
                    About(smallest_step_at(t)),
                    Short(time_spacing(t)),
                    About(mean_step)
                );
                self.error("time.start", message);
                return;
            }
            let far = self.far_time();
            if far.abs() > 2.0 * t_start.abs()
                && let Some(Trial::Collapsed { .. }) = self.trial(far)
            {
                let message = format!(
                    "near the end of the window, at t = {}, no step below {} changes the time \
                     (floating-point times there are {} apart), but the model takes steps of \
                     about {} (started at t = 0): the run may stop there with its step size \
                     collapsed; {cure}",
                    About(t_far),
                    About(smallest),
                    Short(spacing),
                    About(mean_step)
                );
                self.warning(field, message);
                return;
            }
        }
        if smallest > needed {
            let message = format!(
                "at t = {} no step below {} changes the time (floating-point times there are {} \
                 apart), but {reason}: the run may stop with its step size collapsed; {cure}",
                About(t_far),
                About(smallest),
                Short(spacing),
            );
            self.warning(field, message);
        }
    }

    /// The field to blame for times too far from 0, and the cure: the start, the settle
    /// time or the span, whichever puts the window's end furthest out.
    fn blamed_for_time(&self, t_start: f64) -> (&'static str, &'static str) {
        let time = &self.scenario.time;
        let settle = self.windows().iter().map(|w| w.settle).fold(0.0, f64::max);
        if t_start.abs() >= settle.max(time.span) {
            ("time.start", "start the time nearer 0")
        } else if settle >= time.span {
            (
                "time.settle",
                "a shorter settle time keeps the run nearer 0, where the times are finer",
            )
        } else {
            (
                "time.span",
                "a shorter span keeps the run nearer 0, where the times are finer",
            )
        }
    }

    /// The end of a window furthest from 0, with its sign.
    fn far_time(&self) -> f64 {
        let t_start = self.scenario.time.start;
        self.windows()
            .iter()
            .map(|w| t_start + w.settle + w.span)
            .fold(t_start, |far, t| if t.abs() > far.abs() { t } else { far })
    }

    /// An estimate of the steps the model needs, and why: a hundredth of its time scale, or
    /// (for a model whose rates use `t`) the longest step whose error from rounding the time
    /// to `spacing` the tolerances allow, whichever is smaller.
    fn needed_step(&mut self, spacing: f64) -> Option<(f64, String)> {
        let from_scale = self.time_scale().map(|scale| {
            let needed = scale / STEPS_PER_TIME_SCALE;
            let reason = format!(
                "the model's time scale is about {}, so it needs steps near {}",
                About(scale),
                About(needed)
            );
            (needed, reason)
        });
        let from_rounding = self
            .step_limited_by_rounding(spacing)
            .map(|(state, slope, needed)| {
                let reason = format!(
                    "the rate of {state} changes with t by up to {} per unit time, so rounding \
                     the time there puts more error than atol and rtol allow into any step \
                     longer than {}",
                    About(slope),
                    About(needed)
                );
                (needed, reason)
            });
        match (from_scale, from_rounding) {
            (Some(a), Some(b)) => Some(if b.0 < a.0 { b } else { a }),
            (a, b) => a.or(b),
        }
    }

    /// For a model whose rates use `t`: the longest step whose error from rounding the time
    /// (`spacing` times how fast a rate changes with `t`, per unit step) the tolerances still
    /// allow, with the state that limits it and its rate's change with `t`.
    fn step_limited_by_rounding(&mut self, spacing: f64) -> Option<(String, f64, f64)> {
        let slopes = self.rates_change_with_time()?;
        let integrator = &self.scenario.integrator;
        let (atol, rtol) = (integrator.atol, integrator.rtol);
        let scenario = self.scenario;
        scenario
            .states
            .iter()
            .zip(slopes)
            .filter(|(_, slope)| *slope > 0.0)
            .map(|(state, slope)| {
                let tolerance = atol + rtol * state.start.abs();
                (state.name.clone(), slope, tolerance / (slope * spacing))
            })
            .min_by(|a, b| a.2.total_cmp(&b.2))
    }
}
