//! Recheck against exact answers: the digits a recheck reports must be digits that are right
//! (a periodic orbit, strobe samples of a linear oscillator and exponents of a linear system,
//! all known in closed form), and a chaotic run's points are compared over a short horizon
//! only.

mod common;

use std::f64::consts::PI;

use common::*;
use lamina_core::Interrupt;
use lamina_core::cycle::{MapKind, MapPoint, MapSettings};
use lamina_core::lyapunov::{ExponentSettings, spectrum};
use lamina_core::recheck::{self, HORIZON, TIGHTER_BY};
use lamina_core::run::Direction;

/// Relative error of `got` against `exact`, at least the round-off of a double.
fn error(got: f64, exact: f64) -> f64 {
    ((got - exact) / exact).abs().max(1e-16)
}

/// The digits a recheck claims for a number, turned into the largest relative error it
/// allows, with one digit of slack (the recheck compares with a second computation, not with
/// the truth).
fn allowed(digits: u32) -> f64 {
    10f64.powi(1 - digits as i32)
}

fn names(list: &[&str]) -> Vec<String> {
    list.iter().map(|s| s.to_string()).collect()
}

#[test]
fn a_rechecked_cycle_claims_only_digits_that_are_right() {
    // REFERENCES case 3: the planar limit cycle r = 1, return time pi, multiplier exp(-2 pi)
    let m = model(
        &[
            ("x", 0.5, "x*(1 - x^2 - y^2) - w*y"),
            ("y", 0.0, "y*(1 - x^2 - y^2) + w*x"),
        ],
        &[("w", 2.0)],
    );
    let cut = plane(&m, &[("y", 1.0)], 0.0, Direction::Rising);
    // a loose tolerance, so that the first answer has visibly few digits
    let run = window(1e-7, 20.0, 30.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let first = cycle_from(&m, MapKind::Cut(cut.clone()), &run, &cloud, 1);
    let settings = MapSettings::from_run(&run, 100.0);
    let recheck = recheck::cycle(m, MapKind::Cut(cut), &settings, &first, &names(&["x", "y"]))
        .expect("recheck");
    // [analytic] the second computation ran at tolerances divided by 100
    assert!((recheck.rtol - 1e-7 / TIGHTER_BY).abs() < 1e-22);
    assert!((recheck.atol - 1e-7 / TIGHTER_BY).abs() < 1e-22);
    assert!(recheck.digits >= 4 && recheck.digits < 15, "{recheck}");
    let allowed = allowed(recheck.digits);
    // [analytic] REFERENCES case 3: every number is right to the digits claimed
    assert!(
        error(first.period, PI) <= allowed,
        "{recheck}: T = {}",
        first.period
    );
    assert!(error(first.point.state[0], 1.0) <= allowed, "{recheck}");
    assert!(
        error(first.multipliers[0].re, (-2.0 * PI).exp()) <= allowed,
        "{recheck}: m = {}",
        first.multipliers[0]
    );
    // y = 0 on the cut in both: not the worst number
    assert_ne!(recheck.worst.name, "y");
    assert_eq!(recheck.n_compared, 4);
}

#[test]
fn rechecked_strobe_samples_of_an_oscillator_are_right_to_the_digits_claimed() {
    // [analytic] x'' + x = 0 from (1, 0.3): x = cos t + 0.3 sin t, v = -sin t + 0.3 cos t
    let m = harmonic(1.0);
    let sampler = strobe(&m, "1", 0.0);
    let run = window(1e-8, 3.0, 40.0);
    let first = strobe_cloud(&m, sampler, &run);
    let recheck = recheck::points(
        &m,
        &run,
        &MapKind::Strobe(sampler),
        &first,
        &names(&["x", "v"]),
        &Interrupt::new(),
    )
    .expect("recheck");
    assert!(recheck.digits >= 4, "{recheck}");
    let note = recheck.note.clone().expect("note");
    assert!(note.starts_with("all 40 points"), "{note}");
    // [analytic] the samples after the first are right to the digits claimed (measured
    // against the size of the state, 1.04, as the comparison judges states near zero)
    let worst_error = first[1..]
        .iter()
        .map(|p| {
            let (x, v) = (p.t.cos() + 0.3 * p.t.sin(), -p.t.sin() + 0.3 * p.t.cos());
            ((p.state[0] - x).abs() / x.abs()).max((p.state[1] - v).abs() / v.abs())
        })
        .fold(0.0, f64::max);
    // the first sample's own error (from the settle time) is common to both computations;
    // what the recheck measures is the error added after it, so allow for both
    let start_error = {
        let p = &first[0];
        (p.state[0] - (p.t.cos() + 0.3 * p.t.sin())).abs()
    };
    assert!(
        worst_error <= allowed(recheck.digits) + 1e3 * start_error,
        "{recheck}: worst error {worst_error:e}"
    );
}

#[test]
fn a_chaotic_run_is_compared_over_a_short_horizon_and_says_so() {
    // Lorenz (10, 28, 8/3), REFERENCES case 7; a point-by-point comparison of chaotic runs is
    // only valid over about 20 crossings (REFERENCES.md, note on chaotic runs)
    let m = model(
        &[
            ("x", 1.0, "10*(y - x)"),
            ("y", 1.0, "x*(28 - z) - y"),
            ("z", 1.0, "x*y - 8/3*z"),
        ],
        &[],
    );
    let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Falling);
    let run = window(1e-9, 20.0, 150.0);
    let first: Vec<MapPoint> = cut_cloud(&m, &cut, &run);
    assert!(first.len() > 3 * HORIZON);
    let recheck = recheck::points(
        &m,
        &run,
        &MapKind::Cut(cut),
        &first,
        &names(&["x", "y", "z"]),
        &Interrupt::new(),
    )
    .expect("recheck");
    let note = recheck.note.clone().expect("note");
    assert!(note.contains("first 20 points"), "{note}");
    // [common practice] over 20 crossings at rtol 1e-9 the two agree to a few digits
    assert!(recheck.digits >= 2, "{recheck}");
    assert!(recheck.n_compared <= 4 * HORIZON, "{}", recheck.n_compared);
}

#[test]
fn rechecked_exponents_of_a_linear_system_are_right_to_the_digits_claimed() {
    // [analytic] REFERENCES case 6: x' = 0.3 x, y' = -2 y has the exponents (0.3, -2); at its
    // equilibrium the state never moves, the tangent vectors do
    let m = model(&[("x", 0.0, "0.3*x"), ("y", 0.0, "-2*y")], &[]);
    let run = spec(lamina_core::integrate::Method::Dp853, 1e-8, 0.0, 200.0);
    let settings = ExponentSettings::all();
    let first = spectrum(m.clone(), &run, &settings, &mut (), &Interrupt::new()).expect("runs");
    let recheck = recheck::exponents(m, &run, &settings, &first, &mut (), &Interrupt::new())
        .expect("recheck");
    assert!(recheck.digits >= 1, "{recheck}");
    // [analytic] REFERENCES case 6: the estimates are right to the digits claimed
    let allowed = allowed(recheck.digits);
    assert!(
        error(first.exponents[0], 0.3) <= allowed,
        "{recheck}: {:?}",
        first.exponents
    );
    assert!(
        error(first.exponents[1], -2.0) <= allowed,
        "{recheck}: {:?}",
        first.exponents
    );
    // the averaging time, not the tolerance, limits them: the note says which
    let note = recheck.note.clone().expect("note");
    assert!(note.contains("spread"), "{note}");
}
