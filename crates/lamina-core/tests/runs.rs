//! Run control: stop reasons with times, cancellation, limits, stored runs and re-slicing.

mod common;

use std::ops::ControlFlow;

use common::*;
use lamina_core::Interrupt;
use lamina_core::integrate::Method;
use lamina_core::run::{
    Collect, CutPoint, Direction, Run, RunOutcome, Sink, StopReason, TimeResolution,
};

fn lorenz() -> lamina_core::model::Model {
    lorenz_from([1.0, 1.0, 1.0])
}

#[test]
fn escape_is_reported_with_its_time() {
    // [analytic] x' = x^2 from x = 1 blows up at t = 1
    let m = model(&[("x", 1.0, "x^2")], &[]);
    let (_, outcome) = collect(m, spec(Method::Dp853, 1e-9, 0.0, 5.0), None, None);
    match outcome.reason {
        StopReason::Escaped { t, escape } => {
            assert!(t > 0.99 && t < 1.0, "t = {t}");
            assert_eq!(escape, 1e6);
            let message = outcome.reason.to_string();
            assert!(
                message.starts_with("a state passed the escape size 1e6 at t = 0.99"),
                "{message}"
            );
        }
        other => panic!("expected an escape, got {other:?}"),
    }
}

#[test]
fn non_finite_rates_are_reported_with_their_time() {
    // [analytic] sqrt(1 - t) is NaN past t = 1
    let m = model(&[("x", 0.0, "sqrt(1 - t)")], &[]);
    let (_, outcome) = collect(m, spec(Method::Dp5, 1e-9, 0.0, 5.0), None, None);
    match outcome.reason {
        StopReason::NotFinite { t } | StopReason::StepTooSmall { t } => {
            assert!(t > 0.9 && t <= 1.0, "t = {t}")
        }
        other => panic!("expected trouble near t = 1, got {other:?}"),
    }
    assert!(outcome.reason.is_trouble());
}

#[test]
fn a_non_finite_start_is_refused_at_the_start_time() {
    let m = model(&[("x", f64::NAN, "-x")], &[]);
    let (_, outcome) = collect(m, spec(Method::Dp853, 1e-9, 0.0, 5.0), None, None);
    assert_eq!(outcome.reason, StopReason::NotFinite { t: 0.0 });
}

#[test]
fn a_raised_interrupt_cancels_at_once() {
    let interrupt = Interrupt::new();
    interrupt.raise();
    let mut run = Run::new(
        lorenz(),
        spec(Method::Dp853, 1e-9, 0.0, 100.0),
        None,
        None,
        false,
    );
    let outcome = run.execute(&mut Collect::default(), &interrupt);
    assert_eq!(outcome.reason, StopReason::Cancelled { t: 0.0 });
    assert_eq!(outcome.stats.n_accepted, 0);
}

struct CancelAfter<'a> {
    n: usize,
    interrupt: &'a Interrupt,
}

impl Sink for CancelAfter<'_> {
    fn cut_point(&mut self, _point: &CutPoint) -> ControlFlow<()> {
        self.n -= 1;
        if self.n == 0 {
            self.interrupt.raise();
        }
        ControlFlow::Continue(())
    }
}

#[test]
fn an_interrupt_raised_mid_run_stops_within_a_step() {
    let m = lorenz();
    let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Falling);
    let interrupt = Interrupt::new();
    let mut run = Run::new(
        m,
        spec(Method::Dp853, 1e-9, 0.0, 1000.0),
        Some(cut),
        None,
        false,
    );
    let mut sink = CancelAfter {
        n: 5,
        interrupt: &interrupt,
    };
    let outcome = run.execute(&mut sink, &interrupt);
    assert!(matches!(outcome.reason, StopReason::Cancelled { .. }));
    assert_eq!(outcome.n_cut_points, 5);
}

#[test]
fn point_limit_and_sink_stop() {
    let m = lorenz();
    let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Falling);
    let mut s = spec(Method::Dp853, 1e-9, 0.0, 1000.0);
    s.max_points = 7;
    let (points, outcome) = collect(m, s, Some(cut), None);
    assert!(matches!(outcome.reason, StopReason::PointLimit { .. }));
    assert_eq!(points.cut_points.len(), 7);
}

#[test]
fn continue_extends_a_finished_run_without_repeating_points() {
    let m = model(&[("x", 2.0, "v"), ("v", 0.0, "(1 - x^2)*v - x")], &[]);
    let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
    let whole = {
        let (points, _) = collect(
            m.clone(),
            spec(Method::Dp853, 1e-10, 5.0, 80.0),
            Some(cut.clone()),
            None,
        );
        points.cut_points
    };
    let mut run = Run::new(
        m,
        spec(Method::Dp853, 1e-10, 5.0, 40.0),
        Some(cut),
        None,
        true,
    );
    let mut first = Collect::default();
    assert_eq!(
        run.execute(&mut first, &Interrupt::new()).reason,
        StopReason::Finished
    );
    run.extend(40.0);
    let mut second = Collect::default();
    assert_eq!(
        run.execute(&mut second, &Interrupt::new()).reason,
        StopReason::Finished
    );
    let joined: Vec<_> = first
        .cut_points
        .iter()
        .chain(&second.cut_points)
        .map(|p| p.t)
        .collect();
    assert_eq!(joined.len(), whole.len());
    for (a, b) in joined.iter().zip(whole.iter().map(|p| p.t)) {
        // the same stable cycle, steps differing only after t = 45: times agree to the tolerance
        assert!((a - b).abs() < 1e-7, "{a} vs {b}");
    }
    assert!(
        second.cut_points[0].return_time.is_some(),
        "return times continue across the pause"
    );
    assert_eq!(
        run.stored()
            .reslice_points(&mut run.cut().cloned().expect("cut"), &[])
            .len(),
        whole.len()
    );
}

#[test]
fn reslicing_reproduces_a_fresh_run_exactly() {
    for method in METHODS {
        let m = lorenz();
        let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Falling);
        let mut run = Run::new(
            m.clone(),
            spec(method, 1e-9, 10.0, 200.0),
            Some(cut.clone()),
            None,
            true,
        );
        let mut live = Collect::default();
        run.execute(&mut live, &Interrupt::new());
        let stored = run.stored();
        assert!(stored.n_steps() > 1000);
        let mut same = cut.clone();
        assert_eq!(
            stored.reslice_points(&mut same, m.parameters()),
            live.cut_points
        );
        for (offset, direction) in [
            (20.0, Direction::Rising),
            (35.0, Direction::Both),
            (27.0, Direction::Falling),
        ] {
            let mut moved = plane(&m, &[("z", 1.0), ("x", 0.2)], offset, direction);
            let resliced = stored.reslice_points(&mut moved, m.parameters());
            let (fresh, _) = collect(
                m.clone(),
                spec(method, 1e-9, 10.0, 200.0),
                Some(moved),
                None,
            );
            // the cut does not change the steps, so a re-slice equals a fresh run
            assert_eq!(resliced, fresh.cut_points, "{method:?} offset {offset}");
            assert!(!resliced.is_empty());
        }
        let mut surface = level(&m, "x^2 + y^2 - 100", Direction::Rising);
        let resliced = stored.reslice_points(&mut surface, m.parameters());
        let (fresh, _) = collect(
            m.clone(),
            spec(method, 1e-9, 10.0, 200.0),
            Some(surface),
            None,
        );
        assert_eq!(resliced, fresh.cut_points);
    }
}

#[test]
fn stored_strobe_matches_the_live_strobe() {
    let m = lorenz();
    let s = strobe(&m, "0.37", 0.1);
    let mut run = Run::new(m, spec(Method::Dp853, 1e-9, 3.0, 30.0), None, Some(s), true);
    let mut live = Collect::default();
    run.execute(&mut live, &Interrupt::new());
    let stored = run.stored().strobe_samples(&s);
    assert_eq!(stored.len(), live.strobe_samples.len());
    for (a, b) in stored.iter().zip(&live.strobe_samples) {
        assert_eq!(a.t, b.t);
        for (p, q) in a.state.iter().zip(&b.state) {
            assert!((p - q).abs() <= 1e-12 * p.abs().max(1.0));
        }
    }
}

#[test]
fn storage_stops_at_its_memory_budget() {
    let m = lorenz();
    let mut s = spec(Method::Dp853, 1e-9, 0.0, 100.0);
    s.store_bytes = 100 * 8 * (2 + 3 * 8);
    let mut run = Run::new(m, s, None, None, true);
    let outcome = run.execute(&mut Collect::default(), &Interrupt::new());
    assert_eq!(outcome.reason, StopReason::Finished);
    assert_eq!(run.stored().n_steps(), 100);
    assert!(run.stored().truncated_at().is_some());
}

/// The oscillator x' = v, v' = -x started at `t_start`, cut at v = 0 and strobed with
/// period 1 from `first_at`, over a span of 100.
fn far_run(t_start: f64, settle: f64, first_at: f64) -> RunOutcome {
    let m = model(&[("x", 1.0, "v"), ("v", 0.0, "-x")], &[]);
    let cut = plane(&m, &[("v", 1.0)], 0.0, Direction::Falling);
    let s = strobe(&m, "1", first_at);
    let mut run_spec = spec(Method::Dp5, 1e-6, settle, 100.0);
    run_spec.t_start = t_start;
    let (_, outcome) = collect(m, run_spec, Some(cut), Some(s));
    outcome
}

#[test]
fn a_window_lost_in_rounding_stops_at_once_and_says_where() {
    // [analytic] near 1e20 floating-point times are 2^14 = 16384 apart: a span of 100 after
    // t = 1e20 (or after a settle time of 1e20) rounds to nothing
    for (t_start, settle) in [(1e20, 0.0), (0.0, 1e20), (1e18, 0.0)] {
        let outcome = far_run(t_start, settle, 0.0);
        let StopReason::TimeTooCoarse(problem) = outcome.reason else {
            panic!("{t_start:e} {settle:e}: {:?}", outcome.reason);
        };
        assert!(
            matches!(problem, TimeResolution::WindowLost { .. }),
            "{problem}"
        );
        let text = outcome.reason.to_string();
        assert!(text.contains("span") && text.contains("nearer 0"), "{text}");
        assert_eq!(outcome.stats.n_accepted, 0);
    }
}

#[test]
fn strobe_times_that_cannot_be_formed_stop_the_run_instead_of_hanging() {
    // [analytic] first_at = 1e20 with period 1: every sample time near t = 0 is
    // 1e20 + k with k ~ -1e20, which rounds by thousands of periods
    let outcome = far_run(0.0, 0.0, 1e20);
    assert!(
        matches!(
            outcome.reason,
            StopReason::TimeTooCoarse(TimeResolution::StrobeTimes { .. })
        ),
        "{:?}",
        outcome.reason
    );
}

#[test]
fn steps_lost_to_a_start_far_from_zero_are_put_on_the_time_not_the_model() {
    // [analytic] at t = 1e15 a step below 10 ulp = 2.2 cannot change t, and the oscillator
    // of period 2 pi needs smaller steps; started at 0 it would not
    for t_start in [1e15, 1e16] {
        let m = model(&[("x", 1.0, "v"), ("v", 0.0, "-x")], &[]);
        let mut run_spec = spec(Method::Dp5, 1e-6, 0.0, 100.0);
        run_spec.t_start = t_start;
        let (_, outcome) = collect(m, run_spec, None, None);
        let StopReason::TimeTooCoarse(TimeResolution::StepLost { t, step, .. }) = outcome.reason
        else {
            panic!("{t_start:e}: {:?}", outcome.reason);
        };
        assert_eq!(t, t_start);
        assert!(step > 1.0, "{step}");
        assert!(outcome.reason.to_string().contains("nearer 0"));
    }
    let outcome = far_run(0.0, 0.0, 0.0);
    assert_eq!(outcome.reason, StopReason::Finished);
}

#[test]
fn no_sample_beyond_the_escape_size_is_recorded() {
    // x' = 3 x from 1 grows past 1e6 near t = ln(1e6) / 3 = 4.6 [analytic]; with a tolerance
    // that means nothing (rtol = atol = 10) the steps are long, so a step ends far beyond the
    // escape size with strobe samples and crossings inside it
    let m = model(&[("x", 1.0, "3*x"), ("y", 0.0, "1")], &[]);
    let s = strobe(&m, "0.05", 0.0);
    let cut = level(&m, "x - 2e6*floor(y)", Direction::Both);
    for method in [Method::Dp5, Method::Dp853, Method::Rodas4] {
        let mut run_spec = spec(method, 10.0, 0.0, 20.0);
        run_spec.escape = 1e6;
        let (points, outcome) = collect(m.clone(), run_spec, Some(cut.clone()), Some(s));
        assert!(
            matches!(outcome.reason, StopReason::Escaped { .. }),
            "{method:?}: {:?}",
            outcome.reason
        );
        for sample in &points.strobe_samples {
            assert!(
                sample.state.iter().all(|v| v.abs() <= 1e6),
                "{method:?}: {sample:?}"
            );
        }
        for point in &points.cut_points {
            assert!(
                point.state.iter().all(|v| v.abs() <= 1e6),
                "{method:?}: {point:?}"
            );
        }
    }
}

#[test]
fn a_settle_only_chooses_which_crossings_are_kept() {
    // the cut is not followed over settle steps that end before the recorded window; the
    // crossings after it must be exactly those of a run that follows it all along (the steps
    // do not depend on the window) [analytic]. Many settle times, so that some window starts
    // just before a crossing inside the step that takes the cut up again.
    let m = lorenz();
    let cut = plane(&m, &[("z", 1.0)], 27.0, Direction::Both);
    for method in [Method::Dp853, Method::Rodas4] {
        let run = |settle: f64, span: f64| {
            let run_spec = spec(method, 1e-7, settle, span);
            collect(m.clone(), run_spec, Some(cut.clone()), None)
                .0
                .cut_points
        };
        let followed = run(0.0, 26.0);
        for i in 0..120 {
            let settle = 2.0 + 0.2 * f64::from(i);
            let settled = run(settle, 26.0 - settle);
            let kept: Vec<_> = followed.iter().filter(|p| p.t >= settle).collect();
            assert_eq!(settled.len(), kept.len(), "{method:?} settle {settle}");
            for (a, b) in settled.iter().zip(kept) {
                assert_eq!(
                    (a.t, &a.state),
                    (b.t, &b.state),
                    "{method:?} settle {settle}"
                );
            }
        }
    }
}
