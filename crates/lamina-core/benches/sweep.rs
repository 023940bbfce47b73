//! Sweep benchmark: the same restart-mode sweep on a rayon pool of one thread and of two,
//! wall-clock time each and the speed-up. The model is the buckled-beam demo's equations
//! (strobe at the drive period), 128 values, 48 kept samples after a transient of 600.

#![allow(clippy::print_stdout)]

use std::time::Instant;

use lamina_core::Interrupt;
use lamina_core::integrate::{Method, StepControl};
use lamina_core::model::{Model, ModelSpec, ParameterSpec, StateSpec};
use lamina_core::run::{RunSpec, Strobe, StrobeSpec};
use lamina_core::sweep::{SweepSource, SweepSpec, sweep_restart};

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
            state("x", 0.5, "v"),
            state("v", 0.0, "-2*zeta*v + x - k3*x^3 + a*cos(w*t)"),
        ],
        parameters: vec![
            parameter("zeta", 0.125),
            parameter("k3", 1.0),
            parameter("a", 0.38),
            parameter("w", 1.1),
        ],
    })
    .expect("compiles")
}

fn main() {
    let m = model();
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
    let spec = SweepSpec {
        parameter: 2,
        from: 0.15,
        to: 0.55,
        values: 128,
        settle: 600.0,
        keep: 48,
        span: 2000.0,
        follow: false,
        source: SweepSource::Strobe,
    };
    let period = StrobeSpec {
        period: "2*pi/w".into(),
        first_at: 0.0,
    };
    let strobe_for = move |m: &Model| Strobe::compile(&period, m).ok();
    let indices: Vec<usize> = (0..spec.n_values()).collect();
    let mut seconds = Vec::new();
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("pool");
        let mut best = f64::INFINITY;
        for _ in 0..3 {
            let started = Instant::now();
            let columns = pool.install(|| {
                sweep_restart(
                    &m,
                    &run,
                    None,
                    &strobe_for,
                    &spec,
                    &indices,
                    &Interrupt::new(),
                    &|_| {},
                )
                .expect("sweep")
            });
            assert_eq!(columns.len(), indices.len());
            best = best.min(started.elapsed().as_secs_f64());
        }
        println!(
            "restart sweep, {} values, {threads} thread(s): {:.3} s (best of 3)",
            indices.len(),
            best
        );
        seconds.push(best);
    }
    println!(
        "speed-up 2 threads / 1 thread: {:.2}",
        seconds[0] / seconds[1]
    );
}
