//! Throughput benchmark: Lorenz cut points with typed equations against a hand-written Rust
//! closure on the same integrator (interleaved in one process), and the re-slice of a stored
//! run of 10^6 steps. The last two lines are `typed/native: R` and `reslice: M ms`.
//!
//! Setting (REFERENCES.md, performance anchor): Lorenz (10, 28, 8/3) from (1, 1, 1),
//! settle 50, cut z = 27 falling, rtol = atol = 1e-9, DOP853.

#![allow(clippy::print_stdout)]

use std::hint::black_box;
use std::time::Instant;

use cpu_time::ProcessTime;
use lamina_core::integrate::{FnRates, Integrator, Method, Rates, StepControl};
use lamina_core::model::{Model, ModelSpec, ParameterSpec, StateSpec};
use lamina_core::run::{Cut, Direction, StoredRun};

const CROSSINGS: usize = 20_000;
const ROUNDS: usize = 5;

fn typed_lorenz() -> Model {
    let state = |name: &str, rate: &str| StateSpec {
        name: name.into(),
        start: 1.0,
        rate: rate.into(),
    };
    let parameter = |name: &str, value: f64| ParameterSpec {
        name: name.into(),
        value,
    };
    Model::compile(&ModelSpec {
        states: vec![
            state("x", "sigma*(y - x)"),
            state("y", "x*(rho - z) - y"),
            state("z", "x*y - beta*z"),
        ],
        parameters: vec![
            parameter("sigma", 10.0),
            parameter("rho", 28.0),
            parameter("beta", 8.0 / 3.0),
        ],
    })
    .expect("Lorenz compiles")
}

fn native_lorenz() -> impl Rates {
    FnRates::new(3, |_t: f64, x: &[f64], dx: &mut [f64]| {
        let (sigma, rho, beta) = (10.0, 28.0, 8.0 / 3.0);
        dx[0] = sigma * (x[1] - x[0]);
        dx[1] = x[0] * (rho - x[2]) - x[1];
        dx[2] = x[0] * x[1] - beta * x[2];
    })
}

fn control() -> StepControl {
    StepControl {
        rtol: 1e-9,
        atol: 1e-9,
        max_step: None,
        initial_step: None,
    }
}

/// Integrates `rates` through the settle time, then to `CROSSINGS` falling crossings of
/// z = 27, locating each on the dense output. Returns (CPU seconds, RHS evaluations).
fn crossings<R: Rates>(rates: &mut R) -> (f64, u64, f64) {
    let started = ProcessTime::now();
    let mut integrator = Integrator::new(Method::Dp853, control(), 3);
    integrator.reset(rates, 0.0, &[1.0, 1.0, 1.0]);
    while integrator.t() < 50.0 {
        integrator.step(rates, 50.0).expect("settles");
    }
    let n_settle = integrator.stats().n_rates;
    let mut cut = Cut::plane(vec![0.0, 0.0, 1.0], 27.0, Direction::Falling);
    let mut g0 = cut.value(integrator.t(), integrator.x(), &[]);
    let mut found = 0;
    let mut checksum = 0.0;
    let mut point = [0.0; 3];
    while found < CROSSINGS {
        integrator.step(rates, f64::INFINITY).expect("steps");
        let g1 = cut.value(integrator.t(), integrator.x(), &[]);
        if cut.direction.crosses(g0, g1) {
            let seg = integrator.segment();
            let (start, terms) = seg.coeffs.split_at(3);
            checksum += cut.locate(start, terms, seg.t0, seg.h, g0, g1, &[], &mut point);
            found += 1;
        }
        g0 = g1;
    }
    let secs = started.elapsed().as_secs_f64();
    (
        secs,
        integrator.stats().n_rates - n_settle,
        black_box(checksum),
    )
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() {
    let mut typed_secs = Vec::new();
    let mut native_secs = Vec::new();
    let mut evals = 0;
    for _ in 0..ROUNDS {
        let mut typed = typed_lorenz();
        let (secs, n, sum_typed) = crossings(&mut typed);
        typed_secs.push(secs);
        evals = n;
        let mut native = native_lorenz();
        let (secs, _, sum_native) = crossings(&mut native);
        native_secs.push(secs);
        assert!(
            (sum_typed - sum_native).abs() <= 1e-6 * sum_native.abs(),
            "same trajectory"
        );
    }
    let (typed, native) = (median(typed_secs), median(native_secs));
    println!("lorenz cut, DOP853, rtol = atol = 1e-9, {CROSSINGS} crossings, median of {ROUNDS}");
    println!(
        "  typed:  {:.0} crossings per CPU-second",
        CROSSINGS as f64 / typed
    );
    println!(
        "  native: {:.0} crossings per CPU-second",
        CROSSINGS as f64 / native
    );
    println!(
        "  right-hand-side evaluations per crossing: {:.1}",
        evals as f64 / CROSSINGS as f64
    );

    // A stored run of 10^6 steps, re-sliced by a moved plane.
    let mut model = typed_lorenz();
    let parameters = model.parameters().to_vec();
    let mut integrator = Integrator::new(Method::Dp853, control(), 3);
    integrator.reset(&mut model, 0.0, &[1.0, 1.0, 1.0]);
    let mut stored = StoredRun::new(3, (0.0, f64::INFINITY), usize::MAX);
    for _ in 0..1_000_000 {
        integrator.step(&mut model, f64::INFINITY).expect("steps");
        stored.push(integrator.segment(), integrator.x());
    }
    let mut times = Vec::new();
    let mut n_points = 0;
    for round in 0..7 {
        let mut cut = Cut::plane(vec![0.0, 0.0, 1.0], 25.0 + round as f64, Direction::Falling);
        let wall = Instant::now();
        n_points = black_box(stored.reslice_points(&mut cut, &parameters)).len();
        times.push(wall.elapsed().as_secs_f64() * 1e3);
    }
    println!(
        "  stored steps: {}, {} MB; a re-slice gives {n_points} points",
        stored.n_steps(),
        stored.bytes() >> 20
    );
    println!("typed/native: {:.3}", typed / native);
    println!("reslice: {:.1} ms", median(times));
}
