//! The integrators against exact solutions, their order, step control and failure reports.
//!
//! One harness runs every method against every exact model; each model is a function
//! returning its rates, start state and exact solution.

use std::f64::consts::PI;

use lamina_core::integrate::{FnRates, Integrator, Method, Rates, StepControl, StepError};

const METHODS: [Method; 2] = [Method::Dp5, Method::Dp853];

fn control(rtol: f64, atol: f64) -> StepControl {
    StepControl {
        rtol,
        atol,
        max_step: None,
        initial_step: None,
    }
}

// ---------------------------------------------------------------------------------------------
// Exact models: (rates, start state at t = 0, exact solution)

/// x' = -0.7 x (REFERENCES case 1), from x = 1.3.
fn linear_decay() -> (impl Rates, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    const K: f64 = 0.7;
    let x0 = 1.3;
    let rates = FnRates::new(1, |_t: f64, x: &[f64], dx: &mut [f64]| dx[0] = -K * x[0]);
    // [analytic] x(t) = x0 exp(-k t)
    (rates, vec![x0], move |t: f64| vec![x0 * (-K * t).exp()])
}

/// x' = v, v' = -w^2 x with w = 2 (REFERENCES case 2), from (0.8, -0.3).
fn harmonic_oscillator() -> (impl Rates, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    oscillator_from(0.8, -0.3)
}

fn oscillator_from(x0: f64, v0: f64) -> (impl Rates, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    const W: f64 = 2.0;
    let rates = FnRates::new(2, |_t: f64, x: &[f64], dx: &mut [f64]| {
        dx[0] = x[1];
        dx[1] = -W * W * x[0];
    });
    // [analytic] x(t) = x0 cos(w t) + v0 sin(w t) / w, v = x'
    let exact = move |t: f64| {
        let (s, c) = (W * t).sin_cos();
        vec![x0 * c + v0 * s / W, -x0 * W * s + v0 * c]
    };
    (rates, vec![x0, v0], exact)
}

/// x' = -x / 2 + cos(3 t), a forced linear model, from x = 0.4.
fn forced_linear() -> (impl Rates, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    let x0 = 0.4;
    let rates = FnRates::new(1, |t: f64, x: &[f64], dx: &mut [f64]| {
        dx[0] = -0.5 * x[0] + (3.0 * t).cos()
    });
    // [analytic] x(t) = (x0 - 2/37) exp(-t/2) + (2 cos 3t + 12 sin 3t) / 37
    let exact = move |t: f64| {
        let (s, c) = (3.0 * t).sin_cos();
        vec![(x0 - 2.0 / 37.0) * (-0.5 * t).exp() + (2.0 * c + 12.0 * s) / 37.0]
    };
    (rates, vec![x0], exact)
}

/// The planar limit cycle of REFERENCES case 3 with w = 2, from radius 0.5 on the x axis.
fn limit_cycle() -> (impl Rates, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    limit_cycle_from(0.5)
}

fn limit_cycle_from(r0: f64) -> (impl Rates, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    const W: f64 = 2.0;
    let rates = FnRates::new(2, |_t: f64, x: &[f64], dx: &mut [f64]| {
        let g = 1.0 - (x[0] * x[0] + x[1] * x[1]);
        dx[0] = x[0] * g - W * x[1];
        dx[1] = x[1] * g + W * x[0];
    });
    // [analytic] polar form r' = r (1 - r^2), theta' = w:
    // r(t) = [1 + (r0^-2 - 1) exp(-2t)]^(-1/2), theta(t) = w t
    let exact = move |t: f64| {
        let r = (1.0 + (r0.powi(-2) - 1.0) * (-2.0 * t).exp()).powf(-0.5);
        let (s, c) = (W * t).sin_cos();
        vec![r * c, r * s]
    };
    (rates, vec![r0, 0.0], exact)
}

/// Lorenz (10, 28, 8/3).
fn lorenz() -> impl Rates {
    FnRates::new(3, |_t: f64, x: &[f64], dx: &mut [f64]| {
        dx[0] = 10.0 * (x[1] - x[0]);
        dx[1] = x[0] * (28.0 - x[2]) - x[1];
        dx[2] = x[0] * x[1] - 8.0 / 3.0 * x[2];
    })
}

// ---------------------------------------------------------------------------------------------
// The harness

/// Largest errors of a run against the exact solution, in multiples of `atol + rtol |x|`.
#[derive(Debug)]
struct RunErrors {
    /// At the end time.
    end: f64,
    /// Of the dense output at interior points of every step.
    dense: f64,
}

/// Integrates `model` from 0 to `t_end` with `control` and compares the end state and the
/// dense output inside every step with the exact solution.
fn run_against_exact<R: Rates, E: Fn(f64) -> Vec<f64>>(
    method: Method,
    model: (R, Vec<f64>, E),
    t_end: f64,
    control: StepControl,
) -> (Integrator, RunErrors) {
    let (mut rates, x0, exact) = model;
    let scaled_error = |num: &[f64], t: f64| {
        let ex = exact(t);
        num.iter()
            .zip(&ex)
            .map(|(a, b)| (a - b).abs() / (control.atol + control.rtol * b.abs()))
            .fold(0.0, f64::max)
    };
    let mut integrator = Integrator::new(method, control, x0.len());
    integrator.reset(&mut rates, 0.0, &x0);
    let mut dense = 0.0_f64;
    let mut out = vec![0.0; x0.len()];
    while integrator.t() < t_end {
        integrator
            .step(&mut rates, t_end)
            .expect("a step of a smooth model");
        let seg = integrator.segment();
        for s in [0.1, 0.3, 0.5, 0.7, 0.9] {
            let t = seg.t0 + s * seg.h;
            seg.eval(t, &mut out);
            dense = dense.max(scaled_error(&out, t));
        }
    }
    assert_eq!(integrator.t(), t_end);
    let end = scaled_error(integrator.x(), t_end);
    (integrator, RunErrors { end, dense })
}

/// Every method follows the model to within a small multiple of the tolerance.
fn check_model<R: Rates, E: Fn(f64) -> Vec<f64>>(
    name: &str,
    model: fn() -> (R, Vec<f64>, E),
    t_end: f64,
) {
    for method in METHODS {
        for rtol in [1e-7, 1e-10] {
            let (_, errors) = run_against_exact(method, model(), t_end, control(rtol, rtol));
            // [common practice] the global error of a tolerance-controlled run over a few time
            // units stays within a small multiple of the tolerance, and so does the dense
            // output between the steps
            assert!(
                errors.end < 10.0,
                "{name}, {method:?}, rtol {rtol:e}: {errors:?}"
            );
            assert!(
                errors.dense < 20.0,
                "{name}, {method:?}, rtol {rtol:e}: {errors:?}"
            );
        }
    }
}

#[test]
fn every_method_follows_every_exact_model() {
    check_model("linear decay", linear_decay, 2.0);
    check_model("harmonic oscillator", harmonic_oscillator, 10.0);
    check_model("forced linear", forced_linear, 10.0);
    check_model("limit cycle", limit_cycle, 2.0 * PI);
}

/// Runs `model` from 0 to `t_end` and returns the end state.
fn end_state<R: Rates>(
    method: Method,
    rates: &mut R,
    x0: &[f64],
    t_end: f64,
    rtol: f64,
) -> Vec<f64> {
    let mut integrator = Integrator::new(method, control(rtol, rtol * 1e-2), x0.len());
    integrator.reset(rates, 0.0, x0);
    while integrator.t() < t_end {
        integrator
            .step(rates, t_end)
            .expect("a step of a smooth model");
    }
    integrator.x().to_vec()
}

#[test]
fn linear_decay_strobe_factor_matches_the_reference() {
    for method in METHODS {
        let (mut rates, _, _) = linear_decay();
        let x = end_state(method, &mut rates, &[1.0], 2.0, 1e-12);
        // REFERENCES case 1 [analytic]: factor exp(-1.4) over T = 2, relative 1e-10
        assert!(
            (x[0] / 0.2465969639416065 - 1.0).abs() < 1e-10,
            "{method:?}: {}",
            x[0]
        );
    }
}

#[test]
fn harmonic_oscillator_map_matches_the_monodromy_matrix() {
    // REFERENCES case 2 [analytic]: [[cos 2, sin 2 / 2], [-2 sin 2, cos 2]], 1e-9
    let monodromy = [
        [-0.4161468365, 0.4546487134],
        [-1.8185948537, -0.4161468365],
    ];
    for method in METHODS {
        for (col, x0) in [[1.0, 0.0], [0.0, 1.0]].iter().enumerate() {
            let (mut rates, _, _) = oscillator_from(x0[0], x0[1]);
            let x = end_state(method, &mut rates, x0, 1.0, 1e-12);
            for row in 0..2 {
                // REFERENCES case 2 [analytic]
                assert!(
                    (x[row] - monodromy[row][col]).abs() < 1e-9,
                    "{method:?}: {x:?}"
                );
            }
        }
    }
}

#[test]
fn limit_cycle_return_radius_matches_the_exact_return_map() {
    // REFERENCES case 3 [analytic]: return time pi, P(0.5) = 0.99721055100, P(2) = 1.00070102750
    for (r0, p) in [(0.5, 0.99721055100), (2.0, 1.00070102750)] {
        for method in METHODS {
            let (mut rates, x0, _) = limit_cycle_from(r0);
            let x = end_state(method, &mut rates, &x0, PI, 1e-12);
            // REFERENCES case 3 [analytic]; the point is back on the positive x axis
            assert!(
                (x[0].hypot(x[1]) - p).abs() < 1e-10,
                "{method:?}, r0 {r0}: {x:?}"
            );
            assert!(
                x[1].abs() < 1e-10 && x[0] > 0.0,
                "{method:?}, r0 {r0}: {x:?}"
            );
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Orders

/// Global error at t = 2 of the oscillator with `n` fixed steps.
fn fixed_step_error(method: Method, n: u32) -> f64 {
    let (mut rates, x0, exact) = harmonic_oscillator();
    let h = 2.0 / f64::from(n);
    let mut integrator = Integrator::new(method, StepControl::default(), 2);
    integrator.reset(&mut rates, 0.0, &x0);
    for _ in 0..n {
        integrator
            .step_fixed(&mut rates, h)
            .expect("a fixed step of a smooth model");
    }
    let ex = exact(integrator.t());
    (integrator.x()[0] - ex[0]).hypot(integrator.x()[1] - ex[1])
}

#[test]
fn halving_the_fixed_step_divides_the_global_error_by_two_to_the_order() {
    // REFERENCES cases 13, 14 [common practice]: ratio near 2^5 = 32 (DP5) and 2^8 = 256
    // (DOP853); steps h = 0.05 / 0.025 (DP5) and 0.2 / 0.1 (DOP853) are in the asymptotic range
    for (method, n, low, high) in [
        (Method::Dp5, 40, 25.0, 40.0),
        (Method::Dp853, 10, 180.0, 330.0),
    ] {
        let ratio = fixed_step_error(method, n) / fixed_step_error(method, 2 * n);
        // REFERENCES cases 13, 14 [common practice]
        assert!(ratio > low && ratio < high, "{method:?}: ratio {ratio}");
    }
}

/// Largest error of the dense output inside one fixed step of size `h` on the limit cycle.
fn dense_error(method: Method, h: f64) -> f64 {
    let (mut rates, x0, exact) = limit_cycle();
    let mut integrator = Integrator::new(method, StepControl::default(), 2);
    integrator.reset(&mut rates, 0.0, &x0);
    integrator
        .step_fixed(&mut rates, h)
        .expect("a fixed step of a smooth model");
    let mut out = [0.0; 2];
    let mut err = 0.0_f64;
    for s in [0.25, 0.5, 0.75] {
        integrator.segment().eval(s * h, &mut out);
        let ex = exact(s * h);
        err = err.max((out[0] - ex[0]).hypot(out[1] - ex[1]));
    }
    err
}

#[test]
fn dense_output_error_shrinks_with_its_order() {
    // [common practice] an interpolant of order p has local error O(h^(p+1)): DP5's dense
    // output is of order 4 (ratio 32 when h is halved), DOP853's of order 7 (ratio 256)
    for (method, h, low, high) in [
        (Method::Dp5, 0.1, 25.0, 40.0),
        (Method::Dp853, 0.2, 180.0, 330.0),
    ] {
        let ratio = dense_error(method, h) / dense_error(method, h / 2.0);
        // [common practice] see above
        assert!(ratio > low && ratio < high, "{method:?}: ratio {ratio}");
    }
}

// ---------------------------------------------------------------------------------------------
// The stepper's contract

#[test]
fn segment_starts_and_ends_at_the_step_states() {
    for (method, n_terms) in [(Method::Dp5, 5), (Method::Dp853, 8)] {
        let (mut rates, x0, _) = limit_cycle();
        let mut integrator = Integrator::new(method, control(1e-8, 1e-8), 2);
        integrator.reset(&mut rates, 0.0, &x0);
        assert_eq!(integrator.segment().start_state(), &x0[..]);
        for _ in 0..5 {
            let (t0, start) = (integrator.t(), integrator.x().to_vec());
            integrator.step(&mut rates, 10.0).unwrap();
            let seg = integrator.segment();
            assert_eq!(seg.n_terms(), n_terms);
            assert_eq!((seg.t0, seg.dim), (t0, 2));
            assert_eq!(seg.t1(), integrator.t());
            assert_eq!(seg.start_state(), &start[..]);
            let mut end = [0.0; 2];
            seg.end_state(&mut end);
            for (a, b) in end.iter().zip(integrator.x()) {
                assert!((a - b).abs() <= 1e-15 * b.abs().max(1.0));
            }
            let mut at_end = [0.0; 2];
            seg.eval(seg.t1(), &mut at_end);
            for (a, b) in at_end.iter().zip(end) {
                assert!((a - b).abs() <= 1e-15 * b.abs().max(1.0));
            }
        }
    }
}

#[test]
fn steps_stop_exactly_at_the_limit() {
    for method in METHODS {
        let (mut rates, x0, _) = forced_linear();
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 1);
        integrator.reset(&mut rates, 0.0, &x0);
        for k in 1..=20 {
            let t_limit = 0.05 * f64::from(k);
            while integrator.t() < t_limit {
                integrator.step(&mut rates, t_limit).unwrap();
                assert!(integrator.t() <= t_limit);
            }
            assert_eq!(integrator.t(), t_limit);
        }
    }
}

#[test]
fn max_step_is_respected() {
    for method in METHODS {
        let (mut rates, x0, _) = linear_decay();
        let mut settings = control(1e-6, 1e-6);
        settings.max_step = Some(0.01);
        let mut integrator = Integrator::new(method, settings, 1);
        integrator.reset(&mut rates, 0.0, &x0);
        while integrator.t() < 1.0 {
            integrator.step(&mut rates, 1.0).unwrap();
            assert!(
                integrator.segment().h <= 0.01,
                "{method:?}: {}",
                integrator.segment().h
            );
            assert!(integrator.h_next() <= 0.01);
        }
        assert!(integrator.stats().n_accepted >= 100);
    }
}

#[test]
fn a_given_initial_step_is_used() {
    for method in METHODS {
        let (mut rates, x0, _) = linear_decay();
        let mut settings = control(1e-6, 1e-6);
        settings.initial_step = Some(1e-3);
        let mut integrator = Integrator::new(method, settings, 1);
        integrator.reset(&mut rates, 0.0, &x0);
        integrator.step(&mut rates, 1.0).unwrap();
        assert_eq!(integrator.segment().h, 1e-3);
    }
}

#[test]
fn evaluation_counts_follow_first_same_as_last() {
    // per attempt DP5 evaluates stages 2-7 (6), DOP853 stages 2-12 (11) plus, on acceptance,
    // stage 13 and the three dense-output stages (4); start: f(t0, x0) and the initial guess
    for (method, per_attempt, per_accept) in [(Method::Dp5, 6, 0), (Method::Dp853, 11, 4)] {
        let mut rates = lorenz();
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 3);
        integrator.reset(&mut rates, 0.0, &[1.0, 1.0, 1.0]);
        while integrator.t() < 5.0 {
            integrator.step(&mut rates, 5.0).unwrap();
        }
        let s = integrator.stats();
        let expected = 2 + per_attempt * (s.n_accepted + s.n_rejected) + per_accept * s.n_accepted;
        assert_eq!(s.n_rate_evaluations, expected, "{method:?}: {s:?}");
    }
}

#[test]
fn reset_gives_the_same_run_again() {
    for method in METHODS {
        let (mut rates, x0, _) = limit_cycle();
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 2);
        let mut run = || {
            integrator.reset(&mut rates, 0.0, &x0);
            while integrator.t() < 3.0 {
                integrator.step(&mut rates, 3.0).unwrap();
            }
            (integrator.x().to_vec(), integrator.segment().clone())
        };
        assert_eq!(run(), run());
    }
}

// ---------------------------------------------------------------------------------------------
// Step control

#[test]
fn pi_controller_rejects_few_steps_on_lorenz() {
    for method in METHODS {
        let mut rates = lorenz();
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 3);
        integrator.reset(&mut rates, 0.0, &[1.0, 1.0, 1.0]);
        while integrator.t() < 100.0 {
            integrator.step(&mut rates, 100.0).unwrap();
        }
        let s = integrator.stats();
        // [common practice] a stabilised (PI) step-size rule rejects only a few per cent
        assert!(
            (s.n_rejected as f64) < 0.05 * s.n_accepted as f64,
            "{method:?}: {s:?}"
        );
    }
}

#[test]
fn tighter_tolerance_gives_smaller_error() {
    for method in METHODS {
        let loose = run_against_exact(method, limit_cycle(), 5.0, control(1e-6, 1e-6)).1;
        let tight = run_against_exact(method, limit_cycle(), 5.0, control(1e-9, 1e-9)).1;
        // errors are in multiples of each run's tolerance: a 1000-fold tighter tolerance
        // gives at least a tenfold smaller absolute error [common practice]
        assert!(
            tight.end * 1e-9 < 0.1 * loose.end * 1e-6,
            "{method:?}: {loose:?} {tight:?}"
        );
        assert!(
            tight.dense * 1e-9 < 0.1 * loose.dense * 1e-6,
            "{method:?}: {loose:?} {tight:?}"
        );
    }
}

// ---------------------------------------------------------------------------------------------
// Failures are reported, not panicked on

/// Steps towards `t_end` until an error comes back.
fn first_error<R: Rates>(integrator: &mut Integrator, rates: &mut R, t_end: f64) -> StepError {
    loop {
        if let Err(e) = integrator.step(rates, t_end) {
            return e;
        }
        assert!(integrator.t() < t_end, "reached {t_end} without an error");
    }
}

#[test]
fn blow_up_reports_step_too_small_near_the_blow_up_time() {
    for method in METHODS {
        let mut rates = FnRates::new(1, |_t: f64, x: &[f64], dx: &mut [f64]| dx[0] = x[0] * x[0]);
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 1);
        integrator.reset(&mut rates, 0.0, &[1.0]);
        let error = first_error(&mut integrator, &mut rates, 2.0);
        let StepError::StepTooSmall { t, h } = error else {
            panic!("{method:?}: {error:?}");
        };
        // [analytic] x = 1 / (1 - t) blows up at t = 1
        assert!((t - 1.0).abs() < 1e-6, "{method:?}: {error:?}");
        assert!(h < 1e-12 && t == integrator.t());
    }
}

#[test]
fn non_finite_rates_are_reported_with_the_last_good_time() {
    for method in METHODS {
        let mut rates = FnRates::new(1, |t: f64, x: &[f64], dx: &mut [f64]| {
            dx[0] = if t > 0.5 { f64::NAN } else { -x[0] }
        });
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 1);
        integrator.reset(&mut rates, 0.0, &[1.0]);
        let error = first_error(&mut integrator, &mut rates, 2.0);
        let StepError::NotFinite { t } = error else {
            panic!("{method:?}: {error:?}");
        };
        assert!(t <= 0.5 && t > 0.5 - 1e-6, "{method:?}: {error:?}");
        assert_eq!(t, integrator.t());
        assert!(integrator.x()[0].is_finite() && integrator.segment().t1() <= 0.5);
    }
}

#[test]
fn bad_inputs_give_errors() {
    for method in METHODS {
        let (mut rates, x0, _) = linear_decay();
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 1);
        integrator.reset(&mut rates, 1.0, &x0);
        assert!(matches!(
            integrator.step(&mut rates, 1.0),
            Err(StepError::StepTooSmall { .. })
        ));
        assert!(matches!(
            integrator.step(&mut rates, 0.5),
            Err(StepError::StepTooSmall { .. })
        ));
        assert!(matches!(
            integrator.step(&mut rates, f64::NAN),
            Err(StepError::StepTooSmall { .. })
        ));
        assert!(matches!(
            integrator.step_fixed(&mut rates, -0.1),
            Err(StepError::StepTooSmall { .. })
        ));
        assert!(matches!(
            integrator.step_fixed(&mut rates, f64::NAN),
            Err(StepError::StepTooSmall { .. })
        ));

        integrator.reset(&mut rates, 0.0, &[f64::NAN]);
        assert_eq!(
            integrator.step(&mut rates, 1.0),
            Err(StepError::NotFinite { t: 0.0 })
        );
        assert_eq!(
            integrator.step_fixed(&mut rates, 0.1),
            Err(StepError::NotFinite { t: 0.0 })
        );

        // an unusable initial step is replaced by the automatic choice
        for h0 in [f64::NAN, -1.0, 0.0, f64::INFINITY] {
            let mut settings = control(1e-9, 1e-9);
            settings.initial_step = Some(h0);
            let mut integrator = Integrator::new(method, settings, 1);
            integrator.reset(&mut rates, 0.0, &x0);
            integrator.step(&mut rates, 1.0).unwrap();
            assert!(integrator.t() > 0.0 && integrator.t() <= 1.0);
        }

        // a step limit that is not positive leaves no room for a step
        let mut settings = control(1e-9, 1e-9);
        settings.max_step = Some(0.0);
        let mut integrator = Integrator::new(method, settings, 1);
        integrator.reset(&mut rates, 0.0, &x0);
        assert!(matches!(
            integrator.step(&mut rates, 1.0),
            Err(StepError::StepTooSmall { .. })
        ));

        // an empty system steps without trouble
        let mut empty = FnRates::new(0, |_t: f64, _x: &[f64], _dx: &mut [f64]| {});
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 0);
        integrator.reset(&mut empty, 0.0, &[]);
        while integrator.t() < 1.0 {
            integrator.step(&mut empty, 1.0).unwrap();
        }

        // a state of another length than announced re-sizes the integrator
        let (mut rates2, x2, _) = harmonic_oscillator();
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 1);
        integrator.reset(&mut rates2, 0.0, &x2);
        integrator.step(&mut rates2, 1.0).unwrap();
        assert_eq!(integrator.x().len(), 2);
    }
}

#[test]
fn stepping_without_reset_starts_from_zero() {
    for method in METHODS {
        let (mut rates, _, _) = forced_linear();
        let mut integrator = Integrator::new(method, control(1e-9, 1e-9), 1);
        integrator.step(&mut rates, 0.1).unwrap();
        assert!(integrator.t() > 0.0 && integrator.x()[0] > 0.0);
        assert_eq!(integrator.segment().start_state(), &[0.0]);
    }
}

/// The harmonic oscillator (REFERENCES case 2) with a value riding along that varies much
/// faster than the states, `q' = 40 cos(40 t) x`.
fn oscillator_with_rider() -> impl Rates {
    FnRates::new(3, |t: f64, y: &[f64], dy: &mut [f64]| {
        dy[0] = y[1];
        dy[1] = -4.0 * y[0];
        dy[2] = 40.0 * (40.0 * t).cos() * y[0];
    })
}

#[test]
fn values_left_out_of_the_error_control_ride_along_on_the_states_steps() {
    for method in [
        Method::Dp5,
        Method::Dp853,
        Method::Rodas4,
        Method::Automatic,
    ] {
        let mut alone = harmonic_oscillator().0;
        let mut states = Integrator::new(method, control(1e-9, 1e-12), 2);
        states.reset(&mut alone, 0.0, &[0.8, -0.3]);
        let mut rider = oscillator_with_rider();
        let mut both = Integrator::new(method, control(1e-9, 1e-12), 3);
        both.control_error_of_first(Some(2));
        both.reset(&mut rider, 0.0, &[0.8, -0.3, 0.0]);
        while states.t() < 10.0 {
            states.step(&mut alone, 10.0).expect("steps");
            both.step(&mut rider, 10.0).expect("steps");
            // [analytic] the states' rates do not involve the rider, so the states' stages,
            // errors and steps are the same to the bit when only the states are measured
            assert_eq!(both.t(), states.t(), "{method:?}");
            assert_eq!(&both.x()[..2], states.x(), "{method:?}");
        }
        let steps_alone = states.stats().n_accepted;
        // with the rider measured too, its fast wiggle shortens the steps
        let mut all = Integrator::new(method, control(1e-9, 1e-12), 3);
        all.reset(&mut rider, 0.0, &[0.8, -0.3, 0.0]);
        while all.t() < 10.0 {
            all.step(&mut rider, 10.0).expect("steps");
        }
        assert!(
            all.stats().n_accepted > steps_alone,
            "{method:?}: {} steps with the rider measured, {steps_alone} without",
            all.stats().n_accepted
        );
    }
}
