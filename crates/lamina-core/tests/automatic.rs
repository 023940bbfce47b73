//! The automatic method on stiff runs: Van der Pol with mu = 1000 through the cut against a
//! reference library, far fewer steps than the explicit method, and the changes of method
//! reported when and why.

mod common;

use common::*;
use lamina_core::Interrupt;
use lamina_core::integrate::{ChangeReason, Method, MethodChange};
use lamina_core::run::{Direction, Run, Sink, StopReason};

/// Van der Pol x' = v, v' = mu (1 - x^2) v - x with mu = 1000 from (2, 0).
fn stiff_van_der_pol() -> lamina_core::model::Model {
    model(
        &[("x", 2.0, "v"), ("v", 0.0, "mu*(1 - x^2)*v - x")],
        &[("mu", 1000.0)],
    )
}

/// Period of Van der Pol with mu = 1000 between successive maxima (cut v = 0 falling), and
/// the first crossing from (2, 0): SciPy 1.17.1 `solve_ivp(method="Radau", rtol=1e-12,
/// atol=1e-12)` with the exact Jacobian and an event on v (direction -1), computed once;
/// at rtol = atol = 1e-13 it gives 1614.4011258092 and 1614.2916734899 (relative
/// differences 4e-12).
const PERIOD: f64 = 1614.401125815244;
const FIRST_CROSSING: f64 = 1614.2916734966352;
/// The amplitude at the crossings, from the same computation.
const AMPLITUDE: f64 = 2.0000729660026084;

#[test]
fn stiff_van_der_pol_period_matches_the_reference_with_few_steps() {
    for method in [Method::Automatic, Method::Rodas4] {
        let m = stiff_van_der_pol();
        let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
        let (points, outcome) = collect(m, spec(method, 1e-9, 0.0, 2.05 * PERIOD), Some(cut), None);
        assert_eq!(outcome.reason, StopReason::Finished, "{method:?}");
        let p = &points.cut_points;
        assert_eq!(p.len(), 2, "{method:?}");
        // SciPy 1.17.1 Radau at rtol = atol = 1e-12 (see PERIOD), to 1e-6 relative
        assert!(rel(p[0].t, FIRST_CROSSING) < 1e-6, "{method:?}: {}", p[0].t);
        let period = p[1].return_time.expect("a return time");
        assert!(rel(period, PERIOD) < 1e-6, "{method:?}: {period}");
        assert!(
            rel(p[1].state[0], AMPLITUDE) < 1e-6,
            "{method:?}: {}",
            p[1].state[0]
        );

        // DOP853 is held at its stability limit (h ~ 6 / |lambda| with lambda ~ -3 mu on
        // the slow branches): over only the first 50 time units it already needs more steps
        // than the stiff method over two whole periods (3300 time units)
        let explicit = collect(
            stiff_van_der_pol(),
            spec(Method::Dp853, 1e-9, 0.0, 50.0),
            None,
            None,
        )
        .1;
        let (n_stiff, n_explicit) = (outcome.stats.n_accepted, explicit.stats.n_accepted);
        // [analytic] 50 / (6.1 / 3000) ~ 25000 steps at the least for DOP853
        assert!(n_explicit > 20_000, "DOP853: {n_explicit}");
        assert!(
            n_stiff < n_explicit,
            "{method:?}: {n_stiff} against {n_explicit}"
        );
    }
}

/// Keeps the changes of method reported to the sink.
#[derive(Default)]
struct Changes(Vec<MethodChange>);

impl Sink for Changes {
    fn method_changed(&mut self, change: &MethodChange) {
        self.0.push(*change);
    }
}

#[test]
fn automatic_method_reports_when_and_why_it_changes() {
    let m = stiff_van_der_pol();
    let mut run = Run::new(
        m,
        spec(Method::Automatic, 1e-8, 0.0, 1.05 * PERIOD),
        None,
        None,
        false,
    );
    let mut sink = Changes::default();
    let outcome = run.execute(&mut sink, &Interrupt::new());
    assert_eq!(outcome.reason, StopReason::Finished);
    assert_eq!(outcome.method_changes, sink.0);
    let changes = &outcome.method_changes;
    // the slow branch is stiff from the start; the jumps between the branches are not
    let first = changes.first().expect("a change of method");
    assert_eq!(first.to, Method::Rodas4);
    assert!(matches!(first.reason, ChangeReason::StabilityLimited { h_lambda } if h_lambda > 6.1));
    assert!(first.t < 1.0, "{first}");
    assert!(
        changes
            .iter()
            .any(|c| c.to == Method::Dp853 && matches!(c.reason, ChangeReason::NotStiff { .. }))
    );
    for pair in changes.windows(2) {
        assert!(
            pair[0].t <= pair[1].t && pair[0].to != pair[1].to,
            "{pair:?}"
        );
    }
    let message = first.to_string();
    assert!(
        message.starts_with("switched to the stiff method (Rodas4) at t = "),
        "{message}"
    );
    assert!(
        message.contains("step size limited by stability"),
        "{message}"
    );
}

#[test]
fn a_model_that_stops_being_stiff_goes_back_to_the_explicit_method() {
    // [analytic] with p = (u + v) / 2, q = (u - v) / 2 the model below is p' = -p,
    // q' = -k exp(-t) q, k = 1e4, from p = q = 1: u = exp(-t) + exp(-k (1 - exp(-t))),
    // v = exp(-t) - exp(-k (1 - exp(-t))); stiff while k exp(-t) is large
    let m = model(
        &[
            ("u", 2.0, "-(u + v)/2 - k*exp(-t)*(u - v)/2"),
            ("v", 0.0, "-(u + v)/2 + k*exp(-t)*(u - v)/2"),
        ],
        &[("k", 1e4)],
    );
    let samples = strobe(&m, "1", 0.0);
    let (points, outcome) = collect(
        m,
        spec(Method::Automatic, 1e-9, 0.0, 20.0),
        None,
        Some(samples),
    );
    assert_eq!(outcome.reason, StopReason::Finished);
    let to: Vec<Method> = outcome.method_changes.iter().map(|c| c.to).collect();
    assert_eq!(
        to,
        [Method::Rodas4, Method::Dp853],
        "{:?}",
        outcome.method_changes
    );
    // [analytic] the fast transient (rate 1e4) holds DOP853 at its stability limit at once;
    // the stiff steps stop being held down (h k exp(-t) < 1.5) only once k exp(-t) is down
    // to tens, after t ~ 5
    let (to_stiff, back) = (outcome.method_changes[0].t, outcome.method_changes[1].t);
    assert!(to_stiff < 0.1, "{to_stiff}");
    assert!(back > 5.0 && back < 15.0, "{back}");
    for sample in &points.strobe_samples[2..] {
        // [analytic] u = v = exp(-t) once the transient has gone, to the tolerance
        let expected = (-sample.t).exp();
        assert!((sample.state[0] - expected).abs() < 1e-8, "{sample:?}");
        assert!((sample.state[1] - expected).abs() < 1e-8, "{sample:?}");
    }
}

/// y' = -k (y - cos t) - sin t: its solution from y(0) = 1 is y = cos t for every k
/// [analytic]; with k = 1e4 it is stiff.
fn stiffly_forced(k: f64) -> lamina_core::model::Model {
    model(&[("y", 1.0, "-k*(y - cos(t)) - sin(t)")], &[("k", k)])
}

#[test]
fn a_stiffly_forced_scalar_model_goes_stiff_at_loose_tolerances_and_stays_explicit_at_tight_ones() {
    // loose: stability holds DOP853's steps down, the automatic choice goes stiff and takes a
    // hundredth of the explicit steps
    let run = |method: Method, tol: f64| {
        let (_, outcome) = collect(stiffly_forced(1e4), spec(method, tol, 0.0, 5.0), None, None);
        // [analytic] y = cos t
        let error = (outcome.final_state[0] - 5f64.cos()).abs();
        assert!(error < 1e3 * tol, "{method:?} {tol}: error {error}");
        outcome
    };
    let (automatic, explicit) = (run(Method::Automatic, 1e-6), run(Method::Dp853, 1e-6));
    assert_eq!(automatic.method_changes.len(), 1);
    assert_eq!(automatic.method_changes[0].to, Method::Rodas4);
    assert!(100 * automatic.stats.n_accepted < explicit.stats.n_accepted);
    // tight: accuracy, not stability, limits the steps (Rodas4 is of order 4, DOP853 of 8), so
    // the stiff method would need more evaluations, and the automatic choice rightly stays
    // explicit (ARCHITECTURE.md, known limits)
    let (automatic, stiff) = (run(Method::Automatic, 1e-12), run(Method::Rodas4, 1e-12));
    assert!(automatic.method_changes.is_empty());
    assert!(
        automatic.stats.n_rate_evaluations < stiff.stats.n_rate_evaluations,
        "{} against {}",
        automatic.stats.n_rate_evaluations,
        stiff.stats.n_rate_evaluations
    );
}
