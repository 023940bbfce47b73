//! Level surfaces that are affine in the states (`x - a`, `2 x + y - a`) are screened and
//! located as the planes they are at the run's parameters: the same crossings as the plane
//! typed as a plane, to the last bit, following the parameters, in a live run and in a
//! re-slice alike.

mod common;

use common::{collect, level, model, plane, spec};
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::model::Model;
use lamina_core::run::{Collect, Direction, Run};
use std::f64::consts::PI;

/// The planar limit cycle of REFERENCES case 3 (w = 2) started on the cycle, with a cut
/// offset `a` as a parameter.
fn planar_cycle(a: f64) -> Model {
    model(
        &[
            ("x", 1.0, "x*(1 - x^2 - y^2) - w*y"),
            ("y", 0.0, "y*(1 - x^2 - y^2) + w*x"),
        ],
        &[("w", 2.0), ("a", a)],
    )
}

#[test]
fn an_affine_level_surface_crosses_where_its_plane_does() {
    for (a, direction) in [(0.5, Direction::Rising), (0.9995, Direction::Both)] {
        let m = planar_cycle(a);
        let run = spec(Method::Dp853, 1e-9, 0.0, 30.0 * PI);
        let as_level = level(&m, "x - a", direction);
        let as_plane = plane(&m, &[("x", 1.0)], a, direction);
        let (from_level, _) = collect(m.clone(), run.clone(), Some(as_level), None);
        let (from_plane, _) = collect(m.clone(), run.clone(), Some(as_plane), None);
        // [analytic] x = cos(2 t) on the cycle: one rising crossing of x = a per period pi,
        // two with both directions (REFERENCES.md case 17 for the grazing one)
        let per_period = if direction == Direction::Both { 2 } else { 1 };
        let n = from_level.cut_points.len();
        assert!(n.abs_diff(30 * per_period) <= 1, "{a}: {n} crossings");
        assert_eq!(from_level.cut_points, from_plane.cut_points, "{a}");
        for p in &from_level.cut_points {
            // [analytic] the crossing lies on x = a, at x = cos(2 t)
            assert!((p.state[0] - a).abs() < 1e-9, "{a}: x = {}", p.state[0]);
            assert!((p.state[0] - (2.0 * p.t).cos()).abs() < 1e-7, "{a}");
        }
    }
}

#[test]
fn weights_and_offset_come_from_the_expression() {
    let m = planar_cycle(0.3);
    let run = spec(Method::Dp853, 1e-9, 0.0, 10.0 * PI);
    let weighted = level(&m, "(2*x + y - a)/4", Direction::Falling);
    let as_plane = plane(&m, &[("x", 0.5), ("y", 0.25)], 0.075, Direction::Falling);
    let (from_level, _) = collect(m.clone(), run.clone(), Some(weighted), None);
    let (from_plane, _) = collect(m, run, Some(as_plane), None);
    // [analytic] (2 x + y - a) / 4 = 0.5 x + 0.25 y - a / 4 with a / 4 = 0.075 exactly
    // representable as the same double; the weights 0.5 and 0.25 are exact
    assert_eq!(from_level.cut_points.len(), 10);
    assert_eq!(from_level.cut_points, from_plane.cut_points);
}

#[test]
fn the_plane_follows_the_parameters() {
    let m = planar_cycle(0.5);
    let mut cut = level(&m, "x - a", Direction::Rising);
    let x = [0.8, 0.1];
    // [analytic] g = x - a at each parameter value in turn, the plane taken anew each time
    for a in [0.5, 0.7, -0.25, 0.5] {
        assert_eq!(cut.value(0.0, &x, &[2.0, a]), 0.8 - a);
        let mut gradient = [f64::NAN; 2];
        cut.gradient(0.0, &x, &[2.0, a], &mut gradient);
        assert_eq!(gradient, [1.0, 0.0]);
    }
}

#[test]
fn weights_that_are_not_finite_fall_back_to_the_expression() {
    let m = planar_cycle(0.0);
    let mut cut = level(&m, "x/a - 1", Direction::Rising);
    // [analytic] at a = 0 the weight 1/a is infinite: the expression itself gives x/0 - 1
    assert_eq!(cut.value(0.0, &[0.5, 0.0], &[2.0, 0.0]), f64::INFINITY);
    // [analytic] at a = 2 the surface is the plane x = 2
    assert_eq!(cut.value(0.0, &[1.0, 0.0], &[2.0, 2.0]), -0.5);
}

#[test]
fn a_reslice_of_an_affine_level_surface_equals_a_fresh_run() {
    let m = planar_cycle(0.9);
    let run_spec = spec(Method::Dp853, 1e-7, 0.0, 30.0 * PI);
    let wide = plane(&m, &[("x", 1.0)], 0.5, Direction::Rising);
    let mut run = Run::new(m.clone(), run_spec.clone(), Some(wide), None, true);
    run.execute(&mut Collect::default(), &Interrupt::new());
    let mut edge = level(&m, "x - a", Direction::Both);
    let resliced = run.stored().reslice_points(&mut edge, m.parameters());
    let (fresh, _) = collect(m.clone(), run_spec, Some(edge), None);
    // [analytic] two crossings of x = 0.9 per period pi; the cut does not change the steps,
    // so a re-slice equals a fresh run
    assert!(resliced.len().abs_diff(60) <= 1, "{}", resliced.len());
    assert_eq!(resliced, fresh.cut_points);
}
