//! Crossings that enter and leave a surface inside one integrator step: cuts near the edge of
//! an orbit (planes and level surfaces, moving with time or not), against the exact crossings
//! of the planar limit cycle (REFERENCES.md case 17) and of a harmonic oscillator.

mod common;

use common::{METHODS, collect, level, model, plane, spec};
use lamina_core::integrate::Method;
use lamina_core::model::Model;
use lamina_core::run::Direction;
use std::f64::consts::PI;

/// The planar limit cycle of REFERENCES case 3 (w = 2), started on the cycle.
fn planar_cycle() -> Model {
    model(
        &[
            ("x", 1.0, "x*(1 - x^2 - y^2) - w*y"),
            ("y", 0.0, "y*(1 - x^2 - y^2) + w*x"),
        ],
        &[("w", 2.0)],
    )
}

#[test]
fn a_cut_at_the_edge_of_the_planar_cycle_gets_one_crossing_every_pi() {
    for method in METHODS {
        for tol in [1e-6, 1e-9] {
            let m = planar_cycle();
            let cut = plane(&m, &[("x", 1.0)], 0.999, Direction::Rising);
            let (points, _) = collect(m, spec(method, tol, 0.0, 100.0 * PI), Some(cut), None);
            let n = points.cut_points.len();
            // REFERENCES.md case 17 [analytic]: one crossing every pi, at
            // y = -sqrt(1 - 0.999^2) = -0.0447101778
            assert!((99..=100).contains(&n), "{method:?} {tol}: {n} crossings");
            for p in &points.cut_points {
                assert!(
                    (p.state[1] + 0.0447101778).abs() < 1e-4_f64.max(1e3 * tol),
                    "{method:?} {tol}: y = {}",
                    p.state[1]
                );
                if let Some(dt) = p.return_time {
                    assert!((dt - PI).abs() < 1e3 * tol, "{method:?} {tol}: {dt}");
                }
            }
        }
    }
}

#[test]
fn falling_and_both_directions_at_the_edge() {
    let m = planar_cycle();
    for (direction, per_turn) in [(Direction::Falling, 1), (Direction::Both, 2)] {
        let cut = plane(&m, &[("x", 1.0)], 0.9999, direction);
        let run = spec(Method::Dp853, 1e-8, 0.0, 50.0 * PI);
        let (points, _) = collect(m.clone(), run, Some(cut), None);
        // [analytic] the cycle passes x = 0.9999 twice a turn (period pi), at
        // y = -+sqrt(1 - 0.9999^2) = -+0.014141782
        let n = points.cut_points.len();
        assert!(
            n.abs_diff(50 * per_turn) <= 1,
            "{direction:?}: {n} crossings"
        );
        for p in &points.cut_points {
            assert!(
                (p.state[1].abs() - 0.014141782).abs() < 1e-5,
                "{}",
                p.state[1]
            );
        }
    }
}

#[test]
fn a_level_surface_grazed_by_the_cycle_is_crossed_every_turn() {
    // a circle of radius 0.05 centred at (0.96, 0): the unit cycle cuts it where
    // x = (1 + 0.96^2 - 0.05^2) / (2 * 0.96) [analytic], entering and leaving it within a
    // short arc of angle about 0.1 (a twentieth of a turn)
    let m = planar_cycle();
    let cut = level(&m, "(x - 0.96)^2 + y^2 - 0.0025", Direction::Falling);
    let (points, _) = collect(
        m,
        spec(Method::Dp853, 1e-6, 0.0, 40.0 * PI),
        Some(cut),
        None,
    );
    let x_exact = (1.0 + 0.96_f64.powi(2) - 0.0025) / 1.92;
    let n = points.cut_points.len();
    assert!(n.abs_diff(40) <= 1, "{n} crossings");
    for p in &points.cut_points {
        assert!((p.state[0] - x_exact).abs() < 1e-5, "{}", p.state[0]);
    }
}

#[test]
fn a_moving_level_surface_touched_near_its_top_is_found() {
    // the harmonic oscillator x = cos t (x' = v, v' = -x) against the level surface
    // x - 0.9995 - 0.0003 sin(t / 7) = 0: it reaches it near every maximum of x, entering and
    // leaving within a small arc [analytic: cos t > 0.9998 holds for |t| < 0.02 only]
    let m = model(&[("x", 1.0, "v"), ("v", 0.0, "-x")], &[]);
    let cut = level(&m, "x - 0.9995 - 0.0003*sin(t/7)", Direction::Rising);
    let (points, _) = collect(
        m,
        spec(Method::Dp853, 1e-9, 0.5, 200.0 * PI),
        Some(cut),
        None,
    );
    // [analytic] one rising crossing per period 2 pi
    let n = points.cut_points.len();
    assert!(n.abs_diff(100) <= 1, "{n} crossings");
    for p in &points.cut_points {
        let t = p.t;
        let residual = p.state[0] - 0.9995 - 0.0003 * (t / 7.0).sin();
        assert!(residual.abs() < 1e-9, "{residual}");
        // [analytic] x = cos t exactly on the orbit
        assert!(
            (p.state[0] - t.cos()).abs() < 1e-7,
            "{} {}",
            p.state[0],
            t.cos()
        );
    }
}

#[test]
fn a_reslice_finds_the_grazing_crossings_of_a_fresh_run() {
    use lamina_core::Interrupt;
    use lamina_core::run::{Collect, Run};
    let m = planar_cycle();
    let wide = plane(&m, &[("x", 1.0)], 0.5, Direction::Rising);
    let run_spec = spec(Method::Dp853, 1e-7, 0.0, 30.0 * PI);
    let mut run = Run::new(m.clone(), run_spec.clone(), Some(wide), None, true);
    run.execute(&mut Collect::default(), &Interrupt::new());
    for (offset, direction) in [(0.999, Direction::Rising), (0.9995, Direction::Both)] {
        let mut edge = plane(&m, &[("x", 1.0)], offset, direction);
        let resliced = run.stored().reslice_points(&mut edge, m.parameters());
        let (fresh, _) = collect(m.clone(), run_spec.clone(), Some(edge), None);
        // [analytic] one crossing per direction every pi (REFERENCES.md case 17); the cut does
        // not change the steps, so a re-slice equals a fresh run
        assert!(resliced.len() >= 29, "{offset}: {}", resliced.len());
        assert_eq!(resliced, fresh.cut_points, "{offset}");
    }
    let mut circle = level(&m, "(x - 0.96)^2 + y^2 - 0.0025", Direction::Falling);
    let resliced = run.stored().reslice_points(&mut circle, m.parameters());
    let (fresh, _) = collect(m.clone(), run_spec, Some(circle), None);
    assert!(resliced.len() >= 29, "{}", resliced.len());
    assert_eq!(resliced, fresh.cut_points);
}

#[test]
fn a_switch_that_goes_and_comes_back_inside_a_step_is_followed() {
    // z counts the time the planar cycle spends beyond x = 0.999: [analytic] acos(0.999) / w
    // per turn of length pi on each side of the crossing, so acos(0.999) a turn
    // (REFERENCES.md case 17, the switch of a model)
    for method in [Method::Dp5, Method::Dp853] {
        let m = model(
            &[
                ("x", 1.0, "x*(1 - x^2 - y^2) - w*y"),
                ("y", 0.0, "y*(1 - x^2 - y^2) + w*x"),
                ("z", 0.0, "step(x - 0.999)"),
            ],
            &[("w", 2.0)],
        );
        // start just past the threshold's excursion: x = cos(0.1)
        let (x0, y0) = (0.1_f64.cos(), 0.1_f64.sin());
        let mut m = m;
        m.set_start(&[x0, y0, 0.0]);
        let (_, outcome) = collect(m, spec(method, 1e-9, 0.0, 40.0 * PI), None, None);
        let z = outcome.final_state[2];
        let exact = 40.0 * 0.999_f64.acos();
        assert!(
            (z - exact).abs() < 1e-6,
            "{method:?}: z = {z}, exact {exact}"
        );
        assert_eq!(outcome.n_switches, 80, "{method:?}");
    }
}

#[test]
fn the_orbit_search_follows_a_cut_at_the_edge_of_the_cycle() {
    use common::{cut_cloud, cycle_from, rel, window};
    use lamina_core::cycle::MapKind;
    let m = planar_cycle();
    let cut = plane(&m, &[("x", 1.0)], 0.999, Direction::Rising);
    let run = window(1e-11, 0.0, 20.0);
    let cloud = cut_cloud(&m, &cut, &run);
    assert!(cloud.len() >= 5, "{}", cloud.len());
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
    // [analytic] REFERENCES.md cases 3 and 17: the cycle r = 1 crosses x = 0.999 rising at
    // y = -0.0447101778 once a period pi; its nontrivial multiplier is exp(-2 pi) on any cut
    assert!((report.point.state[1] + 0.0447101778).abs() < 1e-9);
    assert!(rel(report.period, PI) < 1e-9, "{}", report.period);
    assert!(
        rel(report.multipliers[0].re, 1.86744273171e-3) < 1e-6,
        "{}",
        report.multipliers[0]
    );
}
