//! Stiff benchmark: Van der Pol with mu = 1000 over ten periods (about 16 100 time units) at
//! rtol = atol = 1e-8, through the cut v = 0 falling, with the automatic method against
//! DOP853 forced (and Rodas4 forced for comparison): CPU time, accepted and rejected steps,
//! rate evaluations, Jacobians and changes of method, and the mean period.
//!
//! The runs go through the run driver with the typed model, as the explorer and the command
//! line run them.

#![allow(clippy::print_stdout)]

use cpu_time::ProcessTime;
use lamina_core::Interrupt;
use lamina_core::integrate::{Method, StepControl};
use lamina_core::model::{Model, ModelSpec, ParameterSpec, StateSpec};
use lamina_core::run::{Collect, Cut, Direction, Run, RunOutcome, RunSpec};

/// Van der Pol's period at mu = 1000 (SciPy 1.17.1 Radau at rtol = atol = 1e-12), for the
/// length of the run.
const PERIOD: f64 = 1614.401125815244;
const N_PERIODS: f64 = 10.0;
const TOLERANCE: f64 = 1e-8;

fn van_der_pol() -> Model {
    Model::compile(&ModelSpec {
        states: vec![
            StateSpec {
                name: "x".into(),
                start: 2.0,
                rate: "v".into(),
            },
            StateSpec {
                name: "v".into(),
                start: 0.0,
                rate: "mu*(1 - x^2)*v - x".into(),
            },
        ],
        parameters: vec![ParameterSpec {
            name: "mu".into(),
            value: 1000.0,
        }],
    })
    .expect("Van der Pol compiles")
}

/// Runs of the fast methods repeated for the median time.
const ROUNDS: usize = 5;

/// `rounds` runs with `method`: (median CPU seconds, outcome, cut points of the last).
fn run(method: Method, rounds: usize) -> (f64, RunOutcome, Collect) {
    let mut secs = Vec::new();
    let mut last = None;
    for _ in 0..rounds.max(1) {
        let (s, outcome, points) = run_once(method);
        secs.push(s);
        last = Some((outcome, points));
    }
    secs.sort_by(f64::total_cmp);
    let (outcome, points) = last.expect("at least one round");
    (secs[secs.len() / 2], outcome, points)
}

/// One run with `method`: (CPU seconds, outcome, cut points).
fn run_once(method: Method) -> (f64, RunOutcome, Collect) {
    let spec = RunSpec {
        method,
        control: StepControl {
            rtol: TOLERANCE,
            atol: TOLERANCE,
            max_step: None,
            initial_step: None,
        },
        span: (N_PERIODS + 0.05) * PERIOD,
        max_points: usize::MAX,
        ..RunSpec::default()
    };
    let cut = Cut::plane(vec![0.0, 1.0], 0.0, Direction::Falling);
    let mut sink = Collect::default();
    let started = ProcessTime::now();
    let outcome =
        Run::new(van_der_pol(), spec, Some(cut), None, false).execute(&mut sink, &Interrupt::new());
    (started.elapsed().as_secs_f64(), outcome, sink)
}

fn report(label: &str, secs: f64, outcome: &RunOutcome, points: &Collect) -> f64 {
    let s = outcome.stats;
    let p = &points.cut_points;
    let mean_period = match (p.first(), p.last()) {
        (Some(a), Some(b)) if p.len() > 1 => (b.t - a.t) / (p.len() - 1) as f64,
        _ => f64::NAN,
    };
    println!(
        "  {label:<8} {secs:>8.3} s CPU  {:>9} steps  {:>7} rejected  {:>10} evaluations  {:>6} Jacobians  {:>4} changes of method  period {mean_period:.9}  ({})",
        s.n_accepted,
        s.n_rejected,
        s.n_rate_evaluations,
        s.n_jacobians,
        outcome.method_changes.len(),
        outcome.reason
    );
    secs
}

fn main() {
    println!(
        "Van der Pol mu = 1000, {N_PERIODS} periods, rtol = atol = {TOLERANCE:e}, cut v = 0 falling"
    );
    println!("  (Automatic and Rodas4: median of {ROUNDS} runs; DOP853: one run)");
    let (auto_secs, auto, auto_points) = run(Method::Automatic, ROUNDS);
    let auto_secs = report("Automatic", auto_secs, &auto, &auto_points);
    let (stiff_secs, stiff, stiff_points) = run(Method::Rodas4, ROUNDS);
    report("Rodas4", stiff_secs, &stiff, &stiff_points);
    let (explicit_secs, explicit, explicit_points) = run(Method::Dp853, 1);
    let explicit_secs = report("DOP853", explicit_secs, &explicit, &explicit_points);
    println!(
        "  DOP853/Automatic: {:.1} x the CPU time, {:.1} x the steps",
        explicit_secs / auto_secs,
        explicit.stats.n_accepted as f64 / auto.stats.n_accepted as f64
    );
}
