//! Switching models, exactly: the orbit multipliers and Lyapunov exponents of a
//! piecewise-linear oscillator against its monodromy matrix built independently here, as the
//! product of matrix exponentials and saltation matrices (REFERENCES.md case 19).
//!
//! The model is a damped oscillator pushed along its velocity by a relay,
//! `x' = y, y' = -2 zeta y - x + a sign(y)`: between the switches (`y = 0`) it is linear with a
//! constant push, so it flows by `exp(A t)` about the centre `(+-a, 0)`; it has a stable
//! symmetric periodic orbit that crosses `y = 0` transversally.

mod common;

use common::{model, spec};
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::lyapunov::{ExponentSettings, Verdict, spectrum};
use lamina_core::model::Model;
use nalgebra::{Matrix2, Vector2};

const ZETA: f64 = 0.1;
const PUSH: f64 = 1.0;

fn relay_oscillator() -> Model {
    model(
        &[("x", -3.0, "y"), ("y", 0.0, "-2*zeta*y - x + a*sign(y)")],
        &[("zeta", ZETA), ("a", PUSH)],
    )
}

/// `A` of the linear part.
fn a_matrix() -> Matrix2<f64> {
    Matrix2::new(0.0, 1.0, -1.0, -2.0 * ZETA)
}

/// The state after time `t` from `z0` on the branch with push `u` (`+-a`): the affine flow
/// `exp(A t) (z0 - c) + c` about the centre `c = (u, 0)`.
fn flow(z0: Vector2<f64>, u: f64, t: f64) -> Vector2<f64> {
    let centre = Vector2::new(u, 0.0);
    (a_matrix() * t).exp() * (z0 - centre) + centre
}

/// The first time after 0 at which `y` returns to 0 on the branch with push `u`, by bisection
/// on the analytic flow (y leaves 0 at once, so the first sign change after a short time).
fn switching_time(z0: Vector2<f64>, u: f64) -> f64 {
    let y = |t: f64| flow(z0, u, t)[1];
    let sign0 = y(1e-3).signum();
    let (mut lo, mut hi) = (1e-3, 1e-3);
    while y(hi).signum() == sign0 {
        lo = hi;
        hi += 0.05;
    }
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if y(mid).signum() == sign0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

/// The periodic orbit's switch point `(-X, 0)`, its period and its monodromy matrix, built
/// from the analytic flow: the half orbit from `(-X, 0)` with push `+a` ends at `(X, 0)`; `X`
/// is found by bisection on that condition; the monodromy is
/// `S2 exp(A T2) S1 exp(A T1)` with the saltation matrices `S = I + (f+ - f-) n^T / (n^T f-)`,
/// `n = (0, 1)` (Leine & Nijmeijer 2004, ch. 7).
fn exact_orbit() -> (f64, f64, Matrix2<f64>) {
    let half_end = |x: f64| {
        let z0 = Vector2::new(-x, 0.0);
        let t = switching_time(z0, PUSH);
        (flow(z0, PUSH, t)[0] - x, t)
    };
    let (mut lo, mut hi) = (1.5 * PUSH, 100.0 * PUSH);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        // the end point overshoots x (end > x) for a small start: the orbit grows
        if half_end(mid).0 > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let x = 0.5 * (lo + hi);
    let t1 = half_end(x).1;
    let z1 = Vector2::new(x, 0.0);
    let t2 = switching_time(z1, -PUSH);
    let rates = |z: Vector2<f64>, u: f64| a_matrix() * z + Vector2::new(0.0, u);
    let normal = Vector2::new(0.0, 1.0);
    let saltation = |z: Vector2<f64>, before: f64, after: f64| {
        let (f_minus, f_plus) = (rates(z, before), rates(z, after));
        Matrix2::identity() + (f_plus - f_minus) * normal.transpose() / normal.dot(&f_minus)
    };
    let s1 = saltation(z1, PUSH, -PUSH);
    let s2 = saltation(Vector2::new(-x, 0.0), -PUSH, PUSH);
    let monodromy = s2 * (a_matrix() * t2).exp() * s1 * (a_matrix() * t1).exp();
    (x, t1 + t2, monodromy)
}

/// The eigenvalues of a real 2 x 2 matrix with real eigenvalues, larger first.
fn real_eigenvalues(m: &Matrix2<f64>) -> [f64; 2] {
    let (trace, det) = (m.trace(), m.determinant());
    let root = (0.25 * trace * trace - det).max(0.0).sqrt();
    [0.5 * trace + root, 0.5 * trace - root]
}

#[test]
fn the_exact_monodromy_has_the_trivial_multiplier_one() {
    let (x, period, monodromy) = exact_orbit();
    let [m1, m2] = real_eigenvalues(&monodromy);
    // [analytic] half a turn about the centre shrinks the distance by
    // rho = exp(-zeta pi / sqrt(1 - zeta^2)), so X - a = rho (X + a), the period is
    // 2 pi / sqrt(1 - zeta^2) and the nontrivial multiplier rho^2
    let rho = (-ZETA * std::f64::consts::PI / (1.0 - ZETA * ZETA).sqrt()).exp();
    assert!((x - PUSH * (1.0 + rho) / (1.0 - rho)).abs() < 1e-10, "{x}");
    let exact_period = 2.0 * std::f64::consts::PI / (1.0 - ZETA * ZETA).sqrt();
    assert!((period - exact_period).abs() < 1e-10, "{period}");
    assert!((m1 - 1.0).abs() < 1e-10, "{m1}");
    assert!((m2 - rho * rho).abs() < 1e-10, "{m2}");
}

#[test]
fn lyapunov_exponents_of_the_relay_oscillator_follow_the_saltation_matrices() {
    let (_, period, monodromy) = exact_orbit();
    let [m1, m2] = real_eigenvalues(&monodromy);
    let run = spec(Method::Dp853, 1e-10, 200.0, 3000.0);
    let s = spectrum(
        relay_oscillator(),
        &run,
        &ExponentSettings::all(),
        &mut (),
        &Interrupt::new(),
    )
    .unwrap_or_else(|e| panic!("{e}"));
    // REFERENCES.md case 19 [analytic]: exponents ln|m| / T of the exact monodromy
    let exact = [m1.abs().ln() / period, m2.abs().ln() / period];
    for (got, want) in s.exponents.iter().zip(exact) {
        assert!(
            (got - want).abs() < 1e-3,
            "{:?} against {exact:?}",
            s.exponents
        );
    }
    assert_eq!(s.verdict, Verdict::Periodic, "{:?}", s.exponents);
    assert!(!s.rates_jump);
    assert_eq!(s.n_not_transversal, 0);
    assert!(
        s.n_saltations > 2 * (3000.0 / period) as u64 - 4,
        "{}",
        s.n_saltations
    );
}

#[test]
fn orbit_multipliers_of_the_relay_oscillator_follow_the_saltation_matrices() {
    use common::{cut_cloud, cycle_from, plane, window};
    use lamina_core::cycle::MapKind;
    use lamina_core::run::Direction;
    let (_, period, monodromy) = exact_orbit();
    let [m1, m2] = real_eigenvalues(&monodromy);
    let m = relay_oscillator();
    let cut = plane(&m, &[("x", 1.0)], 0.0, Direction::Rising);
    let run = window(1e-12, 200.0, 40.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
    // REFERENCES.md case 19 [analytic]: the monodromy built from matrix exponentials and
    // saltation matrices; the cut map keeps its nontrivial multiplier
    assert!((report.period - period).abs() < 1e-9, "{}", report.period);
    assert_eq!(report.multipliers.len(), 1);
    assert!(
        (report.multipliers[0].re - m2).abs() < 1e-8,
        "{} against {m2}",
        report.multipliers[0]
    );
    let floquet = report
        .floquet
        .as_ref()
        .expect("cut map has Floquet multipliers");
    let mut floquet: Vec<f64> = floquet.iter().map(|f| f.re).collect();
    floquet.sort_by(|a, b| b.total_cmp(a));
    assert!((floquet[0] - m1).abs() < 1e-8, "{floquet:?}");
    assert!((floquet[1] - m2).abs() < 1e-8, "{floquet:?}");
    assert!(!report.from_differences && !report.sliding);
    assert_eq!(report.n_saltations, 2, "{}", report.derivatives());
}
