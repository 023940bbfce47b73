//! The largest Lyapunov exponent a regime-map cell estimates in the same pass as its recorded
//! span (a run that carries one tangent vector) against the exponent run over the same
//! window, the published Lorenz value (REFERENCES case 9), the zero exponent of a limit cycle
//! and the exact exponent of a resting point (REFERENCES cases 12 and 20); a model with
//! switches keeps the exponent run, and an interrupt stops the span at the next step.

mod common;

use std::ops::ControlFlow;

use common::*;
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::lyapunov::{ExponentSettings, LargestExponent, spectrum};
use lamina_core::model::Model;
use lamina_core::regime_map::{MapAxisSpec, MapCell, MapProblem, Regime, RegimeMapSpec, run_cell};
use lamina_core::run::{Collect, Cut, CutPoint, Direction, Run, RunSpec, Sink, StopReason, Strobe};
use lamina_core::sweep::SweepSource;

fn no_strobe(_: &Model) -> Option<Strobe> {
    None
}

/// The settings a map cell estimates its exponent with: one vector, 100 trace samples.
fn cell_settings() -> ExponentSettings {
    ExponentSettings {
        count: Some(1),
        trace_samples: 100,
        ..ExponentSettings::default()
    }
}

/// The one-pass estimate: `model` run over `run`'s window with `cut`, carrying one tangent
/// vector over the span.
fn one_pass(
    model: &Model,
    run: &RunSpec,
    cut: &Cut,
    settings: &ExponentSettings,
) -> LargestExponent {
    let mut pass = Run::new(model.clone(), run.clone(), Some(cut.clone()), None, false);
    assert!(pass.carry_tangent(settings));
    let outcome = pass.execute(&mut Collect::default(), &Interrupt::new());
    assert_eq!(outcome.reason, StopReason::Finished);
    assert!(outcome.n_cut_points > 0, "no cut points");
    pass.largest_exponent().expect("an estimate")
}

/// The exponent run's largest exponent and its spread over the same window.
fn by_spectrum(model: &Model, run: &RunSpec, settings: &ExponentSettings) -> (f64, f64) {
    let s = spectrum(model.clone(), run, settings, &mut (), &Interrupt::new())
        .unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(s.reason, StopReason::Finished);
    (s.largest(), s.spread[0])
}

/// Two estimates of the same exponent agree within twice the sum of their spreads.
///
/// [common practice] a finite-time estimate scatters by about its spread; on a chaotic run
/// the two passes take different steps (the one pass keeps the tangent vector in its error
/// control), so their trajectories part and the two estimates are two draws, not one.
fn assert_agree(one: &LargestExponent, (other, other_spread): (f64, f64), what: &str) {
    let allowed = 2.0 * (one.spread + other_spread);
    assert!(
        (one.value - other).abs() <= allowed,
        "{what}: one pass {} (spread {}) vs exponent run {other} (spread {other_spread})",
        one.value,
        one.spread
    );
}

/// Brusselator x' = A - (B + 1) x + x^2 y, y' = B x - x^2 y, cut x = A rising.
fn brusselator() -> (Model, Cut) {
    let m = model(
        &[
            ("x", 1.3, "a - (b + 1)*x + x^2*y"),
            ("y", 2.0, "b*x - x^2*y"),
        ],
        &[("a", 1.0), ("b", 2.0)],
    );
    let cut = level(&m, "x - a", Direction::Rising);
    (m, cut)
}

fn lorenz() -> (Model, Cut) {
    let m = lorenz_from([1.0, 1.0, 1.0]);
    let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Falling);
    (m, cut)
}

/// The map cell of `model` at parameters 0 = `p0`, 1 = `p1`, from the model's start.
fn cell(
    model: &Model,
    cut: &Cut,
    (p0, p1): (f64, f64),
    settle: f64,
    span: f64,
    tol: f64,
) -> MapCell {
    let axis = |parameter, value| MapAxisSpec {
        parameter,
        from: value,
        to: value,
        values: 1,
    };
    let map = RegimeMapSpec {
        x: axis(0, p0),
        y: axis(1, p1),
        settle,
        span,
        source: SweepSource::Cut,
    };
    let run = spec(Method::Dp853, tol, 0.0, 1.0);
    let problem = MapProblem {
        model,
        run: &run,
        cut: Some(cut),
        strobe_for: &no_strobe,
        map: &map,
    };
    run_cell(&problem, 0, (0.0, model.start()), &Interrupt::new())
}

#[test]
fn a_periodic_brusselator_cell_has_the_exponent_run_s_zero_exponent() {
    let (mut m, cut) = brusselator();
    m.set_parameter(1, 3.0);
    for method in [Method::Dp853, Method::Rodas4, Method::Automatic] {
        let run = spec(method, 1e-9, 100.0, 400.0);
        let one = one_pass(&m, &run, &cut, &cell_settings());
        let other = by_spectrum(&m, &run, &cell_settings());
        assert_agree(&one, other, method.name());
        // [analytic] a limit cycle of an autonomous model has largest exponent 0 (the
        // direction along the flow neither grows nor shrinks); REFERENCES case 23 puts
        // (A, B) = (1, 3) above the Hopf curve B = 1 + A^2, on the cycle
        assert!(one.value.abs() < 0.01, "{method:?}: {one:?}");
    }
    let c = cell(&m, &cut, (1.0, 3.0), 100.0, 400.0, 1e-9);
    // REFERENCES case 23 [analytic]: one return per turn to the cut x = A
    assert_eq!(c.regime, Regime::Periodic { returns: 1 }, "{c:?}");
    // [analytic] 0 for a limit cycle, as above
    assert!(c.lyapunov.is_some_and(|l| l.abs() < 0.01), "{c:?}");
}

#[test]
fn a_lorenz_cell_is_chaotic_with_the_published_largest_exponent() {
    let (m, cut) = lorenz();
    let run = spec(Method::Dp853, 1e-8, 50.0, 2000.0);
    let one = one_pass(&m, &run, &cut, &cell_settings());
    let other = by_spectrum(&m, &run, &cell_settings());
    assert_agree(&one, other, "Lorenz");
    // J. C. Sprott, Chaos and Time-Series Analysis (2003), table of exponents (REFERENCES
    // case 9): 0.906 +- 0.02 for T >= 2000
    assert!((one.value - 0.906).abs() <= 0.02, "{one:?}");
    assert!(one.spread > 0.0 && one.spread < 0.02, "{one:?}");
    let c = cell(&m, &cut, (10.0, 28.0), 50.0, 2000.0, 1e-8);
    // J. C. Sprott, Chaos and Time-Series Analysis (2003) (REFERENCES case 9): a positive
    // largest exponent, the Lorenz attractor is chaotic
    assert_eq!(c.regime, Regime::Chaotic, "{c:?}");
    assert_eq!(c.lyapunov, Some(one.value));
}

#[test]
fn a_resting_cell_reports_the_exact_exponent_of_its_resting_point() {
    let (m, cut) = brusselator();
    let c = cell(&m, &cut, (0.5, 1.0), 200.0, 200.0, 1e-9);
    assert_eq!(c.regime, Regime::Resting, "{c:?}");
    // [analytic] the Jacobian at (A, B/A) is [[B - 1, A^2], [-B, -A^2]]: trace -A^2 + B - 1
    // = -0.25, determinant A^2 = 0.25, so eigenvalues -0.125 +- 0.484i (REFERENCES case 20)
    let l = c.lyapunov.expect("an exponent");
    assert!((l + 0.125).abs() < 1e-9, "{c:?}");
    // [analytic] after 200 at the decay rate 0.125 the state is within e^-25 of the stable
    // resting point: the cell needs no span, it ends where the settle time did
    assert_eq!(c.end.0, 200.0, "{c:?}");
    // the same cell with a settle time too short to be sure still rests after its span, and
    // gets the exact exponent from its end
    let c = cell(&m, &cut, (0.5, 1.0), 110.0, 200.0, 1e-9);
    assert_eq!(c.regime, Regime::Resting, "{c:?}");
    assert_eq!(c.end.0, 310.0, "{c:?}");
    // [analytic] -0.125, as above
    assert!(
        c.lyapunov.is_some_and(|l| (l + 0.125).abs() < 1e-9),
        "{c:?}"
    );

    let damped = model(
        &[("x", 1.0, "-a*x + y"), ("y", 0.0, "-x - b*y")],
        &[("a", 1.0), ("b", 2.0)],
    );
    let cut = plane(&damped, &[("x", 1.0)], 0.0, Direction::Rising);
    let c = cell(&damped, &cut, (1.0, 2.0), 60.0, 40.0, 1e-9);
    assert_eq!(c.regime, Regime::Resting, "{c:?}");
    // [analytic] [[-1, 1], [-1, -2]]: trace -3, determinant 3, eigenvalues -1.5 +- 0.866i
    let l = c.lyapunov.expect("an exponent");
    assert!((l + 1.5).abs() < 1e-9, "{c:?}");
}

#[test]
fn a_vector_rescaled_thousands_of_times_stays_finite_and_on_the_value() {
    let (m, cut) = lorenz();
    let run = spec(Method::Dp853, 1e-8, 50.0, 2000.0);
    // a growth limit of 1.5 rescales the vector about every 0.45 time units
    let often = ExponentSettings {
        growth_limit: 1.5,
        ..cell_settings()
    };
    let one = one_pass(&m, &run, &cut, &often);
    assert!(one.value.is_finite() && one.spread.is_finite(), "{one:?}");
    assert!(one.n_rescales > 3000, "{one:?}");
    let other = by_spectrum(&m, &run, &often);
    assert_agree(&one, other, "growth limit 1.5");
    // J. C. Sprott, Chaos and Time-Series Analysis (2003) (REFERENCES case 9): 0.906 +- 0.02
    assert!((one.value - 0.906).abs() <= 0.02, "{one:?}");
}

#[test]
fn a_model_with_switches_keeps_the_exponent_run_over_one_more_span() {
    // the Brusselator with a switch that never changes branch on its cycle (x stays far
    // below 100): the same flow, but a model whose tangent vector would need saltation
    // matrices, so its cell takes its exponent from the exponent run
    let m = model(
        &[
            ("x", 1.3, "a - (b + 1)*x + x^2*y - max(x - 100, 0)"),
            ("y", 2.0, "b*x - x^2*y"),
        ],
        &[("a", 1.0), ("b", 3.0)],
    );
    let cut = level(&m, "x - a", Direction::Rising);
    let run = spec(Method::Dp853, 1e-9, 100.0, 400.0);
    let mut pass = Run::new(m.clone(), run, Some(cut.clone()), None, false);
    assert!(!pass.carry_tangent(&cell_settings()));
    let c = cell(&m, &cut, (1.0, 3.0), 100.0, 400.0, 1e-9);
    // REFERENCES case 23 [analytic]: above the Hopf curve, one return per turn to x = A
    assert_eq!(c.regime, Regime::Periodic { returns: 1 }, "{c:?}");
    // [analytic] 0 for a limit cycle of an autonomous model
    assert!(c.lyapunov.is_some_and(|l| l.abs() < 0.01), "{c:?}");
}

/// Raises the interrupt at the first cut point.
struct RaiseAtFirstPoint<'a>(&'a Interrupt);

impl Sink for RaiseAtFirstPoint<'_> {
    fn cut_point(&mut self, _point: &CutPoint) -> ControlFlow<()> {
        self.0.raise();
        ControlFlow::Continue(())
    }
}

#[test]
fn an_interrupt_raised_in_the_span_stops_the_run_at_the_next_step() {
    let (mut m, cut) = brusselator();
    m.set_parameter(1, 3.0);
    let run = spec(Method::Dp853, 1e-9, 10.0, 400.0);
    let mut pass = Run::new(m, run, Some(cut), None, false);
    assert!(pass.carry_tangent(&cell_settings()));
    let interrupt = Interrupt::new();
    let outcome = pass.execute(&mut RaiseAtFirstPoint(&interrupt), &interrupt);
    let StopReason::Cancelled { t } = outcome.reason else {
        panic!("{outcome:?}")
    };
    assert_eq!(outcome.n_cut_points, 1);
    assert!(t > 10.0 && t < 20.0, "{outcome:?}");
    // the estimate up to where it stopped is kept
    let partial = pass.largest_exponent().expect("an estimate");
    assert_eq!(partial.time, t - 10.0);
}
