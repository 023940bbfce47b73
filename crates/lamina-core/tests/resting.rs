//! Resting points against analytic values: Lorenz's three points and their eigenvalues, the
//! Brusselator's point with its pair on the imaginary axis, one-state models, the kinds in
//! words, forced models refused, and cancelling.

mod common;

use common::*;
use lamina_core::Interrupt;
use lamina_core::rest::{RestError, RestKind, RestSettings, find_resting_points};

fn lorenz(rho: f64) -> lamina_core::model::Model {
    model(
        &[
            ("x", 1.0, "sigma*(y - x)"),
            ("y", 1.0, "rho*x - y - x*z"),
            ("z", 1.0, "x*y - beta*z"),
        ],
        &[("sigma", 10.0), ("rho", rho), ("beta", 8.0 / 3.0)],
    )
}

#[test]
fn lorenz_has_three_resting_points_with_their_eigenvalue_structure() {
    let m = lorenz(28.0);
    let report = find_resting_points(
        &m,
        &window(1e-9, 10.0, 20.0),
        &RestSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .expect("search");
    assert_eq!(report.points.len(), 3, "{:?}", report.points);
    let origin = report
        .points
        .iter()
        .find(|p| p.state.iter().all(|v| v.abs() < 1e-9))
        .expect("the origin");
    // [analytic] REFERENCES case 20: the origin is a saddle with one unstable direction; its
    // eigenvalues are -8/3 and (-11 +- sqrt(1201)) / 2
    assert_eq!(origin.kind, RestKind::Saddle);
    assert_eq!(origin.n_unstable, 1);
    assert!(!origin.stable);
    let mut values: Vec<f64> = origin.eigenvalues.iter().map(|e| e.re).collect();
    values.sort_by(f64::total_cmp);
    let root = 1201f64.sqrt();
    for (got, want) in values
        .iter()
        .zip([(-11.0 - root) / 2.0, -8.0 / 3.0, (-11.0 + root) / 2.0])
    {
        assert!((got - want).abs() < 1e-12, "{got} vs {want}");
    }
    let c = 72f64.sqrt();
    for sign in [1.0, -1.0] {
        let point = report
            .points
            .iter()
            .find(|p| (p.state[0] - sign * c).abs() < 1e-9)
            .unwrap_or_else(|| panic!("no point at x = {}", sign * c));
        // [analytic] REFERENCES case 7: (+-sqrt 72, +-sqrt 72, 27)
        assert!((point.state[1] - sign * c).abs() < 1e-9 && (point.state[2] - 27.0).abs() < 1e-9);
        // [analytic] REFERENCES case 20: one real negative eigenvalue and a complex pair of
        // small positive real part: a saddle focus with two unstable directions
        assert_eq!(point.kind, RestKind::SaddleFocus);
        assert_eq!(point.n_unstable, 2);
        let real: Vec<_> = point.eigenvalues.iter().filter(|e| e.is_real()).collect();
        assert_eq!(real.len(), 1);
        assert!(real[0].re < 0.0);
        for e in point.eigenvalues.iter().filter(|e| !e.is_real()) {
            assert!(e.re > 0.0 && e.re < 0.2, "{e}");
        }
        // [analytic] the eigenvalues sum to the trace -(sigma + 1 + beta) = -41/3
        let trace: f64 = point.eigenvalues.iter().map(|e| e.re).sum();
        assert!((trace + 41.0 / 3.0).abs() < 1e-10);
        assert!(!point.reached_by_run);
    }
    assert!(report.n_seeds > 100 && report.n_converged > 3);
}

#[test]
fn a_run_that_settles_marks_its_resting_point() {
    let m = lorenz(20.0);
    let report = find_resting_points(
        &m,
        &window(1e-9, 100.0, 50.0),
        &RestSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .expect("search");
    assert_eq!(report.points.len(), 3);
    let first = &report.points[0];
    assert!(first.reached_by_run, "{first:?}");
    // [analytic] below rho_H = 470/19 the points (+-sqrt(beta (rho - 1)), ..., rho - 1) are
    // stable foci
    assert_eq!(first.kind, RestKind::StableFocus);
    assert!(first.stable);
    assert!((first.state[2] - 19.0).abs() < 1e-9);
    assert_eq!(report.points.iter().filter(|p| p.reached_by_run).count(), 1);
}

#[test]
fn brusselator_pair_on_the_imaginary_axis() {
    for a in [1.0, 2.0] {
        let b = 1.0 + a * a;
        let m = model(
            &[
                ("x", a + 0.1, "a - (b + 1)*x + x^2*y"),
                ("y", b / a, "b*x - x^2*y"),
            ],
            &[("a", a), ("b", b)],
        );
        let report = find_resting_points(
            &m,
            &window(1e-9, 0.0, 5.0),
            &RestSettings::default(),
            &mut (),
            &Interrupt::new(),
        )
        .expect("search");
        assert_eq!(report.points.len(), 1, "{:?}", report.points);
        let point = &report.points[0];
        // [analytic] REFERENCES case 20: the resting point (A, B / A) with eigenvalues +-i A
        // at B = 1 + A^2
        assert!((point.state[0] - a).abs() < 1e-12 && (point.state[1] - b / a).abs() < 1e-12);
        for e in &point.eigenvalues {
            assert!(e.re.abs() < 1e-12 && (e.im.abs() - a).abs() < 1e-12, "{e}");
        }
        assert_eq!(point.kind, RestKind::Centre);
        assert!(!point.stable);
    }
}

#[test]
fn one_state_models_and_van_der_pol() {
    let m = model(&[("x", 0.5, "m - x^2")], &[("m", 1.0)]);
    let report = find_resting_points(
        &m,
        &window(1e-9, 0.0, 5.0),
        &RestSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .expect("search");
    assert_eq!(report.points.len(), 2);
    // [analytic] x' = 1 - x^2: x = 1 is a stable node (eigenvalue -2), x = -1 an unstable one
    let stable = &report.points[0];
    assert!((stable.state[0] - 1.0).abs() < 1e-12 && stable.kind == RestKind::StableNode);
    assert!((stable.eigenvalues[0].re + 2.0).abs() < 1e-12);
    let unstable = &report.points[1];
    assert!((unstable.state[0] + 1.0).abs() < 1e-12 && unstable.kind == RestKind::UnstableNode);
    let vdp = model(
        &[("x", 0.1, "v"), ("v", 0.0, "mu*(1 - x^2)*v - x")],
        &[("mu", 1.0)],
    );
    let report = find_resting_points(
        &vdp,
        &window(1e-9, 0.0, 20.0),
        &RestSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .expect("search");
    assert_eq!(report.points.len(), 1);
    // [analytic] Van der Pol's origin at mu = 1: eigenvalues 1/2 +- i sqrt(3)/2, an unstable
    // focus
    let origin = &report.points[0];
    assert_eq!(origin.kind, RestKind::UnstableFocus);
    assert!((origin.eigenvalues[0].re - 0.5).abs() < 1e-12);
    assert!((origin.eigenvalues[0].im - 0.75f64.sqrt()).abs() < 1e-12);
    assert_eq!(origin.kind.words(), "unstable focus");
    assert_eq!(origin.kind.key(), "unstable_focus");
}

#[test]
fn forced_models_have_none_and_the_search_cancels() {
    let forced = model(&[("x", 0.0, "-x + cos(t)")], &[]);
    let outcome = find_resting_points(
        &forced,
        &window(1e-9, 0.0, 5.0),
        &RestSettings::default(),
        &mut (),
        &Interrupt::new(),
    );
    assert_eq!(outcome, Err(RestError::Forced));
    assert!(RestError::Forced.to_string().contains("lamina cycle"));
    let interrupt = Interrupt::new();
    interrupt.raise();
    let outcome = find_resting_points(
        &lorenz(28.0),
        &window(1e-9, 0.0, 5.0),
        &RestSettings::default(),
        &mut (),
        &interrupt,
    );
    assert_eq!(outcome, Err(RestError::Cancelled));
}
