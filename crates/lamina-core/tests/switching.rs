//! Piecewise-smooth models: switches located on the dense output, accuracy kept through
//! them, chattering reported, stored runs re-sliced as fresh runs.

mod common;

use std::ops::ControlFlow;

use common::*;
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::run::{Collect, Direction, Run, StopReason};

/// Every method, explicit, stiff and automatic.
const ALL_METHODS: [Method; 4] = [
    Method::Dp5,
    Method::Dp853,
    Method::Rodas4,
    Method::Automatic,
];

#[test]
fn relay_oscillator_amplitude_and_period_through_the_cut() {
    for amplitude in [1.0f64, 2.5] {
        // [analytic] x' = v, v' = -sign(x) keeps |x| + v^2 / 2; from (A, 0) the period is
        // 4 sqrt(2 A) and every maximum of x is A
        let period = 4.0 * (2.0 * amplitude).sqrt();
        for method in ALL_METHODS {
            let m = model(&[("x", amplitude, "v"), ("v", 0.0, "-sign(x)")], &[]);
            let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
            let window = spec(method, 1e-10, 0.0, 20.5 * period);
            let (points, outcome) = collect(m, window, Some(cut), None);
            assert_eq!(outcome.reason, StopReason::Finished, "{method:?}");
            let p = &points.cut_points;
            assert_eq!(p.len(), 20, "{method:?}");
            for (k, q) in p.iter().enumerate() {
                // [analytic] see above, to 1e-9 relative
                assert!(
                    rel(q.state[0], amplitude) < 1e-9,
                    "{method:?}: {}",
                    q.state[0]
                );
                assert!(
                    rel(q.t, (k + 1) as f64 * period) < 1e-9,
                    "{method:?}: {}",
                    q.t
                );
                if let Some(return_time) = q.return_time {
                    assert!(rel(return_time, period) < 1e-9, "{method:?}: {return_time}");
                }
            }
            // two switches per period, located, not stepped across: few steps, no collapse
            assert_eq!(outcome.n_switches, 41, "{method:?}");
            assert!(
                outcome.stats.n_accepted < 200,
                "{method:?}: {:?}",
                outcome.stats
            );
        }
    }
}

/// Runs a one-state model from `x0` over `span` with every method and checks the end state.
fn check_end(rate: &str, x0: f64, span: f64, expected: f64, what: &str) {
    for method in ALL_METHODS {
        let m = model(&[("x", x0, rate)], &[]);
        let (_, outcome) = collect(m, spec(method, 1e-10, 0.0, span), None, None);
        assert_eq!(outcome.reason, StopReason::Finished, "{what}, {method:?}");
        let x = outcome.final_state[0];
        // see the callers for the exact values
        assert!(
            rel(x, expected) < 1e-9,
            "{what}, {method:?}: {x} vs {expected}"
        );
        assert!(outcome.n_switches >= 1, "{what}, {method:?}");
    }
}

#[test]
fn each_kind_of_switch_is_located() {
    // [analytic] x' = step(t - 1) from 0: x(3) = 2
    check_end("step(t - 1)", 0.0, 3.0, 2.0, "step");
    // [analytic] x' = abs(t - 1) from 0: x(3) = 1/2 + 2 = 2.5
    check_end("abs(t - 1)", 0.0, 3.0, 2.5, "abs");
    // [analytic] x' = floor(t) from 0: x(3.5) = 0 + 1 + 2 + 3 / 2 = 4.5
    check_end("floor(t)", 0.0, 3.5, 4.5, "floor");
    // [analytic] x' = ceil(t) from 0: x(2.5) = 1 + 2 + 3 / 2 = 4.5
    check_end("ceil(t)", 0.0, 2.5, 4.5, "ceil");
    // [analytic] saturation x' = -min(max(2 x, -1), 1) from 3: x = 3 - t down to 1/2 at
    // t = 2.5, then x = exp(-2 (t - 2.5)) / 2: x(4) = exp(-3) / 2
    check_end(
        "-min(max(2*x, -1), 1)",
        3.0,
        4.0,
        0.5 * (-3.0f64).exp(),
        "min and max",
    );
    // [analytic] a comparator on a ramp that restarts at every tick (pulse-width
    // modulation): x' = step(0.3 - (t - floor(t))) from 0 is 1 for the first 0.3 of every
    // unit of time: x(3.5) = 4 * 0.3; the ramp's jump at each tick switches the comparator
    check_end(
        "step(0.3 - (t - floor(t)))",
        0.0,
        3.5,
        1.2,
        "comparator on a ramp",
    );
    // [analytic] x' = 2 + sign(x - 1) from 0: x = t up to 1, then x = 1 + 3 (t - 1): x(2) = 4
    check_end("2 + sign(x - 1)", 0.0, 2.0, 4.0, "sign of a state");
}

#[test]
fn a_switch_of_a_state_inside_floor_is_located() {
    for method in ALL_METHODS {
        // [analytic] x' = 1, y' = floor(x) from (0, 0): y(3.5) = 4.5
        let m = model(&[("x", 0.0, "1"), ("y", 0.0, "floor(x)")], &[]);
        let (_, outcome) = collect(m, spec(method, 1e-10, 0.0, 3.5), None, None);
        assert!(rel(outcome.final_state[1], 4.5) < 1e-9, "{method:?}");
        assert_eq!(outcome.n_switches, 3, "{method:?}");
    }
}

#[test]
fn sliding_mode_is_reported_as_chattering() {
    for method in ALL_METHODS {
        // [analytic] x' = -sign(x) from 1 reaches 0 at t = 1; there both sides push back
        // across x = 0 (a sliding mode) and the switches pile up
        let m = model(&[("x", 1.0, "-sign(x)")], &[]);
        let (_, outcome) = collect(m, spec(method, 1e-10, 0.0, 5.0), None, None);
        let StopReason::Chattering { t } = outcome.reason else {
            panic!("{method:?}: {:?}", outcome.reason);
        };
        assert!((t - 1.0).abs() < 1e-9, "{method:?}: {t}");
        assert!(outcome.reason.is_trouble());
        assert!(outcome.reason.to_string().contains("chatters"));
    }
}

#[test]
fn a_forced_sliding_mode_is_reported_where_it_starts() {
    // [analytic] x' = -sign(x) + cos(t) / 2 from 1 falls at a rate of at least 1/2 and
    // reaches 0 before t = 2; there |cos(t) / 2| < 1, so both sides push back across x = 0:
    // a sliding mode
    for method in ALL_METHODS {
        let m = model(&[("x", 1.0, "-sign(x) + cos(t)/2")], &[]);
        let (_, outcome) = collect(m, spec(method, 1e-10, 0.0, 5.0), None, None);
        let StopReason::Chattering { t } = outcome.reason else {
            panic!("{method:?}: {:?}", outcome.reason);
        };
        // [analytic] x(t) = 1 - t + sin(t) / 2 = 0 at t = 1.4987011335178484 (solved by
        // Newton's method from 1.5)
        assert!((t - 1.4987011335178484).abs() < 1e-8, "{method:?}: {t}");
    }
}

#[test]
fn reslicing_a_switching_run_reproduces_a_fresh_run() {
    for method in ALL_METHODS {
        let relay = || model(&[("x", 1.0, "v"), ("v", 0.0, "-sign(x) - 0.1*v")], &[]);
        let window = spec(method, 1e-10, 0.0, 40.0);
        let mut run = Run::new(relay(), window.clone(), None, None, true);
        run.execute(&mut Collect::default(), &Interrupt::new());
        let m = relay();
        let mut cut = plane(&m, &[("x", 1.0)], 0.3, Direction::Both);
        let resliced = run.stored().reslice_points(&mut cut, m.parameters());
        let fresh = collect(relay(), window, Some(cut), None).0.cut_points;
        assert!(fresh.len() > 5, "{method:?}");
        assert_eq!(resliced, fresh, "{method:?}");
    }
}

#[test]
fn a_run_stopped_by_its_sink_continues_on_the_other_side_of_a_switch() {
    /// Stops after every cut point.
    struct StopEach(Vec<f64>);
    impl lamina_core::run::Sink for StopEach {
        fn cut_point(&mut self, point: &lamina_core::run::CutPoint) -> ControlFlow<()> {
            self.0.push(point.t);
            ControlFlow::Break(())
        }
    }
    let period = 4.0 * 2f64.sqrt();
    let m = model(&[("x", 1.0, "v"), ("v", 0.0, "-sign(x)")], &[]);
    // x = 0 falling is exactly where the relay switches
    let cut = plane(&m, &[("x", 1.0)], 0.0, Direction::Falling);
    let mut run = Run::new(
        m,
        spec(Method::Dp853, 1e-10, 0.0, 3.2 * period),
        Some(cut),
        None,
        false,
    );
    let mut sink = StopEach(Vec::new());
    while !matches!(
        run.execute(&mut sink, &Interrupt::new()).reason,
        StopReason::Finished
    ) {}
    assert_eq!(sink.0.len(), 3, "{:?}", sink.0);
    for (k, t) in sink.0.iter().enumerate() {
        // [analytic] x = 0 falling at sqrt(2) + k * period
        assert!(rel(*t, 2f64.sqrt() + k as f64 * period) < 1e-9, "{t}");
    }
}
