//! Throughput benchmark: Lorenz cut points with typed equations (the machine code a model
//! runs, and the closure evaluator used where there is none) against a hand-written Rust
//! closure on the same integrator (interleaved in one process), the same for a 20-state chain
//! of coupled van der Pol oscillators, and the re-slice of a stored run of 10^6 steps. The last
//! two lines are `typed/native: R` (Lorenz, machine code) and `reslice: M ms`.
//!
//! Setting (REFERENCES.md, performance anchor): Lorenz (10, 28, 8/3) from (1, 1, 1),
//! settle 50, cut z = 27 falling, rtol = atol = 1e-9, DOP853. The dense output is built only
//! on the steps that cross the cut, as the run driver does.

#![allow(clippy::print_stdout)]

use std::hint::black_box;
use std::time::Instant;

use cpu_time::ProcessTime;
use lamina_core::expr::{Kernel, Program};
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
    Model::compile(&chain_spec()).expect("chain compiles")
}

/// The chain's states and parameters as typed.
fn chain_spec() -> ModelSpec {
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
    ModelSpec {
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
    }
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
    let n_settle = integrator.stats().n_rate_evaluations;
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
        integrator.stats().n_rate_evaluations - n_settle,
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

/// A model's rates run by its closure evaluator rather than its machine code.
struct Closures {
    kernel: Kernel,
    dim: usize,
}

impl Closures {
    fn of(model: &Model) -> Self {
        Self {
            kernel: model
                .program()
                .specialise_closures(model.parameters())
                .expect("small enough for the registers"),
            dim: model.start().len(),
        }
    }
}

impl Rates for Closures {
    fn dim(&self) -> usize {
        self.dim
    }

    fn rates(&mut self, t: f64, x: &[f64], dx: &mut [f64]) {
        self.kernel.eval(t, x, dx);
    }
}

/// Median CPU seconds of runs of the typed model (machine code), its closures and the native
/// rates, interleaved; and evaluations per crossing.
struct Timings {
    typed: f64,
    closures: f64,
    native: f64,
    evals_per_crossing: f64,
}

fn compare<N: Rates>(
    mut typed: impl FnMut() -> Model,
    mut native: impl FnMut() -> N,
    start: &[f64],
    cut: impl Fn() -> Cut,
    n_crossings: usize,
) -> Timings {
    let mut typed_secs = Vec::new();
    let mut closure_secs = Vec::new();
    let mut native_secs = Vec::new();
    let mut evals = 0;
    for _ in 0..ROUNDS {
        let (secs, n, sum_typed) = crossings(&mut typed(), start, cut(), n_crossings);
        typed_secs.push(secs);
        evals = n;
        let (secs, _, sum_closures) =
            crossings(&mut Closures::of(&typed()), start, cut(), n_crossings);
        closure_secs.push(secs);
        let (secs, _, sum_native) = crossings(&mut native(), start, cut(), n_crossings);
        native_secs.push(secs);
        assert!(
            (sum_typed - sum_native).abs() <= 1e-6 * sum_native.abs()
                && (sum_closures - sum_native).abs() <= 1e-6 * sum_native.abs(),
            "same trajectory"
        );
    }
    Timings {
        typed: median(typed_secs),
        closures: median(closure_secs),
        native: median(native_secs),
        evals_per_crossing: evals as f64 / n_crossings as f64,
    }
}

/// Prints the rates of `t` for `n_crossings`.
fn report(t: &Timings, n_crossings: usize) {
    let rate = |secs: f64| n_crossings as f64 / secs;
    println!(
        "  typed (machine code): {:.0} crossings per CPU-second",
        rate(t.typed)
    );
    println!(
        "  typed (closures):     {:.0} crossings per CPU-second",
        rate(t.closures)
    );
    println!(
        "  native:               {:.0} crossings per CPU-second",
        rate(t.native)
    );
    println!(
        "  rate evaluations per crossing: {:.1}",
        t.evals_per_crossing
    );
    println!("  closures/native: {:.3}", t.closures / t.native);
}

/// Prints how long making a model's machine code takes (compiling the chain from its text,
/// with and without the machine code).
fn report_code_generation() {
    let spec = chain_spec();
    let sources: Vec<(String, &str)> = spec
        .states
        .iter()
        .map(|s| (s.name.clone(), s.rate.as_str()))
        .collect();
    let parameters = [MU, COUPLING];
    let mut text = Vec::new();
    let mut code = Vec::new();
    for _ in 0..ROUNDS {
        let started = ProcessTime::now();
        let program = Program::compile(&spec.names(), &sources).expect("chain compiles");
        text.push(started.elapsed().as_secs_f64());
        let started = ProcessTime::now();
        let kernel = program.specialise(&parameters);
        code.push(started.elapsed().as_secs_f64());
        assert!(kernel.is_some_and(|k| k.is_native()));
    }
    println!(
        "  compiling the chain's text: {:.2} ms; making its machine code: {:.2} ms",
        median(text) * 1e3,
        median(code) * 1e3
    );
}

/// Prints the time of one Jacobian of the chain (20 x 20): machine code and the tangents
/// pushed through the instruction list.
fn report_jacobian() {
    let model = typed_chain();
    let program = model.program();
    let parameters = model.parameters();
    let mut scratch = program.scratch();
    let x: Vec<f64> = (0..20).map(|i| 0.1 * i as f64 - 0.7).collect();
    let mut out = vec![0.0; 400];
    const N: usize = 20_000;
    let mut time = |reference: bool| {
        let started = ProcessTime::now();
        for k in 0..N {
            let t = k as f64 * 1e-3;
            if reference {
                program.jacobian_reference(&mut scratch, t, &x, parameters, &mut out);
            } else {
                program.jacobian(&mut scratch, t, &x, parameters, &mut out);
            }
            black_box(&out);
        }
        started.elapsed().as_secs_f64() / N as f64
    };
    let mut code = Vec::new();
    let mut reference = Vec::new();
    for _ in 0..ROUNDS {
        code.push(time(false));
        reference.push(time(true));
    }
    println!(
        "  chain Jacobian (20 x 20): machine code {:.2} us, tangents through the list {:.2} us",
        median(code) * 1e6,
        median(reference) * 1e6
    );
}

/// Prints the time of the chain's rates with the Jacobian times `m` vectors: the directional
/// kernel's one call, against the rates, the Jacobian and the matrix product (the path without
/// it), for 1, 3, 4 and 20 vectors (where one call stops paying); and the time to make the
/// kernel.
fn report_directional() {
    let mut model = typed_chain();
    let parameters = model.parameters().to_vec();
    let n = 20;
    for m in [1, 3, 4, 20] {
        let started = ProcessTime::now();
        let kernel = model
            .program()
            .clone()
            .directional_kernel(m)
            .expect("machine code");
        let making = started.elapsed().as_secs_f64();
        let mut y: Vec<f64> = (0..n).map(|i| 0.1 * i as f64 - 0.7).collect();
        y.extend((0..n * m).map(|k| (1.0 + 0.3 * k as f64).sin()));
        let mut out = vec![0.0; n * (m + 1)];
        let mut jacobian = vec![0.0; n * n];
        const N: usize = 20_000;
        let mut time = |one_call: bool| {
            let started = ProcessTime::now();
            for k in 0..N {
                let t = k as f64 * 1e-3;
                if one_call {
                    kernel.eval(t, &y, &parameters, &mut out);
                } else {
                    let (x, vectors) = y.split_at(n);
                    let (dx, dvectors) = out.split_at_mut(n);
                    model.rates(t, x, dx);
                    model.jacobian(t, x, &mut jacobian);
                    for (q, dq) in vectors.chunks_exact(n).zip(dvectors.chunks_exact_mut(n)) {
                        for (row, o) in jacobian.chunks_exact(n).zip(dq.iter_mut()) {
                            *o = row.iter().zip(q).map(|(a, b)| a * b).sum();
                        }
                    }
                }
                black_box(&out);
            }
            started.elapsed().as_secs_f64() / N as f64
        };
        let mut one_call = Vec::new();
        let mut by_matrix = Vec::new();
        for _ in 0..ROUNDS {
            one_call.push(time(true));
            by_matrix.push(time(false));
        }
        println!(
            "  chain rates and Jacobian times {m} vector(s): one call {:.2} us, rates + \
             Jacobian + product {:.2} us; making the one call {:.1} ms",
            median(one_call) * 1e6,
            median(by_matrix) * 1e6,
            making * 1e3
        );
    }
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() {
    let lorenz = compare(
        typed_lorenz,
        native_lorenz,
        &[1.0; 3],
        lorenz_cut,
        CROSSINGS,
    );
    println!("lorenz cut, DOP853, rtol = atol = 1e-9, {CROSSINGS} crossings, median of {ROUNDS}");
    report(&lorenz, CROSSINGS);

    let chain_start = typed_chain().start().to_vec();
    let chain = compare(
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
    report(&chain, CHAIN_CROSSINGS);
    println!("  chain typed/native: {:.3}", chain.typed / chain.native);
    report_code_generation();
    report_jacobian();
    report_directional();

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
    println!("typed/native: {:.3}", lorenz.typed / lorenz.native);
    println!("reslice: {:.1} ms", median(times));
}
