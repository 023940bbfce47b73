//! Branches of periodic orbits against analytic, published and independently computed
//! values: orbits born at a Hopf point, folds of orbits, the Rössler family's period doublings
//! and the switch onto the doubled orbit, a forced oscillator's strobe orbits (period moving
//! with the parameter) with a torus birth, and multiple shooting of a strongly unstable orbit.

mod common;

use std::f64::consts::{PI, TAU};

use common::*;
use lamina_core::Interrupt;
use lamina_core::branch::{
    Branch, BranchError, BranchRange, BranchSettings, BranchStart, EndReason, OrbitMap, OrbitStart,
    SpecialKind, SpecialPoint, Spectrum, doubled_orbits, follow_orbit_branch, follow_rest_branch,
    orbits_from_hopf,
};
use lamina_core::cycle::{MapKind, Multiplier};
use lamina_core::model::Model;
use lamina_core::run::{Direction, RunSpec, StrobeSpec};

fn range(from: f64, to: f64) -> BranchRange {
    BranchRange {
        parameter: 0,
        from,
        to,
    }
}

fn multipliers(spectrum: &Spectrum) -> &[Multiplier] {
    match spectrum {
        Spectrum::Multipliers(values) => values,
        Spectrum::Eigenvalues(_) => panic!("an orbit has multipliers"),
    }
}

fn special(branch: &Branch, kind: SpecialKind) -> Vec<SpecialPoint> {
    branch
        .special
        .iter()
        .filter(|s| s.kind == kind)
        .cloned()
        .collect()
}

fn orbit_branch(
    model: &Model,
    map: &OrbitMap,
    run: &RunSpec,
    range: &BranchRange,
    start: &OrbitStart,
) -> Branch {
    follow_orbit_branch(
        model,
        map,
        run,
        range,
        start,
        &BranchSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .unwrap_or_else(|e| panic!("{e}"))
}

#[test]
fn brusselator_orbits_born_at_the_hopf_point() {
    let m = model(
        &[
            ("x", 1.0, "a - (b + 1)*x + x^2*y"),
            ("y", 1.5, "b*x - x^2*y"),
        ],
        &[("b", 1.5), ("a", 1.0)],
    );
    let range = range(1.5, 2.01);
    let rest = follow_rest_branch(
        &m,
        &range,
        &[1.0, 1.5],
        &BranchSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .expect("resting branch");
    let hopf = special(&rest, SpecialKind::Hopf).remove(0);
    let cut = plane(&m, &[("x", 1.0)], 1.0, Direction::Rising);
    let run = window(1e-10, 0.0, 100.0);
    let branch = orbits_from_hopf(
        &m,
        &OrbitMap::Cut(cut),
        &run,
        &range,
        &hopf,
        &BranchSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .expect("orbit branch");
    // [analytic] REFERENCES case 12: the Hopf point is at B = 1 + A^2 = 2, period 2 pi / A
    match branch.start {
        BranchStart::Hopf { value, period } => {
            assert!((value - 2.0).abs() < 1e-8 && (period - TAU).abs() < 1e-8);
        }
        other => panic!("{other:?}"),
    }
    assert_eq!(branch.start_index, None);
    let first = &branch.points[0];
    // [analytic] the orbits born there start with the period 2 pi / A
    assert!((first.period.expect("orbit") - TAU).abs() < 1e-3);
    // [analytic] REFERENCES case 12: the orbits exist above B = 2 and are stable
    assert!(
        branch
            .points
            .iter()
            .all(|p| p.value >= 2.0 - 1e-9 && p.stable)
    );
    let last = branch.points.last().expect("points");
    assert_eq!(branch.ends[0].reason, EndReason::Bound { value: 2.01 });
    // Hairer, Norsett & Wanner, Solving ODEs I, sec. I.16, ex. 7 (REFERENCES case 12, [R]):
    // at A = 1, B = 2 + 0.1^2 the period is 6.28671368
    assert!(
        rel(last.period.expect("orbit"), 6.28671368) < 1e-8,
        "{last:?}"
    );
    // the orbit crosses the cut x = 1 once per period, on it
    assert_eq!(last.points.len(), 1);
    assert!((last.state[0] - 1.0).abs() < 1e-12);
}

#[test]
fn van_der_pol_orbit_branch_through_the_published_orbit() {
    let m = model(
        &[("x", 2.0, "v"), ("v", 0.0, "mu*(1 - x^2)*v - x")],
        &[("mu", 1.0)],
    );
    let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
    let run = window(1e-11, 50.0, 40.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut.clone()), &run, &cloud, 1);
    let branch = orbit_branch(
        &m,
        &OrbitMap::Cut(cut),
        &run,
        &range(0.5, 2.0),
        &OrbitStart::from_report(&report),
    );
    let start = &branch.points[branch.start_index.expect("given start")];
    // Hairer, Norsett & Wanner, Solving ODEs I, sec. I.16, ex. 1 (REFERENCES case 8): period
    // 6.6632868593231301897 and amplitude 2.0086198608748431365 at mu = 1
    assert!(rel(start.period.expect("orbit"), 6.66328685932313) < 1e-9);
    assert!(rel(start.state[0], 2.008619860874843) < 1e-9, "{start:?}");
    // [R] REFERENCES case 8: the nontrivial multiplier 8.59695e-4
    let m1 = multipliers(&start.spectrum)[0];
    assert!(rel(m1.re, 8.59695e-4) < 1e-4, "{m1}");
    assert_eq!(branch.ends.len(), 2);
    for end in &branch.ends {
        assert_eq!(end.reason, EndReason::Bound { value: end.toward });
    }
    // [from memory] the amplitude of Van der Pol's orbit stays near 2 and its period grows
    // with mu
    for pair in branch.points.windows(2) {
        assert!(pair[1].period > pair[0].period, "{pair:?}");
        assert!((pair[1].state[0] - 2.0).abs() < 0.05);
    }
    assert!(special(&branch, SpecialKind::PeriodDoubling).is_empty());
    assert!(special(&branch, SpecialKind::Fold).is_empty());
}

#[test]
fn fold_of_orbits_where_two_cycles_meet() {
    // r' = r (mu + 2 r^2 - r^4), theta' = 1: cycles where s = r^2 solves mu + 2 s - s^2 = 0
    let m = model(
        &[
            ("x", 1.5, "x*(mu + 2*(x^2 + y^2) - (x^2 + y^2)^2) - y"),
            ("y", 0.0, "y*(mu + 2*(x^2 + y^2) - (x^2 + y^2)^2) + x"),
        ],
        &[("mu", -0.5)],
    );
    let cut = plane(&m, &[("y", 1.0)], 0.0, Direction::Rising);
    let run = window(1e-11, 0.0, 100.0);
    let s = 1.0 + 0.5f64.sqrt();
    let start = OrbitStart {
        t: 0.0,
        state: vec![s.sqrt(), 0.0],
        period: TAU,
        returns: 1,
        monodromy: None,
    };
    let branch = orbit_branch(&m, &OrbitMap::Cut(cut), &run, &range(-0.5, -2.0), &start);
    let folds = special(&branch, SpecialKind::Fold);
    assert_eq!(folds.len(), 1, "{:?}", branch.special);
    // [analytic] the two cycles s = 1 +- sqrt(1 + mu) meet at mu = -1, r = 1
    assert!((folds[0].value + 1.0).abs() < 1e-8, "{}", folds[0].value);
    assert!((folds[0].state[0] - 1.0).abs() < 1e-4);
    assert_eq!(branch.ends.len(), 1);
    assert_eq!(branch.ends[0].reason, EndReason::Bound { value: -0.5 });
    for p in &branch.points {
        let s = p.state[0] * p.state[0];
        // [analytic] on the cycle mu = s^2 - 2 s, period 2 pi, and the multiplier is
        // exp(2 pi d(r')/dr) = exp(2 pi 4 s (1 - s))
        assert!((p.value - (s * s - 2.0 * s)).abs() < 1e-8, "{p:?}");
        assert!((p.period.expect("orbit") - TAU).abs() < 1e-8);
        let expected = (TAU * 4.0 * s * (1.0 - s)).exp();
        let got = multipliers(&p.spectrum)[0].re;
        assert!(rel(got, expected) < 1e-6, "{got} vs {expected} at {p:?}");
        if (s - 1.0).abs() > 1e-3 {
            // [analytic] the outer cycle (s > 1) is stable, the inner one unstable
            assert_eq!(p.stable, s > 1.0, "{p:?}");
        }
    }
}

fn rossler(c: f64) -> Model {
    model(
        &[
            ("x", 1.0, "-y - z"),
            ("y", 1.0, "x + a*y"),
            ("z", 0.0, "b + z*(x - c)"),
        ],
        &[("c", c), ("a", 0.2), ("b", 0.2)],
    )
}

#[test]
fn rossler_period_doublings_and_the_doubled_branch() {
    let m = rossler(2.5);
    let cut = plane(&m, &[("x", 1.0)], 0.0, Direction::Falling);
    let run = window(1e-10, 200.0, 100.0);
    let cloud = cut_cloud(&m, &cut, &run);
    let report = cycle_from(&m, MapKind::Cut(cut.clone()), &run, &cloud, 1);
    let map = OrbitMap::Cut(cut);
    let branch = orbit_branch(
        &m,
        &map,
        &run,
        &range(2.5, 5.7),
        &OrbitStart::from_report(&report),
    );
    let doublings = special(&branch, SpecialKind::PeriodDoubling);
    assert_eq!(doublings.len(), 1, "{:?}", branch.special);
    // SciPy 1.17 (REFERENCES case 24, [R]): shooting from x = 0 with solve_ivp DOP853 at
    // rtol = atol = 1e-12 on the model and its variational equations, Newton on (y, z, T),
    // brentq on c for the real multiplier + 1: c = 2.832445027850467 (1e-13 tolerances give
    // 2.832445027861472)
    assert!(
        (doublings[0].value - 2.832445027850467).abs() < 1e-8,
        "{doublings:?}"
    );
    // the same computation: the orbit's period there 5.769820016505902
    assert!((doublings[0].period.expect("orbit") - 5.769820016505902).abs() < 1e-7);
    let end = branch.points.last().expect("points");
    assert_eq!(branch.ends[0].reason, EndReason::Bound { value: 5.7 });
    // ChaosBook.org, "Rössler's model" (REFERENCES case 10): at c = 5.7 the period-1 orbit
    // crosses x = 0 at (y, z) = (6.09176831742, 1.29973195919) with period 5.88108845586 and
    // the unstable multiplier -2.403953527
    assert!((end.state[1] - 6.09176831742).abs() < 1e-7, "{end:?}");
    assert!((end.state[2] - 1.29973195919).abs() < 1e-7);
    assert!((end.period.expect("orbit") - 5.88108845586).abs() < 1e-8);
    assert!((multipliers(&end.spectrum)[0].re + 2.403953527).abs() < 1e-6);
    assert!(!end.stable && end.n_unstable == 1);

    let doubled = doubled_orbits(
        &m,
        &map,
        &run,
        &range(2.5, 3.9),
        &doublings[0],
        &BranchSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .expect("doubled branch");
    assert!(matches!(doubled.start, BranchStart::PeriodDoubling { .. }));
    let first = &doubled.points[0];
    // [analytic] the doubled orbit is born with twice the period and two cut points
    assert!((first.period.expect("orbit") - 2.0 * 5.769820016505902).abs() < 1e-3);
    assert_eq!(first.points.len(), 2);
    assert!(first.stable && first.value > doublings[0].value);
    let second = special(&doubled, SpecialKind::PeriodDoubling);
    assert_eq!(second.len(), 1, "{:?}", doubled.special);
    // SciPy 1.17, the same method from the settled period-2 orbit at c = 3.5: the doubled
    // orbit doubles again at c = 3.837358168403212
    assert!(
        (second[0].value - 3.837358168403212).abs() < 1e-8,
        "{second:?}"
    );
    let last = doubled.points.last().expect("points");
    assert_eq!(doubled.ends[0].reason, EndReason::Bound { value: 3.9 });
    // SciPy 1.17, the same method: at c = 3.9 the period-2 orbit has period
    // 11.578554195248769 and the multiplier -1.1026655572917543
    assert!((last.period.expect("orbit") - 11.578554195248769).abs() < 1e-7);
    assert!((multipliers(&last.spectrum)[0].re + 1.1026655572917543).abs() < 1e-6);
}

/// x'' + 2 zeta x' + x = a cos(w t) as a two-state model with its strobe at 2 pi / w.
fn forced_oscillator(first: (&str, f64), second: (&str, f64)) -> (Model, StrobeSpec) {
    let m = model(
        &[("x", 0.0, "v"), ("v", 0.0, "-2*zeta*v - x + a*cos(w*t)")],
        &[first, second, ("a", 0.5)],
    );
    let strobe = StrobeSpec {
        period: "2*pi/w".to_string(),
        first_at: 0.0,
    };
    (m, strobe)
}

/// The forced oscillator's orbit at t = 0: Re of a / (1 - w^2 + 2 i zeta w) and its rate.
fn exact_orbit(zeta: f64, w: f64, a: f64) -> [f64; 2] {
    let d = (1.0 - w * w).powi(2) + (2.0 * zeta * w).powi(2);
    [a * (1.0 - w * w) / d, 2.0 * a * zeta * w * w / d]
}

#[test]
fn forced_oscillator_strobe_orbits_follow_the_moving_period() {
    let zeta = 0.1;
    let (m, strobe) = forced_oscillator(("w", 0.8), ("zeta", zeta));
    let run = window(1e-11, 0.0, 100.0);
    let start = OrbitStart {
        t: 0.0,
        state: exact_orbit(zeta, 0.8, 0.5).to_vec(),
        period: TAU / 0.8,
        returns: 1,
        monodromy: None,
    };
    let branch = orbit_branch(
        &m,
        &OrbitMap::Strobe(strobe),
        &run,
        &range(0.5, 1.5),
        &start,
    );
    assert_eq!(branch.ends.len(), 2);
    assert!(branch.points.len() > 10);
    for p in &branch.points {
        let exact = exact_orbit(zeta, p.value, 0.5);
        // [analytic] the steady oscillation of the forced linear oscillator
        assert!((p.state[0] - exact[0]).abs() < 1e-8, "{p:?} vs {exact:?}");
        assert!((p.state[1] - exact[1]).abs() < 1e-8);
        let period = TAU / p.value;
        assert!((p.period.expect("orbit") - period).abs() < 1e-12);
        // [analytic] the strobe multipliers exp((-zeta +- i sqrt(1 - zeta^2)) T)
        for mu in multipliers(&p.spectrum) {
            assert!(rel(mu.modulus(), (-zeta * period).exp()) < 1e-7, "{mu}");
        }
        assert!(p.stable);
    }
}

#[test]
fn forced_oscillator_torus_birth_where_the_damping_changes_sign() {
    let (m, strobe) = forced_oscillator(("zeta", 0.05), ("w", 0.8));
    let run = window(1e-11, 0.0, 100.0);
    let start = OrbitStart {
        t: 0.0,
        state: exact_orbit(0.05, 0.8, 0.5).to_vec(),
        period: TAU / 0.8,
        returns: 1,
        monodromy: None,
    };
    let branch = orbit_branch(
        &m,
        &OrbitMap::Strobe(strobe),
        &run,
        &range(-0.1, 0.1),
        &start,
    );
    let tori = special(&branch, SpecialKind::Torus);
    assert_eq!(tori.len(), 1, "{:?}", branch.special);
    // [analytic] the pair exp((-zeta +- i sqrt(1 - zeta^2)) T) crosses the unit circle at
    // zeta = 0, at the angle T = 2 pi / 0.8 = 2.5 pi, that is pi / 2
    assert!(tori[0].value.abs() < 1e-8, "{:?}", tori[0]);
    assert!((tori[0].frequency.expect("angle").abs() - PI / 2.0).abs() < 1e-6);
    for p in &branch.points {
        assert_eq!(p.stable, p.value > 1e-9, "{p:?}");
    }
}

#[test]
fn multiple_shooting_holds_a_strongly_unstable_orbit() {
    // r' = r (r^2 - rho^2), theta' = w: the unstable cycle r = rho, period 2 pi / w,
    // multiplier exp(2 rho^2 2 pi / w)
    let w = 0.5;
    let m = model(
        &[
            ("x", 1.0, "x*(x^2 + y^2 - rho^2) - w*y"),
            ("y", 0.0, "y*(x^2 + y^2 - rho^2) + w*x"),
        ],
        &[("rho", 1.0), ("w", w)],
    );
    let cut = plane(&m, &[("y", 1.0)], 0.0, Direction::Rising);
    let run = window(1e-11, 0.0, 100.0);
    let period = TAU / w;
    let growth = (2.0 * period).exp();
    let start = OrbitStart {
        t: 0.0,
        state: vec![1.0, 0.0],
        period,
        returns: 1,
        monodromy: Some(vec![growth, 0.0, 0.0, 1.0]),
    };
    let branch = orbit_branch(&m, &OrbitMap::Cut(cut), &run, &range(1.0, 1.2), &start);
    assert_eq!(branch.ends[0].reason, EndReason::Bound { value: 1.2 });
    assert!(branch.most_segments >= 6, "{}", branch.most_segments);
    for p in &branch.points {
        let rho = p.value;
        // [analytic] the cycle is the circle r = rho with period 2 pi / w
        assert!((p.state[0] - rho).abs() < 1e-8, "{p:?}");
        assert!((p.period.expect("orbit") - period).abs() < 1e-8);
        let expected = (2.0 * rho * rho * period).exp();
        let got = multipliers(&p.spectrum)[0].re;
        assert!(rel(got, expected) < 1e-5, "{got:e} vs {expected:e}");
        assert!(!p.stable && p.n_unstable == 1);
    }
}

#[test]
fn rates_that_jump_take_their_derivatives_from_differences() {
    // the planar limit cycle with its radial term multiplied by step(x^2), which is always 1
    // but counts as a rate that jumps with the states
    let m = model(
        &[
            ("x", 1.0, "x*(1 - x^2 - y^2)*step(x^2) - w*y"),
            ("y", 0.0, "y*(1 - x^2 - y^2)*step(x^2) + w*x"),
        ],
        &[("w", 2.0)],
    );
    assert!(m.jumps_with_states());
    let cut = plane(&m, &[("y", 1.0)], 0.0, Direction::Rising);
    let run = window(1e-11, 0.0, 100.0);
    let start = OrbitStart {
        t: 0.0,
        state: vec![1.0, 0.0],
        period: PI,
        returns: 1,
        monodromy: None,
    };
    let branch = orbit_branch(&m, &OrbitMap::Cut(cut), &run, &range(2.0, 3.0), &start);
    assert!(branch.from_differences);
    assert_eq!(branch.ends[0].reason, EndReason::Bound { value: 3.0 });
    for p in &branch.points {
        let w = p.value;
        // [analytic] REFERENCES case 3: the cycle r = 1, period 2 pi / w, nontrivial
        // multiplier exp(-2 * 2 pi / w)
        assert!((p.state[0] - 1.0).abs() < 1e-8, "{p:?}");
        assert!((p.period.expect("orbit") - TAU / w).abs() < 1e-8);
        let expected = (-2.0 * TAU / w).exp();
        let got = multipliers(&p.spectrum)[0].re;
        // central differences are accurate to about rtol^(2/3)
        assert!(rel(got, expected) < 1e-5, "{got:e} vs {expected:e}");
    }
}

#[test]
fn maps_that_do_not_fit_the_model_are_refused() {
    let (forced, strobe) = forced_oscillator(("w", 0.8), ("zeta", 0.1));
    let cut = plane(&forced, &[("v", 1.0)], 0.0, Direction::Rising);
    let run = window(1e-9, 0.0, 10.0);
    let start = OrbitStart {
        t: 0.0,
        state: vec![0.0, 0.0],
        period: 1.0,
        returns: 1,
        monodromy: None,
    };
    let outcome = |model: &Model, map: &OrbitMap| {
        follow_orbit_branch(
            model,
            map,
            &run,
            &range(0.5, 1.0),
            &start,
            &BranchSettings::default(),
            &mut (),
            &Interrupt::new(),
        )
    };
    assert!(matches!(
        outcome(&forced, &OrbitMap::Cut(cut)),
        Err(BranchError::ForcedCut)
    ));
    let autonomous = rossler(0.8);
    assert!(matches!(
        outcome(&autonomous, &OrbitMap::Strobe(strobe)),
        Err(BranchError::AutonomousStrobe)
    ));
    // a start far from any orbit
    let far = OrbitStart {
        state: vec![100.0, 100.0, 100.0],
        ..start
    };
    let cut = plane(&autonomous, &[("x", 1.0)], 0.0, Direction::Falling);
    let outcome = follow_orbit_branch(
        &autonomous,
        &OrbitMap::Cut(cut),
        &run,
        &range(0.5, 1.0),
        &far,
        &BranchSettings::default(),
        &mut (),
        &Interrupt::new(),
    );
    assert!(
        matches!(outcome, Err(BranchError::NotNear { .. })),
        "{outcome:?}"
    );
}
