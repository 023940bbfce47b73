//! Periodic orbits against analytic and published values: the variational equations, the
//! linearised cut and strobe maps, Newton refinement (stable and saddle orbits), multipliers,
//! and verdicts.

mod common;

use std::f64::consts::PI;

use common::*;
use lamina_core::cycle::{
    FlowMap, MapChoice, MapKind, MapPoint, MapSettings, NewtonSettings, Outlook, Verdict,
    find_cycle,
};
use lamina_core::recurrence::{Recurrence, RecurrenceSettings, find_recurrence};
use lamina_core::run::Direction;

#[test]
fn harmonic_strobe_monodromy_matches_the_exact_matrix() {
    let m = harmonic(2.0);
    let strobe = strobe(&m, "1", 0.0);
    let run = window(1e-12, 0.0, 10.0);
    let mut map = FlowMap::new(
        m,
        MapKind::Strobe(strobe),
        MapSettings::from_run(&run, 10.0),
    )
    .expect("strobe map");
    let image = map
        .apply(
            &MapPoint {
                t: 0.0,
                state: vec![1.0, 0.3],
            },
            1,
        )
        .expect("one period");
    // [analytic] REFERENCES case 2: Phi(1) = [[cos 2, sin 2 / 2], [-2 sin 2, cos 2]]
    let exact = [-0.4161468365, 0.4546487134, -1.8185948537, -0.4161468365];
    for (got, want) in image.monodromy.iter().zip(exact) {
        assert!((got - want).abs() < 1e-9, "{got} vs {want}");
    }
    let det = image.monodromy[0] * image.monodromy[3] - image.monodromy[1] * image.monodromy[2];
    // [analytic] REFERENCES case 2: det 1 (the flow keeps area)
    assert!((det - 1.0).abs() < 1e-9);
    let multipliers = lamina_core::cycle::multipliers(&image.jacobian, 2).expect("finite");
    for mu in &multipliers {
        // [analytic] REFERENCES case 2: multipliers exp(+-2i)
        assert!((mu.re - 2f64.cos()).abs() < 1e-9 && (mu.im.abs() - 2f64.sin()).abs() < 1e-9);
    }
}

#[test]
fn identity_strobe_map_fixes_every_point_without_failing() {
    for start in [[1.0, 0.3], [-0.2, 2.5]] {
        let m = model(
            &[("x", start[0], "v"), ("v", start[1], "-w^2*x")],
            &[("w", 2.0)],
        );
        let strobe = strobe(&m, "2*pi/w", 0.0);
        let run = window(1e-12, 0.0, 10.0);
        let mut map = FlowMap::new(
            m,
            MapKind::Strobe(strobe),
            MapSettings::from_run(&run, 10.0),
        )
        .expect("map");
        let seed = MapPoint {
            t: 0.0,
            state: start.to_vec(),
        };
        let report = find_cycle(&mut map, &[seed], 1, &NewtonSettings::for_rtol(1e-12))
            .unwrap_or_else(|e| panic!("the identity map must not fail: {e}"));
        // [analytic] REFERENCES case 2: with T = 2 pi / w every point is fixed
        for (got, want) in report.point.state.iter().zip(start) {
            assert!((got - want).abs() < 1e-9);
        }
        // [analytic] REFERENCES case 2: multipliers 1, 1
        assert_eq!(report.multipliers.len(), 2);
        for mu in &report.multipliers {
            assert!((mu.re - 1.0).abs() < 1e-8 && mu.im.abs() < 1e-8, "{mu}");
        }
        assert!(matches!(
            report.verdict,
            Verdict::Neutral { n_on_circle: 2 }
        ));
        assert_eq!(report.map, MapChoice::Strobe);
        assert!(report.floquet.is_none());
        // [analytic] the period of the strobe map is k T
        assert!(rel(report.period, PI) < 1e-14);
    }
}

#[test]
fn planar_limit_cycle_multiplier_is_exp_minus_two_pi() {
    let m = model(
        &[
            ("x", 0.5, "x*(1 - x^2 - y^2) - w*y"),
            ("y", 0.0, "y*(1 - x^2 - y^2) + w*x"),
        ],
        &[("w", 2.0)],
    );
    let cut = plane(&m, &[("y", 1.0)], 0.0, Direction::Rising);
    let plane_cut = cut.clone();
    let run = window(1e-12, 20.0, 30.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
    // [analytic] REFERENCES case 3: the cycle is r = 1, return time pi
    assert!(
        (report.point.state[0] - 1.0).abs() < 1e-9,
        "{:?}",
        report.point.state
    );
    assert!(rel(report.period, PI) < 1e-10, "{}", report.period);
    assert_eq!(report.multipliers.len(), 1);
    // [analytic] REFERENCES case 3: nontrivial Floquet multiplier exp(-2 pi)
    assert!(
        rel(report.multipliers[0].re, 1.86744273171e-3) < 1e-6,
        "{}",
        report.multipliers[0]
    );
    assert_eq!(report.verdict, Verdict::Stable);
    let floquet = report
        .floquet
        .as_ref()
        .expect("cut map has Floquet multipliers");
    // [analytic] the trivial Floquet multiplier along the flow is 1
    assert!((floquet[0].re - 1.0).abs() < 1e-8 && floquet[0].im == 0.0);
    assert!(rel(floquet[1].re, 1.86744273171e-3) < 1e-6);
    // [analytic] exp(-2 pi) is far inside the unit circle: no loss of stability to name
    assert!(
        matches!(report.outlook, Outlook::WellInside { .. }),
        "{}",
        report.outlook
    );
    assert_eq!(report.outlook.loss(), None);

    // the orbit over one period, for drawing: on the circle r = 1 and back at the start
    let settings = MapSettings::from_run(&run, 10.0);
    let mut map = FlowMap::new(m, MapKind::Cut(plane_cut), settings).expect("map");
    let path = map.trace(&report.point, report.period, 4).expect("trace");
    assert!(path.len() > 8);
    for q in &path {
        // [analytic] REFERENCES case 3: the cycle is the unit circle
        assert!((q.state[0].hypot(q.state[1]) - 1.0).abs() < 1e-9, "{q:?}");
    }
    let last = path.last().expect("points");
    assert!((last.t - report.point.t - report.period).abs() < 1e-12);
    assert!((last.state[0] - 1.0).abs() < 1e-9 && last.state[1].abs() < 1e-9);
}

#[test]
fn a_curved_cut_gives_the_same_multiplier() {
    // the multipliers of a periodic orbit do not depend on the section that cuts it [analytic]
    for method in METHODS {
        let m = model(
            &[
                ("x", 0.5, "x*(1 - x^2 - y^2) - w*y"),
                ("y", 0.0, "y*(1 - x^2 - y^2) + w*x"),
            ],
            &[("w", 2.0)],
        );
        let cut = level(&m, "y + 0.3*x^2 - 0.3", Direction::Rising);
        let run = spec(method, 1e-12, 20.0, 30.0);
        let cloud = cut_cloud(&m, &cut, &run);
        let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
        // [analytic] REFERENCES case 3: the surface meets the cycle r = 1 at (1, 0)
        assert!(
            (report.point.state[0] - 1.0).abs() < 1e-9,
            "{:?}",
            report.point
        );
        assert!(report.point.state[1].abs() < 1e-9);
        // [analytic] REFERENCES case 3: period pi, multiplier exp(-2 pi)
        assert!(rel(report.period, PI) < 1e-10);
        assert!(
            rel(report.multipliers[0].re, 1.86744273171e-3) < 1e-6,
            "{method:?}"
        );
    }
}

#[test]
#[allow(clippy::excessive_precision)] // the published digits, kept as printed
fn van_der_pol_period_and_multiplier() {
    let m = model(
        &[("x", 2.0, "v"), ("v", 0.0, "mu*(1 - x^2)*v - x")],
        &[("mu", 1.0)],
    );
    let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
    let run = window(1e-12, 30.0, 40.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
    // Hairer, Norsett & Wanner, Solving ODEs I, sec. I.16, ex. 1 (REFERENCES case 8)
    assert!(
        rel(report.period, 6.6632868593231301897) < 1e-9,
        "{}",
        report.period
    );
    assert!(rel(report.point.state[0], 2.0086198608748431365) < 1e-9);
    // REFERENCES case 8 [R]: multiplier exp(integral of mu (1 - x^2) dt) = 8.59695e-4
    assert!(
        rel(report.multipliers[0].re, 8.59695e-4) < 1e-4,
        "{}",
        report.multipliers[0]
    );
    assert!(report.is_stable());
}

#[test]
fn rossler_period_one_saddle() {
    let m = model(
        &[
            ("x", 1.0, "-y - z"),
            ("y", 1.0, "x + a*y"),
            ("z", 0.0, "b + z*(x - c)"),
        ],
        &[("a", 0.2), ("b", 0.2), ("c", 5.7)],
    );
    let cut = plane(&m, &[("x", 1.0)], 0.0, Direction::Falling);
    let run = window(1e-12, 100.0, 600.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let found = find_recurrence(&cloud, &RecurrenceSettings::for_control(&run.control));
    // [common practice] a chaotic attractor has no repeat
    assert!(matches!(found, Recurrence::NoRepeat { .. }), "{found}");
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
    let p = &report.point.state;
    // P. Cvitanović et al., ChaosBook.org, "Rössler's model" (REFERENCES case 10)
    assert!(p[0].abs() < 1e-12);
    assert!((p[1] - 6.09176831742).abs() < 1e-7, "y = {}", p[1]);
    assert!((p[2] - 1.29973195919).abs() < 1e-7, "z = {}", p[2]);
    assert!(
        (report.period - 5.88108845586).abs() < 1e-8,
        "T = {}",
        report.period
    );
    // ChaosBook.org (REFERENCES case 10): unstable multiplier -2.403953527
    assert!(
        (report.multipliers[0].re - -2.403953527).abs() < 1e-6,
        "{}",
        report.multipliers[0]
    );
    assert_eq!(report.verdict, Verdict::Unstable { n_unstable: 1 });
    let floquet = report.floquet.as_ref().expect("Floquet");
    // ChaosBook.org (REFERENCES case 10): the trivial multiplier 1 +- 1e-8
    assert!(
        floquet
            .iter()
            .any(|mu| (mu.re - 1.0).abs() < 1e-8 && mu.im == 0.0),
        "{floquet:?}"
    );
    // [analytic] an unstable orbit: how it repels, not how a far multiplier would cross
    assert!(
        matches!(report.outlook, Outlook::Unstable { n_unstable: 1, .. }),
        "{}",
        report.outlook
    );
    assert_eq!(report.outlook.loss(), None);
    assert!(
        report
            .outlook
            .to_string()
            .starts_with("unstable: |m| = 2.40395")
    );
}

#[test]
#[allow(clippy::excessive_precision)] // the published digits, kept as printed
fn lorenz_ab_orbit_is_a_period_two_saddle_of_the_cut() {
    let m = lorenz_from([1.0, 1.0, 1.0]);
    let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Rising);
    let run = window(1e-12, 50.0, 400.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 2);
    // D. Viswanath, Nonlinearity 16 (2003) 1035 (REFERENCES case 11): the AB orbit passes
    // (x, y) = (-13.7636106821342, -19.5787519424518) and its mirror (+x, +y)
    let (x, y) = (-13.7636106821342, -19.5787519424518);
    assert_eq!(report.orbit.len(), 2);
    let hit = report
        .orbit
        .iter()
        .any(|q| (q.state[0] - x).abs() < 1e-8 && (q.state[1] - y).abs() < 1e-8);
    assert!(hit, "{:?}", report.orbit);
    // Viswanath (REFERENCES case 11): period 1.558652210716175 over the two returns
    assert!(
        (report.period - 1.558652210716175).abs() < 1e-8,
        "{}",
        report.period
    );
    // REFERENCES case 11 [R]: unstable multiplier 4.71294727 of the twice-applied map
    assert!(
        rel(report.multipliers[0].re, 4.71294727) < 1e-5,
        "{}",
        report.multipliers[0]
    );
    // REFERENCES case 11 [R]: the other is near zero (about 1e-9)
    assert!(report.multipliers[1].modulus() < 1e-6);
    assert_eq!(report.verdict, Verdict::Unstable { n_unstable: 1 });
}

#[test]
fn lotka_volterra_centre_has_multiplier_one() {
    let m = model(
        &[("x", 3.0, "x - 0.5*x*y"), ("y", 4.0, "0.2*x*y - 0.6*y")],
        &[],
    );
    let cut = plane(&m, &[("x", 1.0)], 3.0, Direction::Rising);
    let run = window(1e-12, 0.0, 50.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
    // [analytic] REFERENCES case 5: a centre, return-map multiplier exactly 1
    assert!(
        (report.multipliers[0].re - 1.0).abs() < 1e-6,
        "{}",
        report.multipliers[0]
    );
    assert!(matches!(
        report.verdict,
        Verdict::Neutral { n_on_circle: 1 }
    ));
    // REFERENCES case 5 [R]: the orbit through (3, 4) crosses at y = 0.81275147992 and
    // returns after 8.67356229
    assert!((report.point.state[1] - 0.81275147992).abs() < 1e-8);
    assert!((report.period - 8.67356229).abs() < 1e-7);
}

#[test]
fn brusselator_period_near_onset() {
    let e: f64 = 0.1;
    let m = model(
        &[
            ("x", 1.1, "a - (b + 1)*x + x^2*y"),
            ("y", 2.0, "b*x - x^2*y"),
        ],
        &[("a", 1.0), ("b", 2.0 + e * e)],
    );
    let cut = plane(&m, &[("x", 1.0)], 1.0, Direction::Rising);
    let run = window(1e-12, 0.0, 60.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut), &run, &cloud, 1);
    // REFERENCES case 12 [R]: period 6.28671368
    assert!(
        (report.period - 6.28671368).abs() < 1e-8,
        "{}",
        report.period
    );
    // Hairer, Norsett & Wanner, sec. I.16, ex. 7 (REFERENCES case 12): 2 pi (1 + e^2/18) + O(e^4)
    assert!((report.period - 2.0 * PI * (1.0 + e * e / 18.0)).abs() < e.powi(4));
    assert!(report.is_stable());
}

#[test]
fn a_strobe_map_fixed_point_at_rest_is_called_a_resting_point() {
    // [analytic] x' = v, v' = -x - 0.5 v (damped) and x' = -x + 0.5 x cos t (forced, but 0
    // for every t at x = 0) both settle at rest at the origin; the strobe map fixes it, and
    // that is a resting point, not a periodic orbit
    let damped = model(&[("x", 1.0, "v"), ("v", 0.0, "-x - 0.5*v")], &[]);
    let forced = model(&[("x", 1.0, "-x + 0.5*x*cos(t)"), ("y", 0.0, "-y")], &[]);
    for m in [damped, forced] {
        let strobe = strobe(&m, "2*pi", 0.0);
        let run = window(1e-10, 100.0, 30.0);
        let cloud = strobe_cloud(&m, strobe, &run);
        let mut map = FlowMap::new(
            m,
            MapKind::Strobe(strobe),
            MapSettings::from_run(&run, 10.0),
        )
        .expect("map");
        let err = find_cycle(&mut map, &cloud[..1], 1, &NewtonSettings::for_rtol(1e-10))
            .expect_err("no periodic orbit");
        let lamina_core::cycle::CycleError::RestingPoint { state, .. } = &err else {
            panic!("expected a resting point, got {err}");
        };
        // [analytic] the origin, to the Newton tolerance (100 rtol)
        assert!(state.iter().all(|v| v.abs() < 1e-7), "{state:?}");
        assert!(err.to_string().contains("resting point"), "{err}");
    }
    // [analytic] x' = -x + cos t has the periodic response (cos t + sin t) / 2, which turns
    // round (x' = 0) at t = pi/4 + k pi: a strobe at that phase still finds the orbit
    let m = model(&[("x", 0.0, "-x + cos(t)")], &[]);
    let strobe = strobe(&m, "2*pi", PI / 4.0);
    let run = window(1e-10, 30.0, 30.0);
    let cloud = strobe_cloud(&m, strobe, &run);
    let mut map = FlowMap::new(
        m,
        MapKind::Strobe(strobe),
        MapSettings::from_run(&run, 10.0),
    )
    .expect("map");
    let report = find_cycle(&mut map, &cloud[..1], 1, &NewtonSettings::for_rtol(1e-10))
        .unwrap_or_else(|e| panic!("{e}"));
    // [analytic] x(pi/4) = (cos + sin)(pi/4) / 2 = 1 / sqrt 2
    assert!((report.point.state[0] - 0.5f64.sqrt()).abs() < 1e-8);
}

#[test]
fn failure_messages_read_as_one_sentence() {
    // every message is one line of single spaces (a line continuation once left a run of
    // spaces in the middle of one)
    let messages = [
        lamina_core::cycle::CycleError::RestPoint { size: 1.77e-14 }.to_string(),
        lamina_core::cycle::CycleError::RestingPoint {
            size: 1e-17,
            state: vec![1e-18, 0.0],
        }
        .to_string(),
        lamina_core::cycle::CycleError::TooLarge {
            bytes: 12_900_000_000,
            n_states: 200,
        }
        .to_string(),
    ];
    for message in messages {
        assert!(
            !message.contains("  ") && !message.contains('\n'),
            "{message}"
        );
    }
}
