//! Periodic-orbit search: recurrence in point clouds (a period-2 strobe orbit, a torus and
//! chaos without repeats) and the failure reasons of the search.

mod common;

use std::f64::consts::PI;

use common::*;
use lamina_core::cycle::{
    CycleError, FlowMap, MapKind, MapPoint, MapSettings, NewtonSettings, Outlook, Verdict,
    find_cycle,
};
use lamina_core::recurrence::{Recurrence, RecurrenceSettings, find_recurrence};
use lamina_core::run::Direction;

#[test]
fn driven_oscillator_strobed_at_half_the_drive_period_repeats_every_two() {
    // x'' + c x' + x = cos(w t), sampled every pi / w: the steady response A cos(w t - phi)
    // alternates between two points, so the strobe map has a period-2 orbit.
    let (c, w) = (0.5, 1.3);
    let m = model(
        &[("x", 0.0, "v"), ("v", 0.0, "-c*v - x + cos(w*t)")],
        &[("c", c), ("w", w)],
    );
    let strobe = strobe(&m, "pi/w", 0.0);
    let run = window(1e-12, 150.0, 60.0);
    let cloud = strobe_cloud(&m, strobe, &run);
    let found = find_recurrence(&cloud, &RecurrenceSettings::for_control(&run.control));
    // [analytic] the samples alternate: no repeat after 1, a repeat after 2
    assert_eq!(found.k(), Some(2), "{found}");
    let report = cycle_from(&m, MapKind::Strobe(strobe), &run, &cloud, 2);
    let amplitude = 1.0 / ((1.0 - w * w).powi(2) + (c * w).powi(2)).sqrt();
    let phase = (c * w).atan2(1.0 - w * w);
    let sign = if report.point.t.rem_euclid(2.0 * PI / w) < PI / w {
        1.0
    } else {
        -1.0
    };
    // [analytic] at t = j pi / w: x = (-1)^j A cos(phi), v = (-1)^j A w sin(phi)
    assert!((report.point.state[0] - sign * amplitude * phase.cos()).abs() < 1e-9);
    assert!((report.point.state[1] - sign * amplitude * w * phase.sin()).abs() < 1e-9);
    assert!((report.orbit[1].state[0] + report.point.state[0]).abs() < 1e-9);
    // [analytic] multipliers exp(lambda 2 pi / w), lambda = -c/2 +- i sqrt(1 - c^2/4)
    let modulus = (-c * PI / w).exp();
    let angle = (1.0 - c * c / 4.0).sqrt() * 2.0 * PI / w;
    for mu in &report.multipliers {
        assert!(rel(mu.modulus(), modulus) < 1e-8, "{mu}");
        assert!((mu.re - modulus * angle.cos()).abs() < 1e-8, "{mu}");
    }
    assert_eq!(report.k, 2);
    assert!(rel(report.period, 2.0 * PI / w) < 1e-14);
    assert_eq!(report.verdict, Verdict::Stable);
    // [analytic] |m| = exp(-c pi / w) = 0.30: well inside the circle
    assert!(matches!(report.outlook, Outlook::WellInside { .. }));
}

#[test]
fn quasi_periodic_and_chaotic_clouds_do_not_repeat() {
    // [analytic] a harmonic oscillator strobed at an irrational multiple of its period turns
    // by an irrational angle per sample: a torus section, no repeat
    let m = harmonic(1.0);
    let golden = (1.0 + 5f64.sqrt()) / 2.0;
    let strobe = strobe(&m, &format!("2*pi*{golden}"), 0.0);
    let run = window(1e-10, 0.0, 2000.0);
    let cloud = strobe_cloud(&m, strobe, &run);
    let found = find_recurrence(&cloud, &RecurrenceSettings::for_control(&run.control));
    assert!(
        matches!(found, Recurrence::NoRepeat { max_k: 12, .. }),
        "{found}"
    );
    // [common practice] the Lorenz attractor's cut points never repeat
    let m = model(
        &[
            ("x", 1.0, "10*(y - x)"),
            ("y", 1.0, "x*(28 - z) - y"),
            ("z", 1.0, "x*y - 8/3*z"),
        ],
        &[],
    );
    let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Falling);
    let run = window(1e-9, 50.0, 300.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let found = find_recurrence(&cloud, &RecurrenceSettings::for_control(&run.control));
    assert!(matches!(found, Recurrence::NoRepeat { .. }), "{found}");
}

#[test]
fn failures_say_why() {
    let forced = model(&[("x", 0.0, "v"), ("v", 0.0, "-x + cos(t)")], &[]);
    let cut = plane(&forced, &[("v", 1.0)], 0.0, Direction::Falling);
    let settings = MapSettings::from_run(&window(1e-10, 0.0, 1.0), 10.0);
    let err = FlowMap::new(forced, MapKind::Cut(cut), settings).expect_err("forced cut");
    assert_eq!(err, CycleError::ForcedCut);
    assert!(err.to_string().contains("strobe map"), "{err}");

    let moving = harmonic(1.0);
    let cut = level(&moving, "x - 0.1*sin(t)", Direction::Rising);
    let err = FlowMap::new(moving, MapKind::Cut(cut), settings).expect_err("moving cut");
    assert_eq!(err, CycleError::MovingCut);

    // [analytic] x' = -x decays to 0: it crosses x = 0.5 once and never again
    let decay = model(&[("x", 1.0, "-x"), ("y", 1.0, "-y")], &[]);
    let cut = plane(&decay, &[("x", 1.0)], 0.5, Direction::Falling);
    let mut map = FlowMap::new(decay, MapKind::Cut(cut), settings).expect("map");
    let seed = MapPoint {
        t: 0.0,
        state: vec![1.0, 1.0],
    };
    let err = map.apply(&seed, 2).expect_err("one crossing only");
    assert!(
        matches!(err, CycleError::LostCrossing { found: 1, k: 2, .. }),
        "{err}"
    );
    assert!(err.to_string().starts_with("lost a crossing"), "{err}");
    let err = find_cycle(
        &mut map,
        std::slice::from_ref(&seed),
        1,
        &NewtonSettings::default(),
    )
    .expect_err("no periodic orbit");
    assert!(matches!(err, CycleError::LostCrossing { .. }), "{err}");
    assert_eq!(
        find_cycle(&mut map, &[], 1, &NewtonSettings::default()),
        Err(CycleError::NoSeed)
    );
    assert_eq!(map.apply(&seed, 0), Err(CycleError::ZeroReturns));
    let err = map
        .apply(
            &MapPoint {
                t: 0.0,
                state: vec![1.0],
            },
            1,
        )
        .expect_err("short seed");
    assert!(err.to_string().contains("2 states"), "{err}");

    // [analytic] a damped oscillator has no periodic orbit: Newton must stop with a reason
    let damped = model(&[("x", 1.0, "v"), ("v", 0.0, "-0.3*v - x")], &[]);
    let cut = plane(&damped, &[("v", 1.0)], 0.0, Direction::Falling);
    let mut map = FlowMap::new(damped, MapKind::Cut(cut), settings).expect("map");
    let err = find_cycle(
        &mut map,
        &[MapPoint {
            t: 0.0,
            state: vec![1.0, 0.0],
        }],
        1,
        &NewtonSettings::default(),
    )
    .expect_err("no cycle");
    assert!(matches!(err, CycleError::RestPoint { .. }), "{err}");
    assert!(err.to_string().contains("rest point"), "{err}");
}

#[test]
#[allow(clippy::excessive_precision)] // the published digits, kept as printed
fn rates_that_jump_get_their_derivatives_through_the_switches() {
    // the Van der Pol oscillator of REFERENCES case 8 with a term that is zero but jumps in
    // form: the map is the same; its switches are located and crossed with their saltation
    // matrices (here the identity: the rates do not change), or where the rates jump without
    // a located switch (%) the derivatives come from central differences
    let m = model(
        &[
            ("x", 2.0, "v"),
            ("v", 0.0, "mu*(1 - x^2)*v - x + 0*sign(x)"),
        ],
        &[("mu", 1.0)],
    );
    let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
    let run = window(1e-12, 30.0, 40.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
    assert!(!report.from_differences);
    // [analytic] x changes sign twice a period
    assert_eq!(report.n_saltations, 2, "{}", report.derivatives());
    // Hairer, Norsett & Wanner, Solving ODEs I, sec. I.16, ex. 1 (REFERENCES case 8)
    assert!(
        rel(report.period, 6.6632868593231301897) < 1e-9,
        "{}",
        report.period
    );
    // REFERENCES case 8 [R]: multiplier 8.59695e-4
    assert!(
        rel(report.multipliers[0].re, 8.59695e-4) < 1e-4,
        "{}",
        report.multipliers[0]
    );
    let floquet = report.floquet.expect("cut");
    // [analytic] the trivial Floquet multiplier along the flow is 1
    assert!((floquet[0].re - 1.0).abs() < 1e-6, "{floquet:?}");
    assert!(rel(floquet[1].re, 8.59695e-4) < 1e-4);

    // [analytic] the driven oscillator strobed at its drive period, with a zero jumping term:
    // multipliers exp(lambda 2 pi / w), lambda = -c/2 +- i sqrt(1 - c^2/4)
    let (c, w) = (0.5, 1.3);
    let m = model(
        &[
            ("x", 0.0, "v"),
            ("v", 0.0, "-c*v - x + cos(w*t) + 0*step(v)"),
        ],
        &[("c", c), ("w", w)],
    );
    let strobe = strobe(&m, "2*pi/w", 0.0);
    let run = window(1e-12, 150.0, 60.0);
    let cloud = strobe_cloud(&m, strobe, &run);
    let report = cycle_from(&m, MapKind::Strobe(strobe), &run, &cloud, 1);
    assert!(!report.from_differences);
    let modulus = (-c * PI / w).exp();
    for mu in &report.multipliers {
        assert!(rel(mu.modulus(), modulus) < 1e-6, "{mu}");
    }
    // a jump that is not a located switch (%) is differenced
    let m = model(
        &[
            ("x", 0.0, "v"),
            ("v", 0.0, "-c*v - x + cos(w*t) + 0*(v % 1)"),
        ],
        &[("c", c), ("w", w)],
    );
    let cloud = strobe_cloud(&m, strobe, &run);
    let report = cycle_from(&m, MapKind::Strobe(strobe), &run, &cloud, 1);
    assert!(report.from_differences && !report.sliding);
    for mu in &report.multipliers {
        assert!(rel(mu.modulus(), modulus) < 1e-6, "{mu}");
    }
}

#[test]
fn jumps_are_told_apart_from_kinks_and_forcing() {
    let jumps = |rate: &str| model(&[("x", 0.0, rate)], &[("k", 1.0)]).jumps_with_states();
    // [analytic] sign, step, floor, ceil and % of a state jump; abs, min and max only kink;
    // a jump in t alone leaves the derivatives with respect to the state intact
    for rate in [
        "sign(x)",
        "-k*step(x - 1)",
        "floor(2*x)",
        "ceil(x)",
        "x % 2",
    ] {
        assert!(jumps(rate), "{rate}");
    }
    for rate in [
        "abs(x)",
        "max(x, 0) - min(x, 1)",
        "sign(sin(t))",
        "step(k) * x",
    ] {
        assert!(!jumps(rate), "{rate}");
    }
}
