//! Lyapunov exponents against REFERENCES.md: linear systems (case 6), the planar limit cycle
//! (case 3), the Lorenz spectrum (case 9) and its exact sum (case 7), a forced linear
//! oscillator; the Kaplan–Yorke dimension, the verdict, the trace, cancellation, stop
//! reasons and refused settings.

mod common;

use std::ops::ControlFlow;

use common::*;
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::lyapunov::{
    ExponentError, ExponentSettings, ExponentSink, Spectrum, Verdict, kaplan_yorke, spectrum,
};
use lamina_core::model::Model;
use lamina_core::run::{RunSpec, StopReason};

fn compute(model: Model, run: &RunSpec, settings: &ExponentSettings) -> Spectrum {
    spectrum(model, run, settings, &mut (), &Interrupt::new()).unwrap_or_else(|e| panic!("{e}"))
}

fn lorenz(sigma: f64, rho: f64, beta: f64) -> Model {
    model(
        &[
            ("x", 1.0, "s*(y - x)"),
            ("y", 1.0, "x*(r - z) - y"),
            ("z", 1.0, "x*y - b*z"),
        ],
        &[("s", sigma), ("r", rho), ("b", beta)],
    )
}

/// The planar limit cycle of REFERENCES case 3 (w = 2), started inside the cycle.
fn planar_cycle() -> Model {
    model(
        &[
            ("x", 0.5, "x*(1 - x^2 - y^2) - w*y"),
            ("y", 0.0, "y*(1 - x^2 - y^2) + w*x"),
        ],
        &[("w", 2.0)],
    )
}

/// x'' + 2 zeta x' + x = a cos(w t) as two states, zeta = 0.1.
fn driven_oscillator() -> Model {
    model(
        &[("x", 1.0, "v"), ("v", 0.0, "-2*z*v - x + a*cos(w*t)")],
        &[("z", 0.1), ("a", 0.5), ("w", 1.3)],
    )
}

fn assert_near(actual: f64, expected: f64, tolerance: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= tolerance,
        "{what}: {actual} vs {expected} (off by {:e} > {tolerance:e})",
        (actual - expected).abs()
    );
}

#[test]
fn linear_systems_give_their_eigenvalues_real_parts() {
    for method in METHODS {
        let run = spec(method, 1e-9, 0.0, 1000.0);
        // A = [[-1, 2], [-2, -1]]: eigenvalues -1 +- 2i.
        let rotating = model(&[("x", 1.0, "-x + 2*y"), ("y", 0.0, "-2*x - y")], &[]);
        let s = compute(rotating, &run, &ExponentSettings::all());
        assert_eq!(s.reason, StopReason::Finished);
        assert_eq!(s.time, 1000.0);
        for l in &s.exponents {
            // [analytic] (-1, -1), tolerance 1e-3 for T >= 1e3 (REFERENCES case 6)
            assert_near(*l, -1.0, 1e-3, "rotating sink");
        }
        assert_eq!(s.verdict, Verdict::Equilibrium);
        // [analytic] a resting point has dimension 0
        assert_eq!(s.kaplan_yorke, Some(0.0));

        // A = diag(0.3, -2), at its equilibrium (the state never moves; the tangent vectors do).
        let saddle = model(&[("x", 0.0, "0.3*x"), ("y", 0.0, "-2*y")], &[]);
        let s = compute(saddle, &run, &ExponentSettings::all());
        // [analytic] (0.3, -2), tolerance 1e-3 for T >= 1e3 (REFERENCES case 6)
        assert_near(s.exponents[0], 0.3, 1e-3, "saddle, expanding");
        assert_near(s.exponents[1], -2.0, 1e-3, "saddle, contracting");
        assert!(!s.time_direction_omitted);
    }
}

#[test]
fn planar_limit_cycle_has_spectrum_zero_and_minus_two() {
    let run = spec(Method::Dp853, 1e-9, 20.0, 1000.0);
    let s = compute(planar_cycle(), &run, &ExponentSettings::all());
    assert_eq!(s.reason, StopReason::Finished);
    // [analytic] (0, -2) (REFERENCES case 3), with case 6's tolerance 1e-3 for T >= 1e3
    assert_near(s.exponents[0], 0.0, 1e-3, "along the cycle");
    assert_near(s.exponents[1], -2.0, 1e-3, "across the cycle");
    assert_eq!(s.verdict, Verdict::Periodic);
    // [analytic] Kaplan–Yorke of (0, -2): 1 + 0 / 2 = 1, a closed curve
    assert_eq!(s.kaplan_yorke, Some(1.0));
}

#[test]
fn lorenz_spectrum_matches_the_published_values() {
    let run = spec(Method::Dp853, 1e-8, 50.0, 2000.0);
    let s = compute(
        lorenz(10.0, 28.0, 8.0 / 3.0),
        &run,
        &ExponentSettings::all(),
    );
    assert_eq!(s.reason, StopReason::Finished);
    let [l1, l2, l3] = s.exponents[..] else {
        panic!("three exponents expected, got {:?}", s.exponents)
    };
    // J. C. Sprott, Chaos and Time-Series Analysis (2003) (REFERENCES case 9): 0.906 +- 0.02
    assert_near(l1, 0.906, 0.02, "largest");
    // J. C. Sprott, Chaos and Time-Series Analysis (2003) (REFERENCES case 9): |l2| < 0.01
    assert!(l2.abs() < 0.01, "middle exponent {l2}");
    // [analytic] sum = trace of the Jacobian = -(sigma + 1 + beta) = -41/3 (REFERENCES case 9)
    assert_near(l1 + l2 + l3, -41.0 / 3.0, 1e-3, "sum");
    assert_eq!(s.verdict, Verdict::Chaotic { n_positive: 1 });
    for spread in &s.spread {
        assert!(*spread > 0.0 && *spread < 0.02, "spread {:?}", s.spread);
    }
    let dimension = s.kaplan_yorke.expect("a dimension");
    // [from memory] the Lorenz attractor's Kaplan–Yorke dimension is about 2.06
    assert_near(dimension, 2.06, 0.01, "Kaplan–Yorke dimension");
    // [analytic] the formula on the computed spectrum, the middle exponent counting as 0
    assert_near(
        dimension,
        2.0 + l1 / l3.abs(),
        1e-12,
        "Kaplan–Yorke formula",
    );
}

#[test]
fn lorenz_sum_is_the_trace_over_any_averaging_time() {
    // The Jacobian's trace is constant, so the sum of the finite-time exponents equals it
    // for any averaging time, up to the integration error.
    for (sigma, rho, beta) in [(10.0, 28.0, 8.0 / 3.0), (16.0, 45.92, 4.0)] {
        let run = spec(Method::Dp853, 1e-10, 10.0, 40.0);
        let s = compute(lorenz(sigma, rho, beta), &run, &ExponentSettings::all());
        assert_eq!(s.reason, StopReason::Finished);
        // [analytic] sum = -(sigma + 1 + beta) (REFERENCES case 7)
        assert_near(s.sum(), -(sigma + 1.0 + beta), 1e-6, "sum of the spectrum");
    }
}

#[test]
fn forced_model_lists_the_states_exponents_and_says_so() {
    let run = spec(Method::Dp853, 1e-9, 0.0, 1000.0);
    let s = compute(driven_oscillator(), &run, &ExponentSettings::all());
    assert_eq!(s.reason, StopReason::Finished);
    assert!(s.time_direction_omitted);
    assert_eq!(s.exponents.len(), 2);
    for l in &s.exponents {
        // [analytic] eigenvalues -zeta +- i sqrt(1 - zeta^2): both exponents -zeta = -0.1
        assert_near(*l, -0.1, 1e-3, "damped driven oscillator");
    }
    // [analytic] the response locks to the drive: a periodic orbit in (x, v, t), a closed
    // curve of dimension 1
    assert_eq!(s.verdict, Verdict::Periodic);
    assert_eq!(s.kaplan_yorke, Some(1.0));
    let autonomous = compute(planar_cycle(), &run, &ExponentSettings::largest());
    assert!(!autonomous.time_direction_omitted);
}

#[test]
fn largest_alone_agrees_with_the_full_spectrum() {
    let run = spec(Method::Dp853, 1e-9, 0.0, 1000.0);
    let saddle = || model(&[("x", 0.0, "0.3*x"), ("y", 0.0, "-2*y")], &[]);
    let s = compute(saddle(), &run, &ExponentSettings::largest());
    assert_eq!(s.exponents.len(), 1);
    // [analytic] the largest of (0.3, -2), tolerance 1e-3 for T >= 1e3 (REFERENCES case 6)
    assert_near(s.largest(), 0.3, 1e-3, "largest alone");
    // one zero exponent and the others unknown: periodic or a torus
    let cycle = compute(planar_cycle(), &run, &ExponentSettings::largest());
    // [analytic] 0 (REFERENCES case 3)
    assert_near(cycle.largest(), 0.0, 1e-3, "largest of the cycle");
    assert_eq!(cycle.verdict, Verdict::Regular);
    assert_eq!(cycle.kaplan_yorke, None);
}

#[test]
fn kaplan_yorke_formula_on_hand_examples() {
    // [analytic] (0.5, 0, -1): k = 2, D = 2 + 0.5 / 1
    assert_eq!(kaplan_yorke(&[0.5, 0.0, -1.0]), Some(2.5));
    // [analytic] order does not matter: the exponents are sorted first
    assert_eq!(kaplan_yorke(&[-1.0, 0.5, 0.0]), Some(2.5));
    // [analytic] (1, -4): k = 1, D = 1 + 1 / 4
    assert_eq!(kaplan_yorke(&[1.0, -4.0]), Some(1.25));
    // [analytic] every exponent negative: D = 0
    assert_eq!(kaplan_yorke(&[-0.5, -2.0]), Some(0.0));
    // [analytic] a non-negative total: not determined by these exponents
    assert_eq!(kaplan_yorke(&[0.5, -0.25]), None);
    assert_eq!(kaplan_yorke(&[f64::NAN, -1.0]), None);
}

#[test]
fn verdict_reads_the_spectrum() {
    use lamina_core::lyapunov::classify;
    let small = [1e-3; 4];
    assert_eq!(
        classify(&[0.9, 0.001, -14.5], &small[..3], 3, false),
        Verdict::Chaotic { n_positive: 1 }
    );
    assert_eq!(
        classify(&[0.2, 0.1, 0.0, -3.0], &small, 4, false),
        Verdict::Chaotic { n_positive: 2 }
    );
    assert_eq!(
        classify(&[0.0002, -0.0001, -0.5, -1.0], &small, 4, false),
        Verdict::QuasiPeriodic { n_zero: 2 }
    );
    // a forced model: the time direction's zero makes a listed zero a torus
    assert_eq!(
        classify(&[0.0001, -0.4], &small[..2], 2, true),
        Verdict::QuasiPeriodic { n_zero: 2 }
    );
    assert_eq!(
        classify(&[-0.1, -0.1], &small[..2], 2, true),
        Verdict::Periodic
    );
    // [analytic] Poincaré–Bendixson: a plane flow (two unforced states, or one forced) is
    // neither chaotic nor quasi-periodic, so such estimates mean the span was too short
    assert_eq!(
        classify(&[0.3, -1.0], &small[..2], 2, false),
        Verdict::Undecided
    );
    assert_eq!(
        classify(&[0.0001, -0.0002], &small[..2], 2, false),
        Verdict::Undecided
    );
    assert_eq!(classify(&[0.3], &small[..1], 1, true), Verdict::Undecided);
    // [analytic] a 3-torus would fill a forced two-state model's whole phase space, which a
    // damped model cannot; two exponents not resolved from zero (bands of 6 spreads of
    // 1.8e-3 around -0.004) decide nothing
    let wide = [1.8e-3; 2];
    assert_eq!(
        classify(&[-0.0040, -0.0045], &wide, 2, true),
        Verdict::Undecided
    );
    assert_eq!(
        classify(&[-0.1, -0.2], &small[..2], 2, false),
        Verdict::Equilibrium
    );
    assert_eq!(
        classify(&[-0.1, -0.2], &[f64::NAN; 2], 2, false),
        Verdict::Undecided
    );
    // the error decides: 0.05 is not clearly positive with a spread of 0.02
    assert_ne!(
        classify(&[0.05, -1.0], &[0.02, 0.02], 2, false),
        Verdict::Chaotic { n_positive: 1 }
    );
}

/// Records what the sink is told; raises the interrupt or stops after `stop_after` samples.
#[derive(Default)]
struct Recorder<'a> {
    samples: Vec<(f64, Vec<f64>)>,
    fractions: Vec<f64>,
    stop_after: Option<usize>,
    interrupt: Option<&'a Interrupt>,
}

impl ExponentSink for Recorder<'_> {
    fn estimate(&mut self, t: f64, exponents: &[f64]) -> ControlFlow<()> {
        self.samples.push((t, exponents.to_vec()));
        if self.stop_after == Some(self.samples.len()) {
            match self.interrupt {
                Some(interrupt) => interrupt.raise(),
                None => return ControlFlow::Break(()),
            }
        }
        ControlFlow::Continue(())
    }
    fn progress(&mut self, _t: f64, fraction: f64) {
        self.fractions.push(fraction);
    }
}

#[test]
fn trace_is_thinned_and_ends_at_the_final_estimate() {
    let run = spec(Method::Dp853, 1e-9, 5.0, 200.0);
    let settings = ExponentSettings {
        trace_samples: 50,
        ..ExponentSettings::all()
    };
    let mut recorder = Recorder::default();
    let s = spectrum(
        planar_cycle(),
        &run,
        &settings,
        &mut recorder,
        &Interrupt::new(),
    )
    .unwrap();
    assert_eq!(s.reason, StopReason::Finished);
    let trace = &s.trace;
    assert!(
        trace.len() >= 40 && trace.len() <= 51,
        "{} samples",
        trace.len()
    );
    assert!(trace.t.windows(2).all(|w| w[0] < w[1]));
    assert!(trace.t[0] > 5.0);
    assert_eq!(trace.t.last(), Some(&205.0));
    assert_eq!(trace.sample(trace.len() - 1), s.exponents);
    assert_eq!(recorder.samples.len(), trace.len());
    assert_eq!(recorder.samples.last(), Some(&(205.0, s.exponents.clone())));
    assert_eq!(recorder.fractions.last(), Some(&1.0));
    assert!(recorder.fractions.windows(2).all(|w| w[0] <= w[1]));
    assert!(s.n_reorthonormalisations > 0);
}

#[test]
fn a_raised_interrupt_cancels_at_once() {
    let interrupt = Interrupt::new();
    interrupt.raise();
    let run = spec(Method::Dp853, 1e-9, 10.0, 100.0);
    let s = spectrum(
        lorenz(10.0, 28.0, 8.0 / 3.0),
        &run,
        &ExponentSettings::all(),
        &mut (),
        &interrupt,
    )
    .unwrap();
    assert_eq!(s.reason, StopReason::Cancelled { t: 0.0 });
    assert_eq!(s.time, 0.0);
    assert!(s.exponents.iter().all(|l| l.is_nan()));
    assert!(s.trace.is_empty());
    assert_eq!(s.verdict, Verdict::Undecided);
    assert_eq!(s.kaplan_yorke, None);
}

#[test]
fn cancelling_mid_run_keeps_the_estimates_so_far() {
    let interrupt = Interrupt::new();
    let mut recorder = Recorder {
        stop_after: Some(100),
        interrupt: Some(&interrupt),
        ..Recorder::default()
    };
    let run = spec(Method::Dp853, 1e-9, 10.0, 100.0);
    let s = spectrum(
        lorenz(10.0, 28.0, 8.0 / 3.0),
        &run,
        &ExponentSettings::all(),
        &mut recorder,
        &interrupt,
    )
    .unwrap();
    let StopReason::Cancelled { t } = s.reason else {
        panic!("expected a cancel, got {:?}", s.reason)
    };
    assert!(t > 10.0 && t < 110.0, "t = {t}");
    assert_eq!(s.t_end, t);
    assert_eq!(s.time, t - 10.0);
    assert!(s.exponents.iter().all(|l| l.is_finite()));
    assert_eq!(s.trace.t.last(), Some(&t));

    // A sink that asks to stop ends the run the same way, with its own reason.
    let mut recorder = Recorder {
        stop_after: Some(3),
        ..Recorder::default()
    };
    let s = spectrum(
        lorenz(10.0, 28.0, 8.0 / 3.0),
        &run,
        &ExponentSettings::all(),
        &mut recorder,
        &Interrupt::new(),
    )
    .unwrap();
    assert!(matches!(s.reason, StopReason::SinkStopped { t } if t > 10.0 && t < 110.0));
    assert_eq!(recorder.samples.len(), 3);
}

#[test]
fn numerical_trouble_ends_the_run_with_its_time() {
    // [analytic] x' = x^2 from x = 1 blows up at t = 1: in the settle time...
    let blow_up = || model(&[("x", 1.0, "x^2")], &[]);
    let s = compute(
        blow_up(),
        &spec(Method::Dp853, 1e-9, 2.0, 5.0),
        &ExponentSettings::all(),
    );
    assert!(
        matches!(s.reason, StopReason::Escaped { t, .. } if t > 0.99 && t < 1.0),
        "{:?}",
        s.reason
    );
    assert_eq!(s.time, 0.0);
    // [analytic] it grew without bound: no reading of a steady state
    assert_eq!(s.verdict, Verdict::Unbounded);
    assert_eq!(s.kaplan_yorke, None);
    // ...and in the averaging time, where the estimates up to the last good step remain.
    let s = compute(
        blow_up(),
        &spec(Method::Dp853, 1e-9, 0.5, 5.0),
        &ExponentSettings::all(),
    );
    let StopReason::Escaped { t, .. } = s.reason else {
        panic!("expected an escape, got {:?}", s.reason)
    };
    assert!(t > 0.99 && t < 1.0, "t = {t}");
    assert!(s.time > 0.4 && s.time < 0.5);
    assert!(s.exponents[0].is_finite());
    assert_eq!(s.verdict, Verdict::Unbounded);
    assert_eq!(s.kaplan_yorke, None);
    // [analytic] x' = 0.3 x, y' = -3 y from (1, 1) passes 1e6 at t = ln(1e6) / 0.3 = 46: its
    // exponents (0.3, -3) look chaotic and give a dimension of 1.1, but the motion is an
    // escape, and a run that stopped early is not read at all
    let saddle = || model(&[("x", 1.0, "0.3*x"), ("y", 1.0, "-3*y")], &[]);
    let s = compute(
        saddle(),
        &spec(Method::Dp853, 1e-9, 0.0, 100.0),
        &ExponentSettings::all(),
    );
    assert!(
        matches!(s.reason, StopReason::Escaped { .. }),
        "{:?}",
        s.reason
    );
    assert_eq!(s.verdict, Verdict::Unbounded);
    assert_eq!(s.kaplan_yorke, None);
    let interrupt = Interrupt::new();
    interrupt.raise();
    let s = spectrum(
        saddle(),
        &spec(Method::Dp853, 1e-9, 0.0, 10.0),
        &ExponentSettings::all(),
        &mut (),
        &interrupt,
    )
    .expect("runs");
    assert_eq!(s.verdict, Verdict::Undecided);
    assert_eq!(s.kaplan_yorke, None);
    // [analytic] a NaN start is refused at the start time
    let s = compute(
        model(&[("x", f64::NAN, "-x")], &[]),
        &spec(Method::Dp5, 1e-9, 0.0, 5.0),
        &ExponentSettings::all(),
    );
    assert_eq!(s.reason, StopReason::NotFinite { t: 0.0 });
}

#[test]
fn unusable_settings_are_refused() {
    let run = spec(Method::Dp853, 1e-9, 0.0, 10.0);
    let two = || planar_cycle();
    let with = |settings: ExponentSettings, run: &RunSpec| {
        spectrum(two(), run, &settings, &mut (), &Interrupt::new()).err()
    };
    let count = |c| ExponentSettings {
        count: Some(c),
        ..ExponentSettings::all()
    };
    assert_eq!(
        with(count(0), &run),
        Some(ExponentError::Count {
            requested: 0,
            n_states: 2
        })
    );
    assert_eq!(
        with(count(3), &run),
        Some(ExponentError::Count {
            requested: 3,
            n_states: 2
        })
    );
    let no_span = RunSpec {
        span: 0.0,
        ..run.clone()
    };
    assert!(matches!(
        with(ExponentSettings::all(), &no_span),
        Some(ExponentError::Window { .. })
    ));
    let bad_settle = RunSpec {
        settle: f64::NAN,
        ..run.clone()
    };
    assert!(matches!(
        with(ExponentSettings::all(), &bad_settle),
        Some(ExponentError::Window { .. })
    ));
    let growth = ExponentSettings {
        growth_limit: 1.0,
        ..ExponentSettings::all()
    };
    assert_eq!(with(growth, &run), Some(ExponentError::GrowthLimit(1.0)));
    let tail = ExponentSettings {
        tail_fraction: 0.0,
        ..ExponentSettings::all()
    };
    assert_eq!(with(tail, &run), Some(ExponentError::TailFraction(0.0)));
    // the messages say what to change
    let message = with(count(3), &run)
        .map(|e| e.to_string())
        .unwrap_or_default();
    assert!(message.contains("1 to 2"), "{message}");
    // [analytic] a start at 1e20 is finite, the settle time 0 and the span 10 positive, but
    // times there are 16384 apart: the span rounds to nothing, and that is what is said
    let far = RunSpec {
        t_start: 1e20,
        ..run.clone()
    };
    let err = with(ExponentSettings::all(), &far).expect("refused");
    assert!(matches!(err, ExponentError::TimeTooCoarse(_)), "{err}");
    let message = err.to_string();
    assert!(
        message.contains("16384") && message.contains("nearer 0"),
        "{message}"
    );
}

#[test]
fn rates_that_jump_without_a_located_switch_are_flagged() {
    // (rates chosen so that no trajectory slides along a jump, which would stall the steps)
    let run = spec(Method::Dp853, 1e-9, 0.0, 1.0);
    let flagged = |rate: &str| {
        let m = model(&[("x", 0.5, rate), ("y", 0.0, "-y")], &[("k", 2.0)]);
        compute(m, &run, &ExponentSettings::all()).rates_jump
    };
    // [analytic] a remainder jumps as x moves and is not a located switch: its jumps are
    // left out; a relay term, a staircase and a threshold are switches, held and crossed
    // with the saltation matrix (Müller 1995), so nothing is left out
    assert!(flagged("2 - (x % 0.3)"));
    assert!(!flagged("-x + 0.1*sign(x + 2)"));
    assert!(!flagged("-floor(k*x + 5)/k"));
    assert!(!flagged("-x + 0.1*step(x - 3)"));
    // [analytic] kinks are continuous; a jump in time alone moves every trajectory alike
    assert!(!flagged("-abs(x) + max(x, 0)"));
    assert!(!flagged("-x + step(t - 0.5) + sign(k)"));
}

#[test]
fn a_sliding_mode_is_reported_as_chattering_where_it_starts() {
    // [analytic] x' = -sign(x) from x = 1 reaches the surface x = 0 at t = 1 and slides on
    // it: the field points into it from both sides
    for (settle, method) in [
        (0.0, Method::Dp853),
        (5.0, Method::Dp853),
        (0.0, Method::Automatic),
    ] {
        let m = model(&[("x", 1.0, "-sign(x)"), ("y", 0.5, "-y")], &[]);
        let s = compute(
            m,
            &spec(method, 1e-9, settle, 10.0),
            &ExponentSettings::all(),
        );
        let StopReason::Chattering { t } = s.reason else {
            panic!("settle {settle}: {:?}", s.reason);
        };
        assert!((t - 1.0).abs() < 1e-6, "t = {t}");
        assert_eq!(s.verdict, Verdict::Undecided);
        assert_eq!(s.kaplan_yorke, None);
    }
    // [analytic] the relay oscillator x'' = -sign(x) switches every so often but never
    // slides: its run finishes
    let relay = model(&[("x", 1.0, "v"), ("v", 0.0, "-sign(x)")], &[]);
    let s = compute(
        relay,
        &spec(Method::Dp853, 1e-9, 0.0, 30.0),
        &ExponentSettings::all(),
    );
    assert_eq!(s.reason, StopReason::Finished);
}
