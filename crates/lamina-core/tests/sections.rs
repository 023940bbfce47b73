//! Cut points and strobe samples against analytic and published values.

mod common;

use std::f64::consts::PI;

use common::*;
use lamina_core::integrate::Method;
use lamina_core::run::{Direction, StopReason};

/// Planar limit cycle of REFERENCES case 3 with w = 2.
fn planar_cycle(r0: f64) -> lamina_core::model::Model {
    model(
        &[
            ("x", r0, "x*(1 - x^2 - y^2) - w*y"),
            ("y", 0.0, "y*(1 - x^2 - y^2) + w*x"),
        ],
        &[("w", 2.0)],
    )
}

#[test]
fn planar_cycle_return_map_and_return_time() {
    for (r0, expected) in [(0.5, 0.99721055100), (2.0, 1.00070102750)] {
        for method in METHODS {
            let m = planar_cycle(r0);
            let cut = plane(&m, &[("y", 1.0)], 0.0, Direction::Rising);
            let (points, outcome) = collect(m, spec(method, 1e-12, 0.0, 3.5 * PI), Some(cut), None);
            assert_eq!(outcome.reason, StopReason::Finished);
            let p = &points.cut_points;
            // [analytic] the start lies on the cut and is not a crossing; one return per pi
            assert_eq!(p.len(), 3, "{method:?}");
            // [analytic] REFERENCES case 3: P(r) = [1 + (r^-2 - 1) exp(-4 pi / w)]^(-1/2)
            assert!(
                rel(p[0].state[0], expected) < 1e-10,
                "{method:?} P({r0}) = {}",
                p[0].state[0]
            );
            // [analytic] return time exactly pi for every start
            assert!(rel(p[0].t, PI) < 1e-10);
            assert!(rel(p[1].return_time.expect("second point"), PI) < 1e-10);
            assert!(p[0].return_time.is_none());
        }
    }
}

#[test]
fn pendulum_return_time_is_four_k() {
    // Abramowitz & Stegun ch. 17: period 4 K(m), m = sin^2(th0 / 2) (REFERENCES case 4)
    for (th0_deg, period) in [(60.0f64, 6.743001419250), (90.0, 7.416298709205)] {
        for method in METHODS {
            let m = model(
                &[("th", th0_deg.to_radians(), "w"), ("w", 0.0, "-sin(th)")],
                &[],
            );
            let cut = plane(&m, &[("w", 1.0)], 0.0, Direction::Falling);
            let (points, _) = collect(m, spec(method, 1e-13, 0.0, 3.5 * period), Some(cut), None);
            let p = &points.cut_points;
            assert_eq!(p.len(), 3);
            assert!(
                rel(p[0].t, period) < 1e-9,
                "{method:?} {th0_deg}: {}",
                p[0].t
            );
            for q in &p[1..] {
                assert!(rel(q.return_time.expect("return time"), period) < 1e-9);
                // [analytic] successive maxima return to the starting angle
                assert!(rel(q.state[0], th0_deg.to_radians()) < 1e-9);
            }
        }
    }
}

#[test]
fn lotka_volterra_cut_is_one_point_and_keeps_its_first_integral() {
    for method in METHODS {
        let m = model(
            &[("x", 3.0, "x - 0.5*x*y"), ("y", 4.0, "0.2*x*y - 0.6*y")],
            &[],
        );
        let cut = plane(&m, &[("x", 1.0)], 3.0, Direction::Rising);
        let (points, _) = collect(
            m,
            spec(method, 1e-12, 0.0, 301.0 * 8.67356229),
            Some(cut),
            None,
        );
        let p = &points.cut_points;
        assert!(p.len() >= 300, "{}", p.len());
        let integral = |x: f64, y: f64| 0.2 * x - 0.6 * x.ln() + 0.5 * y - y.ln();
        let values: Vec<f64> = p.iter().map(|q| integral(q.state[0], q.state[1])).collect();
        let spread = values.iter().cloned().fold(f64::MIN, f64::max)
            - values.iter().cloned().fold(f64::MAX, f64::min);
        // REFERENCES case 5 and 16 [R][T]: V spread <= 1e-9 over 300 cut points at rtol 1e-12
        assert!(spread <= 1e-9, "{method:?} spread {spread:e}");
        for q in p {
            // REFERENCES case 5 [R]: every cut point is y = 0.81275147992
            assert!(
                (q.state[1] - 0.81275147992).abs() < 1e-9,
                "{method:?} y = {}",
                q.state[1]
            );
        }
        // REFERENCES case 5 [R]: return time 8.67356229
        assert!((p[1].return_time.expect("return") - 8.67356229).abs() < 1e-8);
    }
}

#[test]
#[allow(clippy::excessive_precision)] // the published digits, kept as printed
fn van_der_pol_period_and_amplitude_through_the_cut() {
    // Hairer, Norsett & Wanner, Solving ODEs I, sec. I.16, ex. 1 (REFERENCES case 8)
    let period = 6.6632868593231301897;
    let amplitude = 2.0086198608748431365;
    for method in METHODS {
        let m = model(
            &[("x", 2.0, "v"), ("v", 0.0, "mu*(1 - x^2)*v - x")],
            &[("mu", 1.0)],
        );
        let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
        let (points, _) = collect(m, spec(method, 1e-13, 60.0, 4.0 * period), Some(cut), None);
        let p = &points.cut_points;
        assert!(p.len() >= 3);
        for q in &p[1..] {
            assert!(
                rel(q.return_time.expect("return"), period) < 1e-9,
                "{method:?} period {}",
                q.return_time.unwrap_or(0.0)
            );
            assert!(
                rel(q.state[0], amplitude) < 1e-9,
                "{method:?} amplitude {}",
                q.state[0]
            );
        }
    }
}

#[test]
fn lorenz_ab_orbit_alternates_through_the_cut() {
    // D. Viswanath, Nonlinearity 16 (2003) 1035 (REFERENCES case 11)
    let (x0, y0, period) = (-13.7636106821342, -19.5787519424518, 1.558652210716175);
    let m = lorenz_from([x0, y0, 27.0]);
    let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Rising);
    let (points, _) = collect(
        m,
        spec(Method::Dp853, 1e-13, 0.0, 1.01 * period),
        Some(cut),
        None,
    );
    let p = &points.cut_points;
    assert_eq!(
        p.len(),
        2,
        "the start is on the cut; one mirror point, then the start again"
    );
    // the mirror point at half the period, then the start point after the whole period
    assert!(
        (p[0].state[0] + x0).abs() < 1e-8 && (p[0].state[1] + y0).abs() < 1e-8,
        "{:?}",
        p[0].state
    );
    assert!((p[0].t - period / 2.0).abs() < 1e-8);
    assert!(
        (p[1].state[0] - x0).abs() < 1e-8 && (p[1].state[1] - y0).abs() < 1e-8,
        "{:?}",
        p[1].state
    );
    assert!((p[1].t - period).abs() < 1e-8);
    assert!((p[1].return_time.expect("return") - period / 2.0).abs() < 1e-8);
}

#[test]
fn harmonic_crossings_at_whole_periods_with_round_off_residual() {
    // REFERENCES case 15 [T]: crossing times 2 pi k / w to the integrator tolerance
    let w = 2.0;
    for method in METHODS {
        let m = model(&[("x", 1.0, "v"), ("v", 0.0, "-w^2*x")], &[("w", w)]);
        let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
        let (points, _) = collect(m, spec(method, 1e-11, 0.0, 20.5 * PI), Some(cut), None);
        let p = &points.cut_points;
        assert_eq!(p.len(), 20);
        for (k, q) in p.iter().enumerate() {
            let expected = 2.0 * PI * (k + 1) as f64 / w;
            assert!((q.t - expected).abs() < 1e-9, "{method:?} k={k}: {}", q.t);
            // REFERENCES case 15 [T]: residual of the surface at round-off level
            assert!(
                q.state[1].abs() <= 1e-12 * w,
                "{method:?} residual {:e}",
                q.state[1]
            );
        }
    }
}

#[test]
fn level_surface_residual_is_round_off() {
    // REFERENCES case 15 [T]: |g| at the cut point at round-off relative to scale
    let m = model(&[("x", 1.0, "v"), ("v", 0.0, "-x")], &[]);
    let mut cut = level(&m, "x*v + 0.25*t/(1 + t)", Direction::Both);
    let probe = cut.clone();
    let (points, _) = collect(m, spec(Method::Dp853, 1e-10, 0.0, 30.0), Some(probe), None);
    assert!(points.cut_points.len() > 10);
    for q in &points.cut_points {
        let g = cut.value(q.t, &q.state, &[]);
        assert!(g.abs() <= 1e-14, "residual {g:e} at t = {}", q.t);
    }
}

#[test]
fn henon_heiles_energy_is_kept_at_the_cut() {
    // REFERENCES case 16 [T]: a first integral at the cut points stays within ~10 rtol
    let energy = 1.0 / 12.0;
    let (y0, py0) = (0.1f64, 0.0f64);
    let px0 = (2.0 * energy - py0 * py0 - y0 * y0 + 2.0 * y0.powi(3) / 3.0).sqrt();
    let m = model(
        &[
            ("x", 0.0, "px"),
            ("y", y0, "py"),
            ("px", px0, "-x - 2*x*y"),
            ("py", py0, "-y - x^2 + y^2"),
        ],
        &[],
    );
    let rtol = 1e-12;
    for method in [Method::Dp853, Method::Automatic] {
        let cut = plane(&m, &[("x", 1.0)], 0.0, Direction::Rising);
        let (points, outcome) =
            collect(m.clone(), spec(method, rtol, 0.0, 2200.0), Some(cut), None);
        // [common practice] Hénon–Heiles is not stiff: the automatic choice keeps DOP853
        assert!(
            outcome.method_changes.is_empty(),
            "{:?}",
            outcome.method_changes
        );
        let p = &points.cut_points;
        assert!(p.len() >= 300, "{}", p.len());
        for q in p {
            let [x, y, px, py] = [q.state[0], q.state[1], q.state[2], q.state[3]];
            let h = 0.5 * (px * px + py * py) + 0.5 * (x * x + y * y) + x * x * y - y.powi(3) / 3.0;
            // REFERENCES case 16 [common practice] "about 10 x rtol": measured 10.0 x rtol
            // after 300 crossings, so allow 15 x
            assert!(
                (h - energy).abs() <= 15.0 * rtol,
                "{method:?} H drift {:e}",
                h - energy
            );
            assert!(x.abs() < 1e-14);
        }
    }
}

#[test]
fn strobe_of_linear_decay_gives_the_exact_factor() {
    // [analytic] REFERENCES case 1: map factor exp(-1.4) = 0.2465969639416065
    for method in METHODS {
        let m = model(&[("x", 1.0, "-k*x")], &[("k", 0.7)]);
        let s = strobe(&m, "2", 0.0);
        let (points, _) = collect(m, spec(method, 1e-13, 0.0, 10.0), None, Some(s));
        let p = &points.strobe_samples;
        assert_eq!(p.len(), 6, "samples at 0, 2, ..., 10");
        for pair in p.windows(2) {
            assert!(rel(pair[1].state[0] / pair[0].state[0], 0.2465969639416065) < 1e-10);
        }
    }
}

#[test]
fn strobe_of_harmonic_oscillator_is_the_rotation_matrix() {
    // [analytic] REFERENCES case 2: monodromy over T = 1 for w = 2
    let mono = [
        [-0.4161468365, 0.4546487134],
        [-1.8185948537, -0.4161468365],
    ];
    for method in METHODS {
        let m = model(&[("x", 0.3, "v"), ("v", -0.7, "-w^2*x")], &[("w", 2.0)]);
        let s = strobe(&m, "1", 0.25);
        let (points, _) = collect(m, spec(method, 1e-12, 0.5, 8.0), None, Some(s));
        let p = &points.strobe_samples;
        assert_eq!(p.len(), 8);
        for pair in p.windows(2) {
            let (a, b) = (&pair[0].state, &pair[1].state);
            for row in 0..2 {
                let expected = mono[row][0] * a[0] + mono[row][1] * a[1];
                assert!((b[row] - expected).abs() < 1e-9, "{method:?}");
            }
        }
        for q in p {
            // the sample lies exactly at first_at + k T
            assert_eq!(q.t, 0.25 + q.index as f64);
        }
    }
}

#[test]
fn strobe_period_may_be_an_expression_of_parameters() {
    // [analytic] with T = 2 pi / w the harmonic oscillator's strobe map is the identity
    let m = model(&[("x", 0.3, "v"), ("v", -0.7, "-w^2*x")], &[("w", 2.0)]);
    let s = strobe(&m, "2*pi/w", 0.0);
    assert!(rel(s.period, PI) < 1e-15);
    let (points, _) = collect(m, spec(Method::Dp853, 1e-12, 0.0, 10.0 * PI), None, Some(s));
    for q in &points.strobe_samples {
        assert!((q.state[0] - 0.3).abs() < 1e-9 && (q.state[1] + 0.7).abs() < 1e-9);
    }
}
