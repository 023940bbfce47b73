//! The stiff method Rodas4 against exact solutions: accuracy, order, dense output,
//! stability on stiff linear models, the difference Jacobian, and its work counts.

use lamina_core::integrate::{FnRates, Integrator, Method, Rates, StepControl};
mod common;

use common::model;
use lamina_core::model::Model;

fn control(rtol: f64, atol: f64) -> StepControl {
    StepControl {
        rtol,
        atol,
        max_step: None,
        initial_step: None,
    }
}

/// Integrates from 0 to `t_end`; returns the integrator and the largest error of the end
/// state and of the dense output inside every step, in multiples of `atol + rtol |x|`.
fn run<R: Rates>(
    method: Method,
    rates: &mut R,
    x0: &[f64],
    exact: impl Fn(f64) -> Vec<f64>,
    t_end: f64,
    control: StepControl,
) -> (Integrator, f64, f64) {
    let scaled = |num: &[f64], t: f64| {
        num.iter()
            .zip(exact(t))
            .map(|(a, b)| (a - b).abs() / (control.atol + control.rtol * b.abs()))
            .fold(0.0, f64::max)
    };
    let mut integrator = Integrator::new(method, control, x0.len());
    integrator.reset(rates, 0.0, x0);
    let mut dense = 0.0_f64;
    let mut out = vec![0.0; x0.len()];
    while integrator.t() < t_end {
        integrator
            .step(rates, t_end)
            .expect("a step of a smooth model");
        let seg = integrator.segment();
        for s in [0.1, 0.3, 0.5, 0.7, 0.9] {
            let t = seg.t0 + s * seg.h;
            seg.eval(t, &mut out);
            dense = dense.max(scaled(&out, t));
        }
    }
    let end = scaled(integrator.x(), t_end);
    (integrator, end, dense)
}

/// x' = v, v' = -4 x from (0.8, -0.3): x = 0.8 cos 2t - 0.15 sin 2t [analytic].
fn oscillator() -> (Model, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    let m = model(&[("x", 0.8, "v"), ("v", -0.3, "-w^2*x")], &[("w", 2.0)]);
    let exact = |t: f64| {
        let (s, c) = (2.0 * t).sin_cos();
        vec![0.8 * c - 0.15 * s, -1.6 * s - 0.3 * c]
    };
    (m, vec![0.8, -0.3], exact)
}

/// The stiff linear system u' = 998 u + 1998 v, v' = -999 u - 1999 v from (1, 0), with
/// eigenvalues -1 and -1000: u = 2 exp(-t) - exp(-1000 t), v = -exp(-t) + exp(-1000 t)
/// [analytic].
fn stiff_linear() -> (Model, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    let m = model(
        &[("u", 1.0, "998*u + 1998*v"), ("v", 0.0, "-999*u - 1999*v")],
        &[],
    );
    let exact = |t: f64| {
        let (slow, fast) = ((-t).exp(), (-1000.0 * t).exp());
        vec![2.0 * slow - fast, -slow + fast]
    };
    (m, vec![1.0, 0.0], exact)
}

/// A stiff forced model y' = -k (y - cos t) - sin t with k = 1e4 from y = 1.5:
/// y = cos t + 0.5 exp(-k t) [analytic]. Exercises the time derivative.
fn stiff_forced() -> (Model, Vec<f64>, impl Fn(f64) -> Vec<f64>) {
    let m = model(&[("y", 1.5, "-k*(y - cos(t)) - sin(t)")], &[("k", 1e4)]);
    let exact = |t: f64| vec![t.cos() + 0.5 * (-1e4 * t).exp()];
    (m, vec![1.5], exact)
}

#[test]
fn rodas_follows_exact_models_within_the_tolerance() {
    for rtol in [1e-6, 1e-9] {
        let c = control(rtol, rtol);
        let (mut m, x0, exact) = oscillator();
        let (_, end, dense) = run(Method::Rodas4, &mut m, &x0, exact, 10.0, c);
        // [common practice] the global error of a tolerance-controlled run over a few
        // periods stays within a small multiple of the tolerance; the third-order dense
        // output a little more
        assert!(
            end < 20.0 && dense < 50.0,
            "oscillator {rtol:e}: {end} {dense}"
        );
        let (mut m, x0, exact) = stiff_linear();
        let (_, end, dense) = run(Method::Rodas4, &mut m, &x0, exact, 10.0, c);
        // [common practice] as above
        assert!(
            end < 20.0 && dense < 50.0,
            "stiff linear {rtol:e}: {end} {dense}"
        );
        let (mut m, x0, exact) = stiff_forced();
        let (_, end, _) = run(Method::Rodas4, &mut m, &x0, exact, 5.0, c);
        // [common practice] as above for the step ends; the interpolant inside steps with
        // h k >> 1 follows a stiffly forced solution less closely (measured: up to a few
        // hundred tolerances at 1e-6), so its error is not checked here
        assert!(end < 20.0, "stiff forced {rtol:e}: {end}");
    }
}

#[test]
fn stiff_linear_system_takes_few_steps_where_dop853_takes_many() {
    let c = control(1e-6, 1e-6);
    let (mut m, x0, exact) = stiff_linear();
    let (stiff, ..) = run(Method::Rodas4, &mut m, &x0, &exact, 10.0, c);
    let (explicit, ..) = run(Method::Dp853, &mut m, &x0, &exact, 10.0, c);
    let (n_stiff, n_explicit) = (stiff.stats().n_accepted, explicit.stats().n_accepted);
    // [analytic] DOP853's stability region reaches about 6 along the negative real axis, so
    // with the eigenvalue -1000 it needs at least 10 / (6 / 1000) ~ 1700 steps whatever the
    // tolerance; an L-stable method is limited by accuracy only
    assert!(n_explicit > 1500, "DOP853: {n_explicit}");
    assert!(
        10 * n_stiff < n_explicit,
        "Rodas4 {n_stiff}, DOP853 {n_explicit}"
    );
}

/// Global error at t = 2 of the oscillator after `n` fixed steps.
fn fixed_step_error(n: u32) -> f64 {
    let (mut m, x0, exact) = oscillator();
    let mut integrator = Integrator::new(Method::Rodas4, StepControl::default(), 2);
    integrator.reset(&mut m, 0.0, &x0);
    for _ in 0..n {
        integrator
            .step_fixed(&mut m, 2.0 / f64::from(n))
            .expect("a fixed step");
    }
    let ex = exact(2.0);
    (integrator.x()[0] - ex[0]).hypot(integrator.x()[1] - ex[1])
}

#[test]
fn halving_the_fixed_step_divides_the_error_by_sixteen() {
    let ratio = fixed_step_error(20) / fixed_step_error(40);
    // [common practice] order 4: the global error falls by 2^4 = 16 when h is halved
    assert!(ratio > 13.0 && ratio < 19.0, "ratio {ratio}");
}

/// Largest dense-output error inside one fixed step of size `h` on the oscillator.
fn dense_error(h: f64) -> f64 {
    let (mut m, x0, exact) = oscillator();
    let mut integrator = Integrator::new(Method::Rodas4, StepControl::default(), 2);
    integrator.reset(&mut m, 0.0, &x0);
    integrator.step_fixed(&mut m, h).expect("a fixed step");
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
fn dense_output_is_of_order_three() {
    let ratio = dense_error(0.2) / dense_error(0.1);
    // [common practice] an interpolant of order 3 has local error O(h^4): ratio 16
    assert!(ratio > 12.0 && ratio < 20.0, "ratio {ratio}");
    // Hairer & Wanner, Solving ODEs II, sec. VI.4: Rodas' dense output has 4 terms
    let (mut m, x0, _) = oscillator();
    let mut integrator = Integrator::new(Method::Rodas4, StepControl::default(), 2);
    integrator.reset(&mut m, 0.0, &x0);
    integrator.step(&mut m, 1.0).expect("a step");
    assert_eq!(integrator.segment().n_terms(), 4);
}

#[test]
fn one_huge_step_of_the_test_equation_damps_the_solution() {
    for lambda in [-1e3, -1e6, -1e9] {
        let mut rates = FnRates::new(1, move |_t: f64, x: &[f64], dx: &mut [f64]| {
            dx[0] = lambda * x[0]
        });
        let mut integrator = Integrator::new(Method::Rodas4, StepControl::default(), 1);
        integrator.reset(&mut rates, 0.0, &[1.0]);
        integrator.step_fixed(&mut rates, 1.0).expect("one step");
        // [analytic] Rodas4 is L-stable (Hairer & Wanner, Solving ODEs II, sec. VI.4): its
        // stability function tends to 0 at infinity, so h lambda = -1e3 or beyond damps
        // the solution to about 1 / |h lambda|
        let x = integrator.x()[0];
        assert!(x.abs() < 10.0 / lambda.abs(), "lambda {lambda:e}: {x:e}");
    }
}

#[test]
fn difference_jacobian_gives_the_same_solution_as_the_exact_one() {
    let (mut typed, x0, exact) = stiff_forced();
    let mut closure = FnRates::new(1, |t: f64, x: &[f64], dx: &mut [f64]| {
        dx[0] = -1e4 * (x[0] - t.cos()) - t.sin()
    });
    let c = control(1e-8, 1e-8);
    let (with_exact, e1, _) = run(Method::Rodas4, &mut typed, &x0, &exact, 3.0, c);
    let (with_differences, e2, _) = run(Method::Rodas4, &mut closure, &x0, &exact, 3.0, c);
    // [common practice] both stay within the tolerance of the exact solution
    assert!(e1 < 20.0 && e2 < 20.0, "{e1} {e2}");
    let (s1, s2) = (with_exact.stats(), with_differences.stats());
    assert_eq!(s1.n_jacobians, s1.n_accepted);
    // per Jacobian the closure costs one evaluation per state and one for d/dt
    assert_eq!(
        s2.n_rate_evaluations,
        2 + 5 * (s2.n_accepted + s2.n_rejected) + s2.n_accepted + 2 * s2.n_jacobians
    );
    assert!(s1.n_decompositions == s1.n_accepted + s1.n_rejected);
}
