//! The one recurrence detector on clouds from real runs: a sweep through the logistic map's
//! period doublings (a sample-and-hold model whose strobe map is the logistic map), a slowly
//! attracting cycle that must read "not settled" until it has settled, and the Brusselator's
//! strobe samples below and above its Hopf value.

mod common;

use common::*;
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::model::Model;
use lamina_core::recurrence::{
    Drift, Recurrence, RecurrenceKind, RecurrenceSettings, find_recurrence,
};
use lamina_core::run::{RunSpec, Strobe};
use lamina_core::sweep::{
    SweepSource, SweepSpec, changes, column_recurrence, describe, sweep_restart,
};

/// A sample-and-hold loop whose strobe map at T = 1 is the logistic map x -> r x (1 - x):
/// in the first half of every period y relaxes onto r x (1 - x) while x holds, in the second
/// half x relaxes onto y while y holds. Each relaxation lasts K / 2 = 30 time constants, so
/// the map is the logistic map to within e^-30 = 1e-13 [analytic].
fn sample_and_hold(r: f64) -> Model {
    model(
        &[
            ("x", 0.3, "k*(y - x)*(1 - step(0.5 - (t - floor(t))))"),
            ("y", 0.3, "k*(r*x*(1 - x) - y)*step(0.5 - (t - floor(t)))"),
        ],
        &[("r", r), ("k", 60.0)],
    )
}

fn unit_strobe(m: &Model) -> Option<Strobe> {
    Some(strobe(m, "1", 0.0))
}

#[test]
fn a_sweep_through_the_logistic_doublings_is_labelled_as_its_orbit_diagram() {
    let m = sample_and_hold(2.75);
    // r = 2.75, 3, 3.25, 3.5
    let spec = SweepSpec {
        parameter: 0,
        from: 2.75,
        to: 3.5,
        values: 4,
        settle: 400.0,
        keep: 40,
        span: 50.0,
        follow: false,
        source: SweepSource::Strobe,
    };
    let run = spec_for(1e-9);
    let indices: Vec<usize> = (0..spec.n_values()).collect();
    let columns = sweep_restart(
        &m,
        &run,
        None,
        &unit_strobe,
        &spec,
        &indices,
        &Interrupt::new(),
        &|_| {},
    )
    .expect("sweep runs");
    let settings = RecurrenceSettings::for_control(&run.control);
    let labels: Vec<(f64, RecurrenceKind)> = columns
        .iter()
        .map(|c| (c.value, column_recurrence(c, &settings).kind()))
        .collect();
    use RecurrenceKind::{NotSettled, Returns};
    // [analytic] the fixed point 1 - 1/r is stable below r = 3, the 2-cycle from 3 to
    // 1 + sqrt(6) = 3.449, the 4-cycle from there to 3.544 (R. M. May, Nature 261 (1976) 459);
    // at r = 3 itself the multiplier is -1 and the approach only algebraic: not settled
    let expected = [Returns(1), NotSettled, Returns(2), Returns(4)];
    for ((value, kind), want) in labels.iter().zip(expected) {
        assert_eq!(*kind, want, "r = {value}");
    }
    // [analytic] the fixed point's value 1 - 1/r
    let fixed = columns[0].points.last().expect("points")[0];
    assert!((fixed - (1.0 - 1.0 / 2.75)).abs() < 1e-8, "{fixed}");
    // the list names the changes at the values where the picture changes
    let found = changes(&labels);
    assert_eq!(found.len(), 3);
    assert_eq!((found[0].below, found[0].to), (2.75, NotSettled));
    assert_eq!((found[2].below, found[2].above), (3.25, 3.5));
    let lines = describe("r", &labels);
    assert_eq!(
        lines[..4],
        [
            "r = 2.75: 1-return orbit",
            "1-return orbit to not settled between r = 2.75 and 3",
            "not settled to 2-return orbit between r = 3 and 3.25",
            "2-return orbit to 4-return orbit between r = 3.25 and 3.5",
        ]
    );
    assert!(lines[4].starts_with("1 value(s) not settled"), "{lines:?}");
}

/// Run settings for the sweeps: DOP853 at `tol`.
fn spec_for(tol: f64) -> RunSpec {
    spec(Method::Dp853, tol, 0.0, 0.0)
}

#[test]
fn a_slowly_attracting_cycle_is_not_settled_until_it_has_settled() {
    // r' = eps r (1 - r^2), angle' = w: strobed at the turn time 2 pi / w every sample lies
    // on one ray, and near r = 1 the radius approaches it by the factor exp(-2 eps T) per
    // sample [analytic]
    let (eps, w) = (0.005, 2.0);
    let m = model(
        &[
            ("x", 0.9, "eps*x*(1 - x^2 - y^2) - w*y"),
            ("y", 0.0, "eps*y*(1 - x^2 - y^2) + w*x"),
        ],
        &[("eps", eps), ("w", w)],
    );
    let turn = strobe(&m, "2*pi/w", 0.0);
    let period = std::f64::consts::TAU / w;
    let early = strobe_cloud(&m, turn, &window(1e-11, 0.0, 64.0 * period));
    let settings = RecurrenceSettings::for_control(&window(1e-11, 0.0, 1.0).control);
    let found = find_recurrence(&early, &settings);
    let Recurrence::NotSettled {
        drift: Drift::Converging {
            factor_per_return, ..
        },
        ..
    } = found
    else {
        panic!("{found}");
    };
    // [analytic] exp(-2 eps T) = 0.9691; the first samples are not yet in the linear regime
    let exact = (-2.0 * eps * period).exp();
    assert!(
        (factor_per_return - exact).abs() < 0.01,
        "{factor_per_return} against {exact}"
    );
    assert!(
        found.to_string().contains("lengthen the settle time"),
        "{found}"
    );
    // after 3000 turns it has settled onto the cycle: one point, (1, 0)
    let late = strobe_cloud(&m, turn, &window(1e-11, 3000.0 * period, 64.0 * period));
    let found = find_recurrence(&late, &settings);
    assert_eq!(found.kind(), RecurrenceKind::Returns(1), "{found}");
    let last = late.last().expect("samples");
    // [analytic] the cycle r = 1 (attracting, so the radius is exact to the tolerance) at
    // angle 0: the strobe turns it exactly once (the phase error grows slowly over 3000 turns)
    let (x, y) = (last.state[0], last.state[1]);
    assert!((x.hypot(y) - 1.0).abs() < 1e-9, "{x}, {y}");
    assert!(y.atan2(x).abs() < 1e-5, "{x}, {y}");
}

#[test]
fn brusselator_strobe_samples_repeat_below_the_hopf_value_and_circle_above_it() {
    let bru = |b: f64| {
        model(
            &[
                ("x", 1.3, "a - (b + 1)*x + x^2*y"),
                ("y", 2.0, "b*x - x^2*y"),
            ],
            &[("a", 1.0), ("b", b)],
        )
    };
    let run = window(1e-10, 600.0, 64.0);
    let settings = RecurrenceSettings::for_control(&run.control);
    // [analytic] REFERENCES case 12: below B = 1 + A^2 = 2 the equilibrium (A, B / A)
    // attracts; every sample sits on it, a repeat after one return
    let m = bru(1.8);
    let cloud = strobe_cloud(&m, strobe(&m, "1", 0.0), &run);
    let found = find_recurrence(&cloud, &settings);
    assert_eq!(found.kind(), RecurrenceKind::Returns(1), "{found}");
    assert!((cloud[0].state[1] - 1.8).abs() < 1e-8);
    // [analytic] above it a cycle of period near 2 pi: samples every 1 time unit go round it
    // without closing, a closed curve like a torus section, and they do not drift
    let m = bru(2.3);
    let cloud = strobe_cloud(&m, strobe(&m, "1", 0.0), &run);
    let found = find_recurrence(&cloud, &settings);
    assert!(matches!(found, Recurrence::NoRepeat { .. }), "{found}");
}
