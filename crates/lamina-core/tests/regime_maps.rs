//! Regime maps: the Brusselator's resting and periodic halves, a linear model at rest
//! everywhere, a spiral that escapes in half the plane, a driven oscillator read by its strobe,
//! shards and following neighbours.

mod common;

use std::ops::ControlFlow;

use common::*;
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::model::Model;
use lamina_core::regime_map::{
    Failure, MapAxisSpec, MapCell, MapProblem, Regime, RegimeMapSpec, run_cells, run_cells_in_order,
};
use lamina_core::run::{Cut, Direction, RunSpec, StopReason, Strobe, StrobeSpec};
use lamina_core::sweep::SweepSource;

fn no_strobe(_: &Model) -> Option<Strobe> {
    None
}

fn axis(parameter: usize, from: f64, to: f64, values: u32) -> MapAxisSpec {
    MapAxisSpec {
        parameter,
        from,
        to,
        values,
    }
}

fn map(x: MapAxisSpec, y: MapAxisSpec, settle: f64, span: f64) -> RegimeMapSpec {
    RegimeMapSpec {
        x,
        y,
        settle,
        span,
        source: SweepSource::Cut,
    }
}

fn run_spec() -> RunSpec {
    spec(Method::Dp853, 1e-9, 0.0, 1.0)
}

/// Every cell of `map`, in parallel.
fn all_cells(model: &Model, cut: &Cut, map: &RegimeMapSpec) -> Vec<MapCell> {
    all_cells_with(model, cut, map, &run_spec())
}

/// Every cell of `map` run with `run`'s integrator, in parallel.
fn all_cells_with(model: &Model, cut: &Cut, map: &RegimeMapSpec, run: &RunSpec) -> Vec<MapCell> {
    let problem = MapProblem {
        model,
        run,
        cut: Some(cut),
        strobe_for: &no_strobe,
        map,
    };
    let indices: Vec<usize> = (0..map.n_cells()).collect();
    run_cells(&problem, &indices, &Interrupt::new(), &|_| {}).expect("map runs")
}

/// Brusselator x' = A - (B + 1) x + x^2 y, y' = B x - x^2 y, cut x = A rising.
fn brusselator() -> (Model, Cut) {
    let m = model(
        &[
            ("x", 1.3, "a - (b + 1)*x + x^2*y"),
            ("y", 2.0, "b*x - x^2*y"),
        ],
        &[("a", 1.0), ("b", 2.0)],
    );
    let cut = level(&m, "x - a", Direction::Rising);
    (m, cut)
}

#[test]
fn the_brusselator_rests_below_its_hopf_curve_and_cycles_above() {
    let (m, cut) = brusselator();
    let spec = map(axis(0, 0.6, 1.4, 5), axis(1, 0.5, 4.5, 5), 120.0, 150.0);
    let cells = all_cells(&m, &cut, &spec);
    assert_eq!(cells.len(), 25);
    let mut judged = 0;
    for cell in &cells {
        let critical = 1.0 + cell.x * cell.x;
        // cells within half a grid step (in B) of the curve settle slowly: not a fair check
        if (cell.y - critical).abs() < 0.5 {
            continue;
        }
        judged += 1;
        if cell.y < critical {
            // REFERENCES case 23 [analytic]: the resting point (A, B/A) is stable for
            // B < 1 + A^2 (trace of the Jacobian B - 1 - A^2 < 0, determinant A^2 > 0)
            assert_eq!(cell.regime, Regime::Resting, "{cell:?}");
        } else {
            // REFERENCES case 23 [analytic]: above the Hopf curve a stable limit cycle,
            // one return per turn to the cut x = A
            assert_eq!(cell.regime, Regime::Periodic { returns: 1 }, "{cell:?}");
            // [analytic] the largest exponent of a limit cycle of an autonomous model is 0
            let l = cell.lyapunov.expect("exponent");
            assert!(l.abs() < 0.05, "{cell:?}");
        }
    }
    assert!(judged >= 15, "only {judged} cells away from the curve");
}

#[test]
fn cells_near_the_brusselator_hopf_curve_are_cycles_not_yet_reached_never_chaos() {
    let (m, cut) = brusselator();
    // the 8 x 8 benchmark map's second row: B = 1 + 3/7 lies just above 1 + A^2 for
    // A = 0.5 and A = 9/14, where the limit cycle grows slowly over a span of 200
    let spec = map(
        axis(0, 0.5, 1.5, 8),
        axis(1, 10.0 / 7.0, 10.0 / 7.0 + 1e-9, 2),
        200.0,
        200.0,
    );
    let mut run = run_spec();
    run.control.atol = 1e-12;
    let cells = all_cells_with(&m, &cut, &spec, &run);
    for cell in &cells {
        // [analytic] Poincaré–Bendixson: a bounded orbit of a plane flow tends to a resting
        // point or a periodic orbit, so no cell of a two-state unforced model is chaotic or
        // quasi-periodic, whatever the exponent's estimate over a short span says
        assert!(
            matches!(cell.regime, Regime::Resting | Regime::Periodic { .. }),
            "{cell:?}"
        );
        let critical = 1.0 + cell.x * cell.x;
        if cell.y > critical {
            // REFERENCES case 23 [analytic]: above the Hopf curve the motion is a limit cycle
            assert_eq!(cell.regime, Regime::Periodic { returns: 1 }, "{cell:?}");
        }
    }
}

/// x' = -a x + y, y' = -x - b y, cut x = 0 rising.
fn damped() -> (Model, Cut) {
    let m = model(
        &[("x", 1.0, "-a*x + y"), ("y", 0.0, "-x - b*y")],
        &[("a", 1.0), ("b", 1.0)],
    );
    let cut = plane(&m, &[("x", 1.0)], 0.0, Direction::Rising);
    (m, cut)
}

#[test]
fn a_damped_linear_model_rests_everywhere() {
    let (m, cut) = damped();
    let spec = map(axis(0, 0.5, 2.0, 3), axis(1, 0.5, 2.0, 3), 60.0, 40.0);
    let cells = all_cells(&m, &cut, &spec);
    assert_eq!(cells.len(), 9);
    for cell in &cells {
        // [analytic] the matrix [[-a, 1], [-1, -b]] has trace -(a + b) < 0 and determinant
        // ab + 1 > 0: both eigenvalues in the left half-plane, every motion comes to rest
        assert_eq!(cell.regime, Regime::Resting, "{cell:?}");
        assert_eq!(cell.regime.word(), "resting");
        // [analytic] the largest exponent is the larger real part of the eigenvalues, < 0
        assert!(cell.lyapunov.is_some_and(|l| l < 0.0), "{cell:?}");
    }
}

fn spiral() -> (Model, Cut) {
    let m = model(
        &[("x", 1.0, "p*x - q*y"), ("y", 0.0, "q*x + p*y")],
        &[("p", 0.0), ("q", 1.0)],
    );
    let cut = plane(&m, &[("y", 1.0)], 0.0, Direction::Rising);
    (m, cut)
}

#[test]
fn a_growing_spiral_escapes_and_a_shrinking_one_rests() {
    let (m, cut) = spiral();
    let spec = map(axis(0, -0.6, 0.6, 4), axis(1, 0.5, 1.5, 2), 100.0, 20.0);
    let cells = all_cells(&m, &cut, &spec);
    for cell in &cells {
        if cell.x > 0.0 {
            // [analytic] |(x, y)| = e^(p t) passes the escape size 1e6 at t = ln(1e6) / p,
            // at most 69 for p >= 0.2, inside the settle time
            assert!(matches!(cell.regime, Regime::Escaped { .. }), "{cell:?}");
            assert_eq!(cell.regime.word(), "escaped");
        } else {
            // [analytic] e^(p t) with p <= -0.2 is below 1e-8 after 100
            assert_eq!(cell.regime, Regime::Resting, "{cell:?}");
        }
    }
}

#[test]
fn shards_together_give_the_whole_map() {
    let (m, cut) = spiral();
    let spec = map(axis(0, -0.6, 0.6, 4), axis(1, 0.5, 1.5, 2), 100.0, 20.0);
    let whole = all_cells(&m, &cut, &spec);
    let run = run_spec();
    let problem = MapProblem {
        model: &m,
        run: &run,
        cut: Some(&cut),
        strobe_for: &no_strobe,
        map: &spec,
    };
    let mut joined: Vec<MapCell> = (0..3)
        .flat_map(|shard| {
            let indices = spec.shard_indices(shard, 3);
            run_cells(&problem, &indices, &Interrupt::new(), &|_| {}).expect("shard runs")
        })
        .collect();
    joined.sort_by_key(|c| c.index);
    // [common practice] cells are independent, so a partition of them changes no cell
    assert_eq!(joined, whole);
}

#[test]
fn following_neighbours_finds_the_same_resting_map() {
    let (m, cut) = damped();
    let spec = map(axis(0, 0.5, 2.0, 3), axis(1, 0.5, 2.0, 2), 60.0, 40.0);
    let run = run_spec();
    let problem = MapProblem {
        model: &m,
        run: &run,
        cut: Some(&cut),
        strobe_for: &no_strobe,
        map: &spec,
    };
    let mut followed = Vec::new();
    let indices: Vec<usize> = (0..spec.n_cells()).collect();
    run_cells_in_order(&problem, &indices, &Interrupt::new(), &mut |cell| {
        followed.push(cell.regime);
        ControlFlow::Continue(())
    })
    .expect("map runs");
    // [analytic] the one resting point attracts every start, so a cell started from its
    // neighbour's end rests as well
    assert_eq!(followed, vec![Regime::Resting; 6]);
}

#[test]
fn a_raised_interrupt_runs_no_cell() {
    let (m, cut) = spiral();
    let spec = map(axis(0, -0.6, 0.6, 4), axis(1, 0.5, 1.5, 2), 100.0, 20.0);
    let run = run_spec();
    let problem = MapProblem {
        model: &m,
        run: &run,
        cut: Some(&cut),
        strobe_for: &no_strobe,
        map: &spec,
    };
    let interrupt = Interrupt::new();
    interrupt.raise();
    let cells = run_cells(&problem, &[0, 1, 2], &interrupt, &|_| {}).expect("map runs");
    // [common practice] a stopped map keeps no unfinished cell
    assert!(cells.is_empty());
}

/// x' = v, v' = -0.4 v - x + a cos(w t): a damped linear oscillator driven at period 2 pi / w.
fn driven_damped() -> Model {
    model(
        &[("x", 0.0, "v"), ("v", 0.0, "-0.4*v - x + a*cos(w*t)")],
        &[("a", 1.0), ("w", 1.0)],
    )
}

#[test]
fn a_driven_damped_oscillator_answers_once_per_drive_period() {
    let spec = map(axis(0, 0.5, 2.0, 2), axis(1, 0.5, 2.0, 2), 80.0, 60.0);
    let cells = driven_cells(&driven_damped(), spec);
    assert_eq!(cells.len(), 4);
    for cell in &cells {
        // [analytic] a stable linear oscillator driven at period T settles on the one
        // periodic response of period T: a single strobe sample, one return; its transient
        // decays like e^(-0.2 t), so the exponent is -0.2
        assert_eq!(cell.regime, Regime::Periodic { returns: 1 }, "{cell:?}");
        let l = cell.lyapunov.expect("exponent");
        assert!((l + 0.2).abs() < 0.02, "{cell:?}");
    }
}

/// A model driven by `a*cos(w*t)` whose map is read by strobe samples at the drive period.
fn driven_cells(m: &Model, spec: RegimeMapSpec) -> Vec<MapCell> {
    let period = StrobeSpec {
        period: "2*pi/w".into(),
        first_at: 0.0,
    };
    let strobe_for = move |m: &Model| Strobe::compile(&period, m).ok();
    let spec = RegimeMapSpec {
        source: SweepSource::Strobe,
        ..spec
    };
    let run = run_spec();
    let problem = MapProblem {
        model: m,
        run: &run,
        cut: None,
        strobe_for: &strobe_for,
        map: &spec,
    };
    let indices: Vec<usize> = (0..spec.n_cells()).collect();
    run_cells(&problem, &indices, &Interrupt::new(), &|_| {}).expect("map runs")
}

#[test]
fn a_cell_where_the_strobe_period_has_no_value_fails_and_says_why() {
    let cells = driven_cells(
        &driven_damped(),
        map(axis(0, 0.5, 1.0, 2), axis(1, 0.0, 1.0, 2), 80.0, 60.0),
    );
    for cell in &cells {
        if cell.y == 0.0 {
            // [analytic] the period 2 pi / w is infinite at w = 0: nothing can be sampled
            assert_eq!(
                cell.regime,
                Regime::Failed(Failure::Stopped(StopReason::StrobePeriod)),
                "{cell:?}"
            );
            assert_eq!(cell.regime.word(), "failed");
        } else {
            assert_eq!(cell.regime, Regime::Periodic { returns: 1 }, "{cell:?}");
        }
    }
}

#[test]
fn an_undamped_oscillator_strobed_off_its_frequency_is_quasi_periodic() {
    let m = model(
        &[("x", 1.0, "v"), ("v", 0.0, "-x + a*cos(w*t)")],
        &[("a", 0.5), ("w", 1.5)],
    );
    let spec = map(
        axis(0, 0.2, 0.5, 2),
        axis(1, std::f64::consts::SQRT_2, 5f64.sqrt(), 2),
        0.0,
        400.0,
    );
    for cell in driven_cells(&m, spec) {
        // [analytic] the free oscillation of frequency 1 sampled every 2 pi / w turns by
        // 2 pi / w, an irrational fraction of a turn: the samples fill an ellipse and never
        // repeat; nothing stretches or shrinks (exponent 0): a torus
        assert_eq!(cell.regime, Regime::QuasiPeriodic, "{cell:?}");
    }
}

#[test]
fn the_double_well_oscillator_is_chaotic_at_its_classic_drive() {
    let m = model(
        &[
            ("x", 0.5, "v"),
            ("v", 0.0, "-0.25*v + x - x^3 + a*cos(w*t)"),
        ],
        &[("a", 0.3), ("w", 1.0)],
    );
    let spec = map(axis(0, 0.1, 0.3, 2), axis(1, 1.0, 1.0, 1), 200.0, 600.0);
    let cells = driven_cells(&m, spec);
    // Guckenheimer & Holmes, Nonlinear Oscillations, Dynamical Systems, and Bifurcations of
    // Vector Fields (1983), sec. 2.2 [from memory]: x'' + 0.25 x' - x + x^3 = 0.3 cos t has a
    // strange attractor, while a weak drive (0.1) leaves a periodic orbit in one well
    assert_eq!(
        cells[0].regime,
        Regime::Periodic { returns: 1 },
        "{:?}",
        cells[0]
    );
    assert_eq!(cells[1].regime, Regime::Chaotic, "{:?}", cells[1]);
    assert!(
        cells[1].lyapunov.is_some_and(|l| l > 0.05),
        "{:?}",
        cells[1]
    );
}
