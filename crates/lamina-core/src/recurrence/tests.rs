//! Tests of the recurrence detector on clouds with known answers.

use super::*;

/// The logistic map x -> r x (1 - x) from x0, after `skip` iterations, `n` points.
fn logistic(r: f64, skip: usize, n: usize) -> Vec<Vec<f64>> {
    let mut x = 0.3;
    for _ in 0..skip {
        x = r * x * (1.0 - x);
    }
    (0..n)
        .map(|_| {
            x = r * x * (1.0 - x);
            vec![x]
        })
        .collect()
}

fn settings() -> RecurrenceSettings {
    RecurrenceSettings {
        max_k: 12,
        rtol: 1e-12,
        atol: 1e-12,
    }
}

#[test]
fn the_logistic_map_doubles_its_period_where_it_should() {
    // [analytic] the fixed point 1 - 1/r is stable for 1 < r < 3, the 2-cycle for
    // 3 < r < 1 + sqrt(6) = 3.449, the 4-cycle up to 3.544; the 3-cycle is born at
    // r = 1 + sqrt(8) = 3.8284 (R. M. May, "Simple mathematical models with very
    // complicated dynamics", Nature 261 (1976) 459)
    for (r, k) in [(2.8, 1), (3.2, 2), (3.5, 4), (3.835, 3)] {
        let found = find_recurrence(&logistic(r, 5000, 64), &settings());
        assert_eq!(found.kind(), RecurrenceKind::Returns(k), "r = {r}: {found}");
    }
    // [analytic] at r = 4 the map is chaotic (conjugate to the tent map): no repeat
    let found = find_recurrence(&logistic(4.0, 100, 200), &settings());
    assert!(matches!(found, Recurrence::NoRepeat { .. }), "{found}");
}

#[test]
fn an_irrational_rotation_does_not_repeat() {
    // [analytic] a turn by the golden ratio never closes: a torus section
    let turn = (5f64.sqrt() - 1.0) / 2.0;
    let points: Vec<Vec<f64>> = (0..200)
        .map(|i| {
            let a = std::f64::consts::TAU * turn * i as f64;
            vec![a.cos(), a.sin()]
        })
        .collect();
    let found = find_recurrence(&points, &settings());
    assert!(
        matches!(found, Recurrence::NoRepeat { max_k: 12, .. }),
        "{found}"
    );
    assert_eq!(found.search_k(), None);
}

#[test]
fn a_transient_still_converging_is_not_settled() {
    // [analytic] x_i = 2 + 0.5 * 0.97^i approaches the fixed point 2 by 3 % per return
    let points: Vec<Vec<f64>> = (0..64)
        .map(|i| vec![2.0 + 0.5 * 0.97f64.powi(i), 1.0])
        .collect();
    let found = find_recurrence(&points, &settings());
    let Recurrence::NotSettled {
        closest_k: 1,
        drift: Drift::Converging {
            factor_per_return, ..
        },
        ..
    } = found
    else {
        panic!("{found}");
    };
    assert!(
        (factor_per_return - 0.97).abs() < 1e-9,
        "{factor_per_return}"
    );
    assert_eq!(found.search_k(), Some(1));
    // [analytic] a spiral onto a fixed point, turning 1 radian and shrinking 2 % per
    // return (a complex multiplier 0.98 e^i): also not settled
    let points: Vec<Vec<f64>> = (0..64)
        .map(|i| {
            let r = 0.3 * 0.98f64.powi(i);
            vec![1.0 + r * f64::from(i).cos(), r * f64::from(i).sin()]
        })
        .collect();
    let found = find_recurrence(&points, &settings());
    assert_eq!(found.kind(), RecurrenceKind::NotSettled, "{found}");
    // [analytic] a 2-cycle whose two points approach their places with the multiplier
    // -0.95: not settled, closest to repeating after 2 returns
    let points: Vec<Vec<f64>> = (0..64)
        .map(|i| {
            let side = if i % 2 == 0 { 1.0 } else { -1.0 };
            vec![side * (1.0 + 0.2 * 0.95f64.powi(i)), 0.5]
        })
        .collect();
    let found = find_recurrence(&points, &settings());
    assert_eq!(found.kind(), RecurrenceKind::NotSettled, "{found}");
    assert_eq!(found.search_k(), Some(2), "{found}");
}

#[test]
fn a_damped_resonance_near_a_quarter_turn_is_not_a_four_return_orbit() {
    // [analytic] a spiral onto the point (1.34, 5) turning 0.26 of a turn and shrinking
    // 3.7 % per return, amplitude 3e-5: after 4 returns it comes back within 3e-6 of
    // itself (inside the tolerance), yet it is a transient converging onto one point
    let turn = std::f64::consts::TAU * 0.26;
    let points: Vec<Vec<f64>> = (0..64)
        .map(|i| {
            let r = 3e-5 * 0.963f64.powi(i);
            let a = turn * f64::from(i);
            vec![1.34 + r * a.cos(), 5.0 + 0.1 * r * a.sin()]
        })
        .collect();
    let loose = RecurrenceSettings {
        max_k: 12,
        rtol: 1e-9,
        atol: 1e-12,
    };
    let found = find_recurrence(&points, &loose);
    assert_eq!(found.kind(), RecurrenceKind::NotSettled, "{found}");
    assert_eq!(found.search_k(), Some(1), "{found}");
}

#[test]
fn a_slow_drift_is_not_settled() {
    // [analytic] points moving 1e-5 per return on a size of 1 (as a slowly charging
    // capacitor would): far above the tolerance, so no repeat, and moving one way
    let points: Vec<Vec<f64>> = (0..64)
        .map(|i| vec![1.0 + 1e-5 * f64::from(i), 0.3])
        .collect();
    let found = find_recurrence(&points, &settings());
    assert!(
        matches!(
            found,
            Recurrence::NotSettled {
                drift: Drift::Moving { .. },
                ..
            }
        ),
        "{found}"
    );
    assert!(found.to_string().starts_with("not settled"), "{found}");
}

#[test]
fn the_tolerance_follows_the_integrator_and_the_size() {
    let loose = RecurrenceSettings {
        max_k: 12,
        rtol: 1e-6,
        atol: 1e-9,
    };
    // [analytic] 1000 (rtol size + atol)
    assert!((loose.tolerance(2.0) - 1e3 * (2e-6 + 1e-9)).abs() < 1e-15);
    // points 1e-4 apart on a size of 1 repeat at rtol 1e-6 (within 1e-3), not at 1e-12
    let points: Vec<Vec<f64>> = (0..40)
        .map(|i| vec![1.0 + 1e-4 * f64::from(i % 2)])
        .collect();
    assert_eq!(find_recurrence(&points, &loose).k(), Some(1));
    assert_eq!(find_recurrence(&points, &settings()).k(), Some(2));
    // [analytic] too few points to judge
    assert!(matches!(
        find_recurrence(&points[..3], &settings()),
        Recurrence::TooFewPoints { n_points: 3 }
    ));
}
