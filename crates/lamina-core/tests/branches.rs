//! Branches of resting points against analytic values: folds, the pitchfork and the Hopf
//! point of Lorenz's model, the Hopf points of Van der Pol's oscillator and the Brusselator
//! with the periods of the orbits born there; the range, the start and cancelling.

mod common;

use std::f64::consts::TAU;
use std::ops::ControlFlow;

use common::*;
use lamina_core::Interrupt;
use lamina_core::branch::{
    Branch, BranchError, BranchPoint, BranchRange, BranchSettings, BranchSink, BranchStart,
    EndReason, SpecialKind, follow_rest_branch,
};
use lamina_core::model::Model;
use lamina_core::rest::RestKind;

/// The resting branch of `model` in parameter 0 over `[from, to]` from `state`.
fn rest_branch(model: &Model, from: f64, to: f64, state: &[f64]) -> Branch {
    let range = BranchRange {
        parameter: 0,
        from,
        to,
    };
    follow_rest_branch(
        model,
        &range,
        state,
        &BranchSettings::default(),
        &mut (),
        &Interrupt::new(),
    )
    .unwrap_or_else(|e| panic!("{e}"))
}

/// The special points of one kind.
fn specials(branch: &Branch, kind: SpecialKind) -> Vec<(f64, Vec<f64>, Option<f64>)> {
    branch
        .special
        .iter()
        .filter(|s| s.kind == kind)
        .map(|s| (s.value, s.state.clone(), s.period))
        .collect()
}

#[test]
fn fold_of_the_square() {
    // x' = m - x^2 from x = 1 at m = 1 (the upper end): toward m = -1 only
    let m = model(&[("x", 1.0, "m - x^2")], &[("m", 1.0)]);
    let branch = rest_branch(&m, -1.0, 1.0, &[1.0]);
    let folds = specials(&branch, SpecialKind::Fold);
    assert_eq!(folds.len(), 1, "{:?}", branch.special);
    // [analytic] REFERENCES case 21: the fold of x' = m - x^2 is at m = 0, x = 0
    assert!(folds[0].0.abs() < 1e-8, "{}", folds[0].0);
    assert!(folds[0].1[0].abs() < 1e-4, "{:?}", folds[0].1);
    assert_eq!(branch.ends.len(), 1);
    // [analytic] past the fold the branch x = -sqrt(m) comes back to m = 1
    assert_eq!(branch.ends[0].reason, EndReason::Bound { value: 1.0 });
    // in branch order the end reached going toward `from` comes first
    let end = branch.points.first().expect("points");
    assert!((end.state[0] + 1.0).abs() < 1e-9, "{:?}", end.state);
    // [analytic] x = sqrt(m) is stable (eigenvalue -2x), x = -sqrt(m) unstable
    for p in &branch.points {
        if p.state[0].abs() > 1e-3 {
            assert_eq!(p.stable, p.state[0] > 0.0, "{p:?}");
        }
    }
    assert_eq!(branch.start, BranchStart::Given { value: 1.0 });
    assert_eq!(branch.start_index, Some(branch.points.len() - 1));
}

#[test]
fn two_folds_of_the_cubic() {
    // x' = m - x^3 + 3x from m = -3 (the lower end) on the branch x < -1
    let m = model(&[("x", -2.0, "m - x^3 + 3*x")], &[("m", -3.0)]);
    let branch = rest_branch(&m, -3.0, 3.0, &[-2.1]);
    let folds = specials(&branch, SpecialKind::Fold);
    assert_eq!(folds.len(), 2, "{:?}", branch.special);
    // [analytic] REFERENCES case 21: folds at m = +2 (x = -1) and m = -2 (x = +1)
    assert!((folds[0].0 - 2.0).abs() < 1e-8, "{}", folds[0].0);
    assert!((folds[0].1[0] + 1.0).abs() < 1e-4);
    assert!((folds[1].0 + 2.0).abs() < 1e-8, "{}", folds[1].0);
    assert!((folds[1].1[0] - 1.0).abs() < 1e-4);
    assert_eq!(branch.ends[0].reason, EndReason::Bound { value: 3.0 });
    // [analytic] the middle part (-1 < x < 1) is unstable: eigenvalue 3 - 3x^2 > 0
    let middle: Vec<&BranchPoint> = branch
        .points
        .iter()
        .filter(|p| p.state[0].abs() < 0.9)
        .collect();
    assert!(!middle.is_empty());
    assert!(middle.iter().all(|p| !p.stable && p.n_unstable == 1));
}

fn lorenz(rho: f64) -> Model {
    model(
        &[
            ("x", 1.0, "sigma*(y - x)"),
            ("y", 1.0, "rho*x - y - x*z"),
            ("z", 1.0, "x*y - beta*z"),
        ],
        &[("rho", rho), ("sigma", 10.0), ("beta", 8.0 / 3.0)],
    )
}

#[test]
fn lorenz_pitchfork_is_a_branch_point_at_one() {
    let m = lorenz(0.5);
    let branch = rest_branch(&m, 0.0, 2.0, &[0.0, 0.0, 0.0]);
    let points = specials(&branch, SpecialKind::BranchPoint);
    assert_eq!(points.len(), 1, "{:?}", branch.special);
    // [analytic] REFERENCES case 20: the pitchfork of Lorenz's origin is at rho = 1
    assert!((points[0].0 - 1.0).abs() < 1e-8, "{}", points[0].0);
    assert!(specials(&branch, SpecialKind::Fold).is_empty());
    // [analytic] the origin is a stable node below rho = 1 and a saddle with one unstable
    // direction above it
    for p in &branch.points {
        if p.value < 0.99 {
            assert_eq!(p.kind, Some(RestKind::StableNode), "{p:?}");
        } else if p.value > 1.01 {
            assert_eq!(p.kind, Some(RestKind::Saddle), "{p:?}");
            assert_eq!(p.n_unstable, 1);
        }
    }
    assert_eq!(branch.ends.len(), 2);
}

#[test]
fn lorenz_curved_half_of_the_pitchfork_meets_the_origin_at_a_branch_point() {
    // from (sqrt(beta (rho - 1)), same, rho - 1) at rho = 10 down toward rho = 0.5: the branch
    // turns back at rho = 1, where it meets the origin's branch
    let m = lorenz(10.0);
    let c = (8.0f64 / 3.0 * 9.0).sqrt();
    let branch = rest_branch(&m, 0.5, 12.0, &[c, c, 9.0]);
    let points = specials(&branch, SpecialKind::BranchPoint);
    // [analytic] REFERENCES case 20: the pitchfork at rho = 1 is where two branches cross, not
    // a fold (the origin's branch passes through it)
    assert_eq!(points.len(), 1, "{:?}", branch.special);
    assert!((points[0].0 - 1.0).abs() < 1e-6, "{}", points[0].0);
    assert!(
        points[0].1.iter().all(|x| x.abs() < 1e-3),
        "{:?}",
        points[0].1
    );
    assert!(
        specials(&branch, SpecialKind::Fold).is_empty(),
        "{:?}",
        branch.special
    );
}

#[test]
fn lorenz_hopf_at_470_over_19() {
    let m = lorenz(20.0);
    let c = (8.0f64 / 3.0 * 19.0).sqrt();
    let branch = rest_branch(&m, 15.0, 30.0, &[c, c, 19.0]);
    let hopf = specials(&branch, SpecialKind::Hopf);
    assert_eq!(hopf.len(), 1, "{:?}", branch.special);
    // [analytic] REFERENCES case 7: rho_H = sigma (sigma + beta + 3) / (sigma - beta - 1) = 470/19
    assert!((hopf[0].0 - 470.0 / 19.0).abs() < 1e-8, "{}", hopf[0].0);
    // [analytic] at rho_H the resting point is (sqrt(beta (rho - 1)), same, rho - 1)
    let r: f64 = 470.0 / 19.0;
    let x = (8.0 / 3.0 * (r - 1.0)).sqrt();
    assert!((hopf[0].1[0] - x).abs() < 1e-6 && (hopf[0].1[2] - (r - 1.0)).abs() < 1e-6);
    // [analytic] the pair on the imaginary axis is +-i omega with omega^2 = the characteristic
    // polynomial's coefficient of lambda: beta (rho_H + sigma) = 8/3 * (470/19 + 10)
    let omega = (8.0 / 3.0 * (r + 10.0)).sqrt();
    let period = hopf[0].2.expect("a Hopf point has a period");
    assert!((period - TAU / omega).abs() < 1e-6, "{period}");
    // [analytic] REFERENCES case 20: below rho_H a stable focus, above a saddle focus with
    // one real negative eigenvalue and a pair of positive real part
    for p in &branch.points {
        if p.value < r - 0.01 {
            assert_eq!(p.kind, Some(RestKind::StableFocus), "{p:?}");
        } else if p.value > r + 0.01 {
            assert_eq!(p.kind, Some(RestKind::SaddleFocus), "{p:?}");
            assert_eq!(p.n_unstable, 2);
        }
    }
}

fn van_der_pol(mu: f64) -> Model {
    model(
        &[("x", 0.1, "v"), ("v", 0.0, "mu*(1 - x^2)*v - x")],
        &[("mu", mu)],
    )
}

#[test]
fn van_der_pol_hopf_at_zero_with_period_two_pi() {
    let m = van_der_pol(-0.5);
    let branch = rest_branch(&m, -1.0, 1.0, &[0.0, 0.0]);
    let hopf = specials(&branch, SpecialKind::Hopf);
    assert_eq!(hopf.len(), 1, "{:?}", branch.special);
    // [analytic] REFERENCES case 22: Hopf at mu = 0 with period 2 pi
    assert!(hopf[0].0.abs() < 1e-8, "{}", hopf[0].0);
    assert!((hopf[0].2.expect("period") - TAU).abs() < 1e-8);
}

#[test]
fn brusselator_hopf_at_one_plus_a_squared() {
    for a in [1.0, 1.5] {
        let m = model(
            &[("x", a, "a - (b + 1)*x + x^2*y"), ("y", 1.0, "b*x - x^2*y")],
            &[("b", 1.5), ("a", a)],
        );
        let branch = rest_branch(&m, 1.0, 4.0, &[a, 1.5 / a]);
        let hopf = specials(&branch, SpecialKind::Hopf);
        assert_eq!(hopf.len(), 1, "{:?}", branch.special);
        // [analytic] REFERENCES case 12 and 22: Hopf at B = 1 + A^2, period 2 pi / A, at the
        // resting point (A, B / A)
        assert!((hopf[0].0 - (1.0 + a * a)).abs() < 1e-8, "{}", hopf[0].0);
        assert!((hopf[0].2.expect("period") - TAU / a).abs() < 1e-8);
        assert!((hopf[0].1[0] - a).abs() < 1e-8);
        assert!((hopf[0].1[1] - (1.0 + a * a) / a).abs() < 1e-8);
    }
}

#[test]
fn bad_ranges_and_starts_are_refused() {
    let m = model(&[("x", 1.0, "m - x^2")], &[("m", 1.0)]);
    let run = |from: f64, to: f64, state: &[f64]| {
        follow_rest_branch(
            &m,
            &BranchRange {
                parameter: 0,
                from,
                to,
            },
            state,
            &BranchSettings::default(),
            &mut (),
            &Interrupt::new(),
        )
    };
    assert!(matches!(
        run(1.0, 1.0, &[1.0]),
        Err(BranchError::EmptyRange { .. })
    ));
    assert!(matches!(
        run(2.0, 3.0, &[1.0]),
        Err(BranchError::OutsideRange { .. })
    ));
    let no_rest = model(&[("x", 1.0, "m - x^2")], &[("m", -1.0)]);
    let outcome = follow_rest_branch(
        &no_rest,
        &BranchRange {
            parameter: 0,
            from: -2.0,
            to: 0.0,
        },
        &[1.0],
        &BranchSettings::default(),
        &mut (),
        &Interrupt::new(),
    );
    // [analytic] x' = m - x^2 has no resting point for m < 0
    assert!(
        matches!(outcome, Err(BranchError::NotNear { .. })),
        "{outcome:?}"
    );
    let forced = model(&[("x", 1.0, "m - x + sin(t)")], &[("m", 1.0)]);
    let outcome = follow_rest_branch(
        &forced,
        &BranchRange {
            parameter: 0,
            from: 0.0,
            to: 2.0,
        },
        &[1.0],
        &BranchSettings::default(),
        &mut (),
        &Interrupt::new(),
    );
    assert!(matches!(outcome, Err(BranchError::Forced)));
}

/// Stops after a number of points.
struct StopAfter(usize, usize);

impl BranchSink for StopAfter {
    fn point(&mut self, _point: &BranchPoint) -> ControlFlow<()> {
        self.1 += 1;
        if self.1 >= self.0 {
            ControlFlow::Break(())
        } else {
            ControlFlow::Continue(())
        }
    }
}

#[test]
fn a_sink_or_the_interrupt_stops_the_branch() {
    let m = model(&[("x", 1.0, "m - x^3 + 3*x")], &[("m", -3.0)]);
    let range = BranchRange {
        parameter: 0,
        from: -3.0,
        to: 3.0,
    };
    let mut sink = StopAfter(3, 0);
    let branch = follow_rest_branch(
        &m,
        &range,
        &[-2.1],
        &BranchSettings::default(),
        &mut sink,
        &Interrupt::new(),
    )
    .expect("started");
    assert_eq!(branch.ends[0].reason, EndReason::Cancelled);
    assert_eq!(branch.points.len(), 1 + 3);
    let interrupt = Interrupt::new();
    interrupt.raise();
    let branch = follow_rest_branch(
        &m,
        &range,
        &[-2.1],
        &BranchSettings::default(),
        &mut (),
        &interrupt,
    );
    assert!(matches!(branch, Err(BranchError::Cancelled)), "{branch:?}");
}
