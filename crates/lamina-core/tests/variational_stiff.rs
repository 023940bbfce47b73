//! The stiff method on variational equations: the model's `n x n` matrices instead of one of
//! the whole system (whose size grows as `n^4`), checked against exact derivatives of the flow
//! and exact exponents, and the working memory sized and refused honestly.

use lamina_core::Interrupt;
use lamina_core::cycle::{FlowMap, MapKind, MapPoint, MapSettings};
use lamina_core::integrate::{Integrator, Method, StepControl};
use lamina_core::lyapunov::{ExponentError, ExponentSettings, spectrum, workspace_bytes};
use lamina_core::run::RunSpec;

mod common;
use common::model;

#[test]
fn the_strobe_map_of_a_stiff_nonlinear_model_has_the_exact_derivative() {
    // x' = -x^2 from 1: x = 1 / (1 + t), dx(t)/dx0 = 1 / (1 + t)^2 [analytic]; y' = -k (y - x)
    // follows x with dy/dx0 = 1 / (1 + t)^2 + 2 / (k (1 + t)^3) + O(1 / k^2) and
    // dy/dy0 = exp(-k t) [analytic: the quasi-steady expansion psi = phi - phi' / k + ...]
    let k = 1e4;
    let m = model(&[("x", 1.0, "-x^2"), ("y", 1.0, "-k*(y - x)")], &[("k", k)]);
    let strobe = common::strobe(&m, "1", 0.0);
    let settings = MapSettings {
        method: Method::Rodas4,
        control: StepControl {
            rtol: 1e-9,
            atol: 1e-12,
            max_step: None,
            initial_step: None,
        },
        escape: 1e6,
        max_return_time: 10.0,
    };
    let mut map = FlowMap::new(m, MapKind::Strobe(strobe), settings).expect("a strobe map");
    let seed = MapPoint {
        t: 0.0,
        state: vec![1.0, 1.0],
    };
    let image = map.apply(&seed, 1).expect("one period");
    let phi = &image.jacobian;
    assert!((image.state[0] - 0.5).abs() < 1e-8, "{:?}", image.state);
    // [analytic] as above, at t = 1
    let expected = [0.25, 0.0, 0.25 + 2.0 / (k * 8.0), 0.0];
    for (got, want) in phi.iter().zip(expected) {
        assert!((got - want).abs() < 1e-7, "{phi:?} against {expected:?}");
    }
}

#[test]
fn exponents_by_the_stiff_method_sum_to_the_trace() {
    // x_i' = -c_i x_i with c_i = 1 + i / 4 (60 states, the stiff method's block solve with
    // 60 tangent vectors) and the Lorenz system (nonlinear: its Jacobian moves with the state,
    // so the blocks are coupled): the sum of all finite-time exponents is the time average of
    // the Jacobian's trace for any averaging time [analytic: Liouville's formula], here
    // -sum c_i and -(sigma + 1 + beta) (REFERENCES case 7)
    let n = 60;
    let names: Vec<String> = (0..n).map(|i| format!("x{i}")).collect();
    let rates: Vec<String> = (0..n)
        .map(|i| format!("-{}*x{i}", 1.0 + i as f64 / 4.0))
        .collect();
    let states: Vec<(&str, f64, &str)> = names
        .iter()
        .zip(&rates)
        .map(|(name, rate)| (name.as_str(), 1.0, rate.as_str()))
        .collect();
    let chain = model(&states, &[]);
    let trace: f64 = -(0..n).map(|i| 1.0 + i as f64 / 4.0).sum::<f64>();
    let lorenz = model(
        &[
            ("x", 1.0, "10*(y - x)"),
            ("y", 1.0, "x*(28 - z) - y"),
            ("z", 1.0, "x*y - 8/3*z"),
        ],
        &[],
    );
    for (m, trace, span, tol) in [
        (chain, trace, 0.5, 1e-7),
        (lorenz, -(11.0 + 8.0 / 3.0), 5.0, 1e-9),
    ] {
        let run = RunSpec {
            method: Method::Rodas4,
            control: StepControl {
                rtol: tol,
                atol: tol,
                max_step: None,
                initial_step: None,
            },
            span,
            ..RunSpec::default()
        };
        let result = spectrum(
            m,
            &run,
            &ExponentSettings::all(),
            &mut (),
            &Interrupt::new(),
        )
        .expect("runs");
        let sum: f64 = result.exponents.iter().sum();
        // [analytic] as above, to a small multiple of the tolerance over the span
        assert!(
            (sum - trace).abs() < 1e-4 * trace.abs(),
            "sum {sum} against the trace {trace}"
        );
    }
}

#[test]
fn the_working_memory_grows_with_the_square_of_the_states() {
    // [analytic] n + n^2 values per vector: for 200 states 40 200 values, 322 kB a vector;
    // the steppers hold a few dozen such vectors and the stiff method two 200 x 200 matrices,
    // where one matrix of the whole system would take 40 200^2 x 8 bytes = 12.9 GB
    for method in [Method::Rodas4, Method::Automatic, Method::Dp853] {
        let bytes = FlowMap::workspace_bytes(200, method);
        assert!(bytes < 40_000_000, "{method:?}: {bytes}");
        let bytes = workspace_bytes(200, 200, method);
        assert!(bytes < 40_000_000, "{method:?}: {bytes}");
    }
    let dense = Integrator::workspace_bytes(Method::Rodas4, 40_200, 40_200);
    assert!(dense > 12_000_000_000, "{dense}");
}

#[test]
fn exponents_that_cannot_fit_in_memory_are_refused_with_the_size() {
    // 3 000 000 states with all exponents: 9e12 values per vector, far beyond any memory;
    // the run is refused before it allocates, with the size and what to do
    let bytes = workspace_bytes(3_000_000, 3_000_000, Method::Automatic);
    assert!(!lamina_core::memory::can_allocate(bytes));
    let text = ExponentError::TooLarge {
        bytes,
        n_states: 3_000_000,
        n_exponents: 3_000_000,
    }
    .to_string();
    assert!(
        text.contains("PB") && text.contains("fewer exponents"),
        "{text}"
    );
}
