//! Parameter sweeps: the Brusselator's Hopf onset, follow against restart, sharding, cancel.

mod common;

use std::ops::ControlFlow;
use std::sync::Mutex;

use common::*;
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::model::Model;
use lamina_core::run::{Direction, StopReason, Strobe, StrobeSpec};
use lamina_core::sweep::{SweepColumn, SweepSource, SweepSpec, sweep_follow, sweep_restart};

/// Brusselator x' = A - (B + 1) x + x^2 y, y' = B x - x^2 y with A = 1 (REFERENCES case 12).
fn brusselator() -> Model {
    model(
        &[
            ("x", 1.3, "a - (b + 1)*x + x^2*y"),
            ("y", 2.0, "b*x - x^2*y"),
        ],
        &[("a", 1.0), ("b", 2.0)],
    )
}

fn sweep_spec(from: f64, to: f64, values: u32, follow: bool) -> SweepSpec {
    SweepSpec {
        parameter: 1,
        from,
        to,
        values,
        settle: 1500.0,
        keep: 8,
        span: 400.0,
        follow,
        source: SweepSource::Cut,
    }
}

fn no_strobe(_: &Model) -> Option<Strobe> {
    None
}

/// Distance of the kept cut points (x = 1, rising) from the equilibrium y = B / A.
fn amplitude(column: &SweepColumn) -> f64 {
    column
        .points
        .iter()
        .map(|p| (p[1] - column.value).abs())
        .fold(0.0, f64::max)
}

fn restart(spec: &SweepSpec) -> Vec<SweepColumn> {
    let m = brusselator();
    let cut = plane(&m, &[("x", 1.0)], 1.0, Direction::Rising);
    let indices: Vec<usize> = (0..spec.n_values()).collect();
    sweep_restart(
        &m,
        &spec_for_sweep(),
        Some(&cut),
        &no_strobe,
        spec,
        &indices,
        &Interrupt::new(),
        &|_| {},
    )
    .expect("sweep runs")
}

fn spec_for_sweep() -> lamina_core::run::RunSpec {
    spec(Method::Dp853, 1e-10, 0.0, 0.0)
}

#[test]
fn brusselator_cycle_is_born_at_b_equal_2_and_grows_like_a_square_root() {
    // values 1.84, 1.92, 2.00, 2.08, 2.16
    let columns = restart(&sweep_spec(1.84, 2.16, 5, false));
    assert_eq!(columns.len(), 5);
    for c in &columns[..2] {
        // [analytic] REFERENCES case 12: below the Hopf value B = 1 + A^2 = 2 the equilibrium
        // attracts: after the transient the cut points sit on it
        assert!(
            amplitude(c) < 1e-3,
            "B = {}: amplitude {}",
            c.value,
            amplitude(c)
        );
    }
    let (a1, a2) = (amplitude(&columns[3]), amplitude(&columns[4]));
    assert!(a1 > 0.05, "B = 2.08 has a cycle: {a1}");
    // [analytic] Hopf normal form: amplitude ~ sqrt(B - 2), so doubling B - 2 scales it by sqrt 2
    let ratio = a2 / a1;
    assert!(
        (ratio - 2f64.sqrt()).abs() < 0.08,
        "amplitude ratio {ratio}"
    );
}

#[test]
fn follow_and_restart_agree_on_a_unique_cycle() {
    let follow_spec = sweep_spec(2.1, 2.3, 3, true);
    let m = brusselator();
    let cut = plane(&m, &[("x", 1.0)], 1.0, Direction::Rising);
    let mut followed = Vec::new();
    sweep_follow(
        &m,
        &spec_for_sweep(),
        Some(&cut),
        &no_strobe,
        &follow_spec,
        &[0, 1, 2],
        &Interrupt::new(),
        &mut |c| {
            followed.push(c.clone());
            ControlFlow::Continue(())
        },
    )
    .expect("sweep runs");
    let restarted = restart(&sweep_spec(2.1, 2.3, 3, false));
    for (f, r) in followed.iter().zip(&restarted) {
        assert_eq!(f.value, r.value);
        // a stable cycle crosses x = 1 (rising) at one point, whichever way it was reached
        for (p, q) in f.points.iter().zip(&r.points) {
            assert!(
                (p[1] - q[1]).abs() < 1e-6,
                "B = {}: {} vs {}",
                f.value,
                p[1],
                q[1]
            );
        }
    }
    // following continues in time from the previous value's end
    assert!(followed[1].times[0] > followed[0].times[7]);
}

#[test]
fn shards_together_equal_the_whole_sweep() {
    let spec = sweep_spec(2.05, 2.25, 6, false);
    let whole = restart(&spec);
    let m = brusselator();
    let cut = plane(&m, &[("x", 1.0)], 1.0, Direction::Rising);
    let mut joined: Vec<SweepColumn> = Vec::new();
    for shard in 0..3 {
        let indices = spec.shard_indices(shard, 3);
        let part = sweep_restart(
            &m,
            &spec_for_sweep(),
            Some(&cut),
            &no_strobe,
            &spec,
            &indices,
            &Interrupt::new(),
            &|_| {},
        )
        .expect("shard runs");
        joined.extend(part);
    }
    joined.sort_by_key(|c| c.index);
    assert_eq!(joined, whole, "bit-identical columns");
}

#[test]
fn values_are_exact_at_both_ends_and_evenly_spaced() {
    let spec = sweep_spec(0.1, 0.7, 7, false);
    assert_eq!(spec.n_values(), 7);
    assert_eq!(spec.value(0), 0.1);
    assert_eq!(spec.value(6), 0.7);
    // [analytic] 0.1 + 3 * 0.1 = 0.4, landed on the nearest binary64 of the decimal
    assert_eq!(spec.value(3), 0.4);
    assert_eq!(spec.shard_indices(1, 3), vec![1, 4]);
}

#[test]
fn values_between_decimal_ends_are_the_decimals() {
    // [analytic] 0.15 + 63 * 0.4 / 300 = 0.234; unrounded, the arithmetic gives
    // 0.23399999999999999
    let spec = sweep_spec(0.15, 0.55, 301, false);
    assert_eq!(spec.value(63), 0.234);
    assert_eq!(format!("{}", spec.value(63)), "0.234");
    // [analytic] the middle of -1 to 1 is 0, not a rounding residue
    assert_eq!(sweep_spec(-1.0, 1.0, 3, false).value(1), 0.0);
    // [analytic] each value is within 1e-15 of the decimal grid, even for tiny or huge ends
    for (from, to) in [(1e-300, 3e-300), (2e300, 1e300), (-7.0, 13.0)] {
        let spec = sweep_spec(from, to, 11, false);
        for idx in 0..11 {
            let ideal = from + (to - from) * idx as f64 / 10.0;
            let scale = f64::max(from.abs(), to.abs());
            assert!((spec.value(idx) - ideal).abs() <= 1e-14 * scale, "{idx}");
        }
    }
}

#[test]
fn a_raised_interrupt_stops_the_sweep() {
    let spec = sweep_spec(2.1, 2.3, 21, false);
    let m = brusselator();
    let cut = plane(&m, &[("x", 1.0)], 1.0, Direction::Rising);
    let interrupt = Interrupt::new();
    interrupt.raise();
    let indices: Vec<usize> = (0..spec.n_values()).collect();
    let seen = Mutex::new(0);
    let columns = sweep_restart(
        &m,
        &spec_for_sweep(),
        Some(&cut),
        &no_strobe,
        &spec,
        &indices,
        &interrupt,
        &|_| {
            *seen.lock().expect("lock") += 1;
        },
    )
    .expect("sweep returns");
    assert!(columns.is_empty());
    assert_eq!(*seen.lock().expect("lock"), 0);
}

#[test]
fn a_sweep_without_its_source_is_refused() {
    let spec = SweepSpec {
        source: SweepSource::Strobe,
        ..sweep_spec(2.1, 2.3, 3, false)
    };
    let m = brusselator();
    let result = sweep_restart(
        &m,
        &spec_for_sweep(),
        None,
        &no_strobe,
        &spec,
        &[0],
        &Interrupt::new(),
        &|_| {},
    );
    assert!(result.is_err());
}

#[test]
fn a_value_where_the_strobe_period_has_no_value_says_why() {
    let m = model(
        &[("x", 0.0, "v"), ("v", 0.0, "-0.4*v - x + cos(w*t)")],
        &[("w", 1.0)],
    );
    let period = StrobeSpec {
        period: "2*pi/w".into(),
        first_at: 0.0,
    };
    let strobe_for = move |m: &Model| Strobe::compile(&period, m).ok();
    let spec = SweepSpec {
        parameter: 0,
        from: 0.0,
        to: 1.0,
        values: 2,
        settle: 80.0,
        keep: 8,
        span: 60.0,
        follow: false,
        source: SweepSource::Strobe,
    };
    let columns = sweep_restart(
        &m,
        &spec_for_sweep(),
        None,
        &strobe_for,
        &spec,
        &[0, 1],
        &Interrupt::new(),
        &|_| {},
    )
    .expect("sweep runs");
    // [analytic] the period 2 pi / w is infinite at w = 0: nothing is sampled, and the
    // column says why instead of looking like a run that recorded nothing
    assert_eq!(columns[0].reason, StopReason::StrobePeriod);
    assert!(columns[0].points.is_empty());
    assert!(columns[0].reason.is_trouble());
    // [analytic] at w = 1 the damped oscillator settles on its one response of the drive's
    // period: the kept samples are taken
    assert!(!columns[1].reason.is_trouble(), "{:?}", columns[1].reason);
    assert_eq!(columns[1].points.len(), 8);
}
