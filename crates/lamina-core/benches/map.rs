//! Regime-map benchmark: cells per second of the same map on a rayon pool of one thread and
//! of two (a pool built per measurement), and the speed-up. The model is the Brusselator
//! (2 states) over A in [0.5, 1.5] and B in [1, 4], 16 x 16 cells, each settling for 200 and
//! recorded for 200 with one tangent vector for its largest exponent (a cell already at a
//! stable resting point after its settle time skips the span), classified by the cut x = A
//! rising at rtol 1e-9, atol 1e-12. Beside the wall-clock time the process's CPU time
//! is printed: CPU time over wall time is the number of cores the run actually had, so a
//! speed-up below 2 on a machine busy with other work shows as fewer than 2 cores in use.

#![allow(clippy::print_stdout)]

use std::time::Instant;

use cpu_time::ProcessTime;

use lamina_core::Interrupt;
use lamina_core::integrate::{Method, StepControl};
use lamina_core::model::{Model, ModelSpec, ParameterSpec, StateSpec};
use lamina_core::regime_map::{MapAxisSpec, MapProblem, RegimeMapSpec, run_cells};
use lamina_core::run::{Cut, CutSpec, Direction, RunSpec, Strobe, SurfaceSpec};
use lamina_core::sweep::SweepSource;

fn model() -> Model {
    let state = |name: &str, start: f64, rate: &str| StateSpec {
        name: name.into(),
        start,
        rate: rate.into(),
    };
    let parameter = |name: &str, value: f64| ParameterSpec {
        name: name.into(),
        value,
    };
    Model::compile(&ModelSpec {
        states: vec![
            state("x", 1.3, "a - (b + 1)*x + x^2*y"),
            state("y", 2.0, "b*x - x^2*y"),
        ],
        parameters: vec![parameter("a", 1.0), parameter("b", 2.0)],
    })
    .expect("compiles")
}

fn no_strobe(_: &Model) -> Option<Strobe> {
    None
}

fn main() {
    let m = model();
    let cut = Cut::compile(
        &CutSpec {
            surface: SurfaceSpec::Level("x - a".into()),
            direction: Direction::Rising,
        },
        &m,
    )
    .expect("cut");
    let run = RunSpec {
        method: Method::Dp853,
        control: StepControl {
            rtol: 1e-9,
            atol: 1e-12,
            max_step: None,
            initial_step: None,
        },
        ..RunSpec::default()
    };
    let axis = |parameter, from, to| MapAxisSpec {
        parameter,
        from,
        to,
        values: 16,
    };
    let map = RegimeMapSpec {
        x: axis(0, 0.5, 1.5),
        y: axis(1, 1.0, 4.0),
        settle: 200.0,
        span: 200.0,
        source: SweepSource::Cut,
    };
    let problem = MapProblem {
        model: &m,
        run: &run,
        cut: Some(&cut),
        strobe_for: &no_strobe,
        map: &map,
    };
    let indices: Vec<usize> = (0..map.n_cells()).collect();
    let mut rates = Vec::new();
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("pool");
        let mut best = f64::INFINITY;
        let mut cpu_of_best = 0.0;
        for _ in 0..3 {
            let started = Instant::now();
            let cpu = ProcessTime::now();
            let cells = pool.install(|| {
                run_cells(&problem, &indices, &Interrupt::new(), &|_| {}).expect("map")
            });
            assert_eq!(cells.len(), indices.len());
            let wall = started.elapsed().as_secs_f64();
            if wall < best {
                best = wall;
                cpu_of_best = cpu.elapsed().as_secs_f64();
            }
        }
        let rate = indices.len() as f64 / best;
        println!(
            "regime map, {} cells, {threads} thread(s): {best:.3} s, {rate:.0} cells per second, \
             {:.2} ms per cell, {:.2} CPU-ms per cell, {:.2} cores in use (best of 3)",
            indices.len(),
            1e3 / rate,
            1e3 * cpu_of_best / indices.len() as f64,
            cpu_of_best / best
        );
        rates.push(rate);
    }
    println!("speed-up 2 threads / 1 thread: {:.2}", rates[1] / rates[0]);
}
