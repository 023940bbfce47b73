//! Throughput benchmark: Lorenz cut points with typed equations against a hand-written Rust
//! closure on the same integrator (interleaved in one process), the same for a 20-state chain
//! of coupled van der Pol oscillators, and the re-slice of a stored run of 10^6 steps. The last
//! two lines are `typed/native: R` (Lorenz) and `reslice: M ms`.
//!
//! Setting (REFERENCES.md, performance anchor): Lorenz (10, 28, 8/3) from (1, 1, 1),
//! settle 50, cut z = 27 falling, rtol = atol = 1e-9, DOP853. The dense output is built only
//! on the steps that cross the cut, as the run driver does.

#![allow(clippy::print_stdout)]

use std::hint::black_box;
use std::time::Instant;

use cpu_time::ProcessTime;
use lamina_core::integrate::{FnRates, Integrator, Method, Rates, StepControl};
use lamina_core::model::{Model, ModelSpec, ParameterSpec, StateSpec};
use lamina_core::run::{Cut, Direction, StoredRun};

const CROSSINGS: usize = 20_000;
const CHAIN_CROSSINGS: usize = 1_000;
const ROUNDS: usize = 7;

/// Oscillators in the chain (two states each), their damping and coupling.
const N_OSCILLATORS: usize = 10;
const MU: f64 = 1.0;
const COUPLING: f64 = 0.5;

/// Squared natural frequency of oscillator `i` (slightly detuned along the chain).
fn frequency_squared(i: usize) -> f64 {
    let w = 1.0 + 0.05 * i as f64;
    w * w
}

/// The chain typed: `x_i' = v_i`, `v_i' = mu (1 - x_i^2) v_i - w_i^2 x_i + k (x_{i-1} - 2 x_i
/// + x_{i+1})`, free ends.
fn typed_chain() -> Model {
    let mut states = Vec::new();
    for i in 0..N_OSCILLATORS {
        let coupling = if i == 0 {
            "(x1 - x0)".to_string()
        } else if i == N_OSCILLATORS - 1 {
            format!("(x{} - x{i})", i - 1)
        } else {
            format!("(x{} - 2*x{i} + x{})", i - 1, i + 1)
        };
        states.push(StateSpec {
            name: format!("x{i}"),
            start: if i == 0 { 1.0 } else { 0.1 },
            rate: format!("v{i}"),
        });
        states.push(StateSpec {
            name: format!("v{i}"),
            start: 0.0,
            rate: format!(
                "mu*(1 - x{i}^2)*v{i} - {}*x{i} + k*{coupling}",
                frequency_squared(i)
            ),
        });
    }
    Model::compile(&ModelSpec {
        states,
        parameters: vec![
            ParameterSpec {
                name: "mu".into(),
                value: MU,
            },
            ParameterSpec {
                name: "k".into(),
                value: COUPLING,
            },
        ],
    })
    .expect("chain compiles")
}

/// The same chain as a closure, with the same arithmetic in the same order.
fn native_chain() -> impl Rates {
    FnRates::new(2 * N_OSCILLATORS, |_t: f64, s: &[f64], d: &mut [f64]| {
        for i in 0..N_OSCILLATORS {
            let (x, v) = (s[2 * i], s[2 * i + 1]);
            let coupling = if i == 0 {
                s[2] - s[0]
            } else if i == N_OSCILLATORS - 1 {
                s[2 * i - 2] - x
            } else {
                s[2 * i - 2] - 2.0 * x + s[2 * i + 2]
            };
            d[2 * i] = v;
            d[2 * i + 1] = MU * (1.0 - x * x) * v - frequency_squared(i) * x + COUPLING * coupling;
        }
    })
}

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

/// Integrates `rates` from `start` through the settle time, then to `n_crossings` crossings
/// of `cut`, locating each on the dense output (built only for the crossing steps). Returns
/// (CPU seconds, RHS evaluations, checksum).
fn crossings<R: Rates>(
    rates: &mut R,
    start: &[f64],
    mut cut: Cut,
    n_crossings: usize,
) -> (f64, u64, f64) {
    let started = ProcessTime::now();
    let dim = start.len();
    let mut integrator = Integrator::new(Method::Dp853, control(), dim);
    integrator.reset(rates, 0.0, start);
    while integrator.t() < 50.0 {
        integrator.step_lazy(rates, 50.0).expect("settles");
    }
    let n_settle = integrator.stats().n_rates;
    let mut g0 = cut.value(integrator.t(), integrator.x(), &[]);
    let mut found = 0;
    let mut checksum = 0.0;
    let mut point = vec![0.0; dim];
    while found < n_crossings {
        integrator.step_lazy(rates, f64::INFINITY).expect("steps");
        let g1 = cut.value(integrator.t(), integrator.x(), &[]);
        if cut.direction.crosses(g0, g1) {
            let seg = integrator.segment_dense(rates).expect("finite");
            let (start, terms) = seg.coeffs.split_at(dim);
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

fn lorenz_cut() -> Cut {
    Cut::plane(vec![0.0, 0.0, 1.0], 27.0, Direction::Falling)
}

/// The first oscillator's position rising through zero.
fn chain_cut() -> Cut {
    let mut normal = vec![0.0; 2 * N_OSCILLATORS];
    normal[0] = 1.0;
    Cut::plane(normal, 0.0, Direction::Rising)
}

/// Median CPU seconds of typed and native runs, interleaved; and evaluations per crossing.
fn compare<T: Rates, N: Rates>(
    mut typed: impl FnMut() -> T,
    mut native: impl FnMut() -> N,
    start: &[f64],
    cut: impl Fn() -> Cut,
    n_crossings: usize,
) -> (f64, f64, f64) {
    let mut typed_secs = Vec::new();
    let mut native_secs = Vec::new();
    let mut evals = 0;
    for _ in 0..ROUNDS {
        let (secs, n, sum_typed) = crossings(&mut typed(), start, cut(), n_crossings);
        typed_secs.push(secs);
        evals = n;
        let (secs, _, sum_native) = crossings(&mut native(), start, cut(), n_crossings);
        native_secs.push(secs);
        assert!(
            (sum_typed - sum_native).abs() <= 1e-6 * sum_native.abs(),
            "same trajectory"
        );
    }
    (
        median(typed_secs),
        median(native_secs),
        evals as f64 / n_crossings as f64,
    )
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() {
    let (typed, native, evals) = compare(
        typed_lorenz,
        native_lorenz,
        &[1.0; 3],
        lorenz_cut,
        CROSSINGS,
    );
    println!("lorenz cut, DOP853, rtol = atol = 1e-9, {CROSSINGS} crossings, median of {ROUNDS}");
    println!(
        "  typed:  {:.0} crossings per CPU-second",
        CROSSINGS as f64 / typed
    );
    println!(
        "  native: {:.0} crossings per CPU-second",
        CROSSINGS as f64 / native
    );
    println!("  right-hand-side evaluations per crossing: {evals:.1}");

    let chain_start = typed_chain().start().to_vec();
    let (chain_typed, chain_native, chain_evals) = compare(
        typed_chain,
        native_chain,
        &chain_start,
        chain_cut,
        CHAIN_CROSSINGS,
    );
    println!(
        "chain of {N_OSCILLATORS} van der Pol oscillators (20 states), cut x0 = 0 rising, \
         {CHAIN_CROSSINGS} crossings"
    );
    println!(
        "  typed:  {:.0} crossings per CPU-second",
        CHAIN_CROSSINGS as f64 / chain_typed
    );
    println!(
        "  native: {:.0} crossings per CPU-second",
        CHAIN_CROSSINGS as f64 / chain_native
    );
    println!("  right-hand-side evaluations per crossing: {chain_evals:.1}");
    println!("  chain typed/native: {:.3}", chain_typed / chain_native);

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
