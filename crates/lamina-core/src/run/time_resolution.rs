//! Whether the time axis can carry a run: far from `t = 0` floating-point times are coarse
//! (about 16 significant digits), so a span, a strobe period or a step can be lost in rounding
//! and the run would stand still or never end. Checked before a run starts (also by scenario
//! checks, through [`check_time_resolution`]) and recognised when a step collapses for it.

use super::{RunSpec, Strobe};
use crate::cycle::Number;
use crate::integrate::min_step_at;

/// Strobe sample times must be formed to this fraction of the period.
const STROBE_TIME_FRACTION: f64 = 1e-3;
/// A part of the window may come out this much shorter or longer in rounding.
const WINDOW_FRACTION: f64 = 1e-2;
/// A collapsing step counts as lost to the time's resolution when the smallest step at its
/// time is this many times the smallest step over the run's own length.
const OFFSET_COST: f64 = 1e3;
/// Strobe indices stay below this, where `first_at + k T` is still formed exactly in `k`.
const MAX_STROBE_INDEX: f64 = 4_503_599_627_370_496.0; // 2^52

/// The smallest step that changes the time `t` in a run: ten units in the last place of `t`
/// (and never below 1e-300). Far from 0 it is large: 2.2 at `t = 1e15`, 2.2e5 at `t = 1e20`.
pub fn smallest_step_at(t: f64) -> f64 {
    min_step_at(t)
}

/// The spacing of floating-point numbers at `t`: the difference to the next one.
pub fn time_spacing(t: f64) -> f64 {
    let t = t.abs();
    if !t.is_finite() {
        return f64::INFINITY;
    }
    let next = f64::from_bits(t.to_bits() + 1);
    next - t
}

/// A part of the run's time window.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WindowPart {
    /// The settle time after the start.
    Settle,
    /// The recorded span after the settle time.
    Span,
}

impl WindowPart {
    fn name(self) -> &'static str {
        match self {
            Self::Settle => "settle time",
            Self::Span => "span",
        }
    }
}

/// Why the time axis cannot carry a run. Each says at what time and how coarse the times are
/// there; the cure is a start time nearer 0.
#[derive(Clone, Copy, Debug, PartialEq, thiserror::Error)]
pub enum TimeResolution {
    /// A part of the window is lost (or much changed) in rounding where it lies.
    #[error(
        "the {} of {} after t = {} comes out as {}: floating-point times there are {} apart; \
         start the time nearer 0",
        part.name(), Number(*length), Number(*t), Number(*realised), Number(*spacing)
    )]
    WindowLost {
        /// Which part.
        part: WindowPart,
        /// Where it starts.
        t: f64,
        /// Its length as asked for.
        length: f64,
        /// Its length after rounding.
        realised: f64,
        /// Spacing of floating-point times there.
        spacing: f64,
    },
    /// Strobe times `first_at + k T` cannot be formed to a small part of the period over the
    /// window (the first sample or the window lies far from 0 for the period).
    #[error(
        "strobe samples at first_at + k T with first_at = {} and T = {} cannot be timed near \
         t = {}: floating-point times there are {} apart, more than a thousandth of the period; \
         put the first sample and the start time nearer 0",
        Number(*first_at), Number(*period), Number(*t), Number(*spacing)
    )]
    StrobeTimes {
        /// Time of sample 0.
        first_at: f64,
        /// The period.
        period: f64,
        /// The time where it fails.
        t: f64,
        /// Spacing of the times involved.
        spacing: f64,
    },
    /// Steps the model needs are below the smallest step that changes the time there.
    #[error(
        "at t = {} the steps fell to {}, the smallest that changes the time there \
         (floating-point times are {} apart): the time is too far from 0 for the model's time \
         scale; start the time nearer 0 (over this run's length the steps could go down to {})",
        Number(*t), Number(*step), Number(*spacing), Number(*local)
    )]
    StepLost {
        /// Where it happened.
        t: f64,
        /// The smallest step at that time.
        step: f64,
        /// Spacing of floating-point times there.
        spacing: f64,
        /// The smallest step a run of the same length starting at 0 could take.
        local: f64,
    },
}

/// Checks that the window of `spec` (and the strobe's sample times, if any) survive rounding:
/// the settle time and the span each keep their length to 1 %, and strobe times are formed
/// to a thousandth of the period with indices that fit. A plain function, for a scenario's
/// checks as well as for the run itself.
///
/// # Errors
/// The first [`TimeResolution`] problem found. Windows that are not finite or not positive
/// are not this function's business and pass.
pub fn check_time_resolution(
    spec: &RunSpec,
    strobe: Option<&Strobe>,
) -> Result<(), TimeResolution> {
    let parts = [
        (WindowPart::Settle, spec.t_start, spec.settle),
        (WindowPart::Span, spec.t_record(), spec.span),
    ];
    for (part, t, length) in parts {
        if !(t.is_finite() && length.is_finite() && length > 0.0) {
            continue;
        }
        let realised = (t + length) - t;
        if (realised - length).abs() > WINDOW_FRACTION * length {
            return Err(TimeResolution::WindowLost {
                part,
                t,
                length,
                realised,
                spacing: time_spacing(t + length),
            });
        }
    }
    if let Some(strobe) = strobe {
        let (first_at, period) = (strobe.first_at, strobe.period);
        for t in [spec.t_record(), spec.t_end()] {
            if !(t.is_finite() && first_at.is_finite()) {
                continue;
            }
            let index = ((t - first_at) / period).abs();
            let spacing = time_spacing(first_at)
                .max(time_spacing(t - first_at))
                .max(time_spacing(t));
            if index > MAX_STROBE_INDEX || spacing > STROBE_TIME_FRACTION * period {
                return Err(TimeResolution::StrobeTimes {
                    first_at,
                    period,
                    t,
                    spacing,
                });
            }
        }
    }
    Ok(())
}

/// Whether a step that collapsed at `t` to `step` was lost to the time's resolution rather
/// than to the model: the smallest step at `t` is more than a thousand times the smallest
/// step over the run's own length, and the collapse reached it.
pub fn step_lost_to_time(spec: &RunSpec, t: f64, step: f64) -> Option<TimeResolution> {
    let floor = smallest_step_at(t);
    let local = smallest_step_at(spec.t_end() - spec.t_start);
    (step <= floor && floor > OFFSET_COST * local).then_some(TimeResolution::StepLost {
        t,
        step: floor,
        spacing: time_spacing(t),
        local,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn window(t_start: f64, settle: f64, span: f64) -> RunSpec {
        RunSpec {
            t_start,
            settle,
            span,
            ..RunSpec::default()
        }
    }

    #[test]
    fn spacing_of_times() {
        // [analytic] 2^-52 at 1, 2^14 = 16384 between 2^66 and 2^67 (1e20 ~ 2^66.4)
        assert_eq!(time_spacing(1.0), f64::EPSILON);
        assert_eq!(time_spacing(1e20), 16384.0);
        assert_eq!(time_spacing(-1e20), 16384.0);
    }

    #[test]
    fn a_span_lost_in_rounding_is_named() {
        let err = check_time_resolution(&window(1e20, 0.0, 100.0), None).expect_err("lost");
        assert!(matches!(
            err,
            TimeResolution::WindowLost {
                part: WindowPart::Span,
                realised: 0.0,
                ..
            }
        ));
        let err = check_time_resolution(&window(0.0, 1e20, 100.0), None).expect_err("lost");
        assert!(matches!(err, TimeResolution::WindowLost { .. }), "{err}");
        assert!(check_time_resolution(&window(1e15, 0.0, 100.0), None).is_ok());
        assert!(check_time_resolution(&window(0.0, 0.0, 1e20), None).is_ok());
    }

    #[test]
    fn strobe_times_far_from_zero_are_refused() {
        let strobe = Strobe {
            period: 1.0,
            first_at: 1e20,
        };
        let err = check_time_resolution(&window(0.0, 0.0, 100.0), Some(&strobe))
            .expect_err("first sample far away");
        assert!(matches!(err, TimeResolution::StrobeTimes { .. }), "{err}");
        let strobe = Strobe {
            period: 1.0,
            first_at: 0.0,
        };
        assert!(check_time_resolution(&window(1e15, 0.0, 100.0), Some(&strobe)).is_err());
        assert!(check_time_resolution(&window(1e6, 0.0, 100.0), Some(&strobe)).is_ok());
    }

    #[test]
    fn a_collapse_far_from_zero_is_put_on_the_time() {
        let spec = window(1e15, 0.0, 100.0);
        assert!(step_lost_to_time(&spec, 1e15, 2.0).is_some());
        let spec = window(0.0, 0.0, 100.0);
        assert!(step_lost_to_time(&spec, 50.0, 1e-14).is_none());
    }
}
