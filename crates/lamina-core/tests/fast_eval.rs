//! The fast evaluators (the closures behind `Program::eval`, and kernels with fixed parameters:
//! machine code and closures) against the straight-line reference evaluator on random
//! expressions: the results must be the same numbers, bit for bit.

use lamina_core::expr::{N_REGISTERS, Program};
mod common;

use common::{any_expression, names};

use lamina_core::model::Model;
use proptest::prelude::*;

fn same(fast: f64, reference: f64) -> bool {
    fast.to_bits() == reference.to_bits() || (fast.is_nan() && reference.is_nan())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(500))]
    #[test]
    fn fast_paths_equal_the_reference(
        f in any_expression(),
        g in any_expression(),
        h in any_expression(),
        x in -2.0f64..2.0, y in -2.0f64..2.0,
        a in -1.5f64..1.5, b in -1.5f64..1.5, t in -1.0f64..3.0,
    ) {
        let n = names(&["x", "y"], &["a", "b"]);
        let program = Program::compile(
            &n,
            &[("f".into(), f.as_str()), ("g".into(), g.as_str()), ("h".into(), h.as_str())],
        ).expect("generated expressions compile");
        prop_assert!(program.n_fast_operations().is_some());
        let mut scratch = program.scratch();
        let (state, parameters) = ([x, y], [a, b]);
        let mut reference = [0.0; 3];
        program.eval_reference(&mut scratch, t, &state, &parameters, &mut reference);
        let mut tape = [0.0; 3];
        program.eval(&mut scratch, t, &state, &parameters, &mut tape);
        let mut kernel = program.specialise(&parameters).expect("small enough");
        // machine code on the hosts the tests run on (x86-64 and aarch64 Linux)
        prop_assert!(kernel.is_native());
        let mut native = [0.0; 3];
        kernel.eval(t, &state, &mut native);
        let mut closures = program.specialise_closures(&parameters).expect("small enough");
        prop_assert!(!closures.is_native());
        let mut fixed = [0.0; 3];
        closures.eval(t, &state, &mut fixed);
        for i in 0..3 {
            prop_assert!(same(tape[i], reference[i]), "tape {i}: {} vs {}", tape[i], reference[i]);
            prop_assert!(same(native[i], reference[i]), "native {i}: {} vs {}", native[i], reference[i]);
            prop_assert!(same(fixed[i], reference[i]), "closures {i}: {} vs {}", fixed[i], reference[i]);
        }
        // the states in registers: the same machine code's other form
        let call = kernel.machine_call().expect("machine code");
        prop_assert!(call.takes_states_in_registers::<2>());
        let mut in_registers = [0.0; 3];
        call.eval_small::<2>(t, state, &mut in_registers);
        for i in 0..3 {
            prop_assert!(
                same(in_registers[i], reference[i]),
                "in registers {i}: {} vs {}", in_registers[i], reference[i]
            );
        }
        // the Jacobian: machine code against tangents pushed through the list
        let mut jacobian = [0.0; 6];
        prop_assert!(program.jacobian_machine_code(t, &state, &parameters, &mut jacobian));
        let mut jacobian_reference = [0.0; 6];
        program.jacobian_reference(&mut scratch, t, &state, &parameters, &mut jacobian_reference);
        for i in 0..6 {
            prop_assert!(
                same(jacobian[i], jacobian_reference[i]),
                "jacobian {i}: {} vs {}", jacobian[i], jacobian_reference[i]
            );
        }
        // the one-output path
        let single = Program::compile(&n, &[("f".into(), f.as_str())]).expect("compiles");
        let one = single.eval_one(&mut single.scratch(), t, &state, &parameters);
        prop_assert!(same(one, reference[0]), "eval_one: {one} vs {}", reference[0]);
    }
}

#[test]
fn products_fuse_into_their_sums() {
    let n = names(&["x", "y", "z"], &["s", "r", "b"]);
    let sources = [
        ("rate of x".to_string(), "s*(y - x)"),
        ("rate of y".to_string(), "x*(r - z) - y"),
        ("rate of z".to_string(), "x*y - b*z"),
    ];
    let program = Program::compile(&n, &sources).expect("Lorenz compiles");
    // (y - x)*s, (r - z)*x - y and x*y - b*z: one fused operation per rate
    assert_eq!(program.n_fast_operations(), Some(3));
    let kernel = program
        .specialise_closures(&[10.0, 28.0, 8.0 / 3.0])
        .expect("small");
    assert_eq!(kernel.n_operations(), Some(3));
}

#[test]
fn fixed_parameters_fold_with_their_constants() {
    let n = names(&["x"], &["w"]);
    let program = Program::compile(&n, &[("f".into(), "-(w^2 + 1)*x")]).expect("compiles");
    let mut kernel = program.specialise_closures(&[2.0]).expect("small");
    // -(w^2 + 1) is one constant once w is fixed: one multiplication is left
    assert_eq!(kernel.n_operations(), Some(1));
    let mut out = [0.0];
    kernel.eval(0.0, &[3.0], &mut out);
    // [analytic] -(2^2 + 1) * 3
    assert_eq!(out, [-15.0]);
}

/// A model whose states all start at 0.
fn model_of(rates: &[(&str, &str)], parameters: &[(&str, f64)]) -> Model {
    let states: Vec<(&str, f64, &str)> = rates
        .iter()
        .map(|(name, rate)| (*name, 0.0, *rate))
        .collect();
    common::model(&states, parameters)
}

#[test]
fn a_model_follows_its_parameter_changes() {
    use lamina_core::integrate::Rates;
    let mut model = model_of(&[("x", "-k*x + k^2")], &[("k", 2.0)]);
    let mut dx = [0.0];
    model.rates(0.0, &[1.0], &mut dx);
    // [analytic] -2*1 + 4
    assert_eq!(dx, [2.0]);
    model.set_parameter(0, 3.0);
    model.rates(0.0, &[1.0], &mut dx);
    // [analytic] -3*1 + 9
    assert_eq!(dx, [6.0]);
    // the test hosts (x86-64 and aarch64 Linux) have a code generator
    assert!(model.runs_machine_code());
}

#[test]
fn a_model_too_large_for_the_registers_still_evaluates() {
    use lamina_core::integrate::Rates;
    // every rate has its own constant, and constants take registers
    let n_states = N_REGISTERS + 4;
    let state_names: Vec<String> = (0..n_states).map(|i| format!("x{i}")).collect();
    let rates: Vec<String> = (0..n_states)
        .map(|i| format!("x{} - {}*x{i}", (i + 1) % n_states, i + 2))
        .collect();
    let pairs: Vec<(&str, &str)> = state_names
        .iter()
        .zip(&rates)
        .map(|(s, r)| (s.as_str(), r.as_str()))
        .collect();
    let mut model = model_of(&pairs, &[]);
    assert_eq!(model.program().n_fast_operations(), None);
    let x: Vec<f64> = (0..n_states).map(|i| i as f64).collect();
    let mut dx = vec![0.0; n_states];
    model.rates(0.0, &x, &mut dx);
    // [analytic] x_{i+1} - (i + 2) x_i with x_i = i, wrapping at the end
    assert_eq!(dx[0], 1.0);
    let last = (n_states - 1) as f64;
    assert_eq!(dx[n_states - 1], -(last + 2.0) * last);
}

#[test]
fn compiled_models_can_move_between_threads() {
    // sweeps and workers hand models to other threads
    fn send_and_share<T: Send + Sync>() {}
    send_and_share::<Model>();
    send_and_share::<Program>();
    send_and_share::<lamina_core::expr::Kernel>();
}

#[test]
fn kernels_given_too_few_values_give_nan_rather_than_read_past_them() {
    let program = Program::compile(&names(&["x", "y"], &["a"]), &[("f".into(), "a*x + y")])
        .expect("compiles");
    let mut out = [0.0];
    // one state of two
    let mut kernel = program.specialise(&[2.0]).expect("small");
    kernel.eval(0.0, &[1.0], &mut out);
    assert!(out[0].is_nan());
    // no parameter value
    let mut kernel = program.specialise(&[]).expect("small");
    kernel.eval(0.0, &[1.0, 2.0], &mut out);
    assert!(out[0].is_nan());
    // everything there: [analytic] 2*1 + 2
    let mut kernel = program.specialise(&[2.0]).expect("small");
    kernel.eval(0.0, &[1.0, 2.0], &mut out);
    assert_eq!(out, [4.0]);
}

#[test]
fn kernels_of_one_program_evaluate_on_many_threads_at_once() {
    use rayon::prelude::*;
    let program =
        Program::compile(&names(&["x"], &["k"]), &[("f".into(), "-k*sin(x)")]).expect("compiles");
    let results: Vec<f64> = (0..64)
        .into_par_iter()
        .map(|i| {
            let mut kernel = program.specialise(&[f64::from(i)]).expect("small");
            let mut out = [0.0];
            kernel.eval(0.0, &[1.0], &mut out);
            out[0]
        })
        .collect();
    for (i, r) in results.iter().enumerate() {
        // [analytic] -k sin(1)
        assert_eq!(*r, -(i as f64) * 1.0f64.sin());
    }
}

#[test]
fn a_plain_model_gives_the_rates_of_the_compiled_one_without_machine_code() {
    use lamina_core::integrate::Rates;
    let spec = common::model_spec(
        &[
            ("x", 0.3, "a - (b + 1)*x + x^2*y"),
            ("y", 1.2, "b*x - x^2*y + sin(t)"),
        ],
        &[("a", 1.0), ("b", 2.5)],
    );
    let mut plain = Model::compile_plain(&spec).expect("compiles");
    let mut compiled = Model::compile(&spec).expect("compiles");
    assert!(!plain.runs_machine_code());
    assert!(compiled.runs_machine_code());
    let (mut a, mut b) = ([0.0; 2], [0.0; 2]);
    for (t, x) in [
        (0.0, [0.3, 1.2]),
        (1.7, [-2.0, 0.125]),
        (40.0, [1e8, -3e-9]),
    ] {
        plain.rates(t, &x, &mut a);
        compiled.rates(t, &x, &mut b);
        // [analytic] the same arithmetic in the same order, closures against machine code
        assert!(a.iter().zip(&b).all(|(p, c)| same(*p, *c)), "{a:?} {b:?}");
    }
    // [analytic] at x = 0.3, y = 1.2, t = 0: a - (b+1) x + x^2 y and b x - x^2 y
    plain.rates(0.0, &[0.3, 1.2], &mut a);
    let x2 = 0.3 * 0.3;
    assert_eq!(a, [1.0 - 3.5 * 0.3 + x2 * 1.2, 2.5 * 0.3 - x2 * 1.2]);
}

#[test]
fn jacobians_are_the_same_before_and_after_their_machine_code_is_made() {
    let model = model_of(
        &[("x", "a - (b + 1)*x + x^2*y"), ("y", "b*x - x^2*y")],
        &[("a", 1.0), ("b", 3.0)],
    );
    let program = model.program();
    let mut scratch = program.scratch();
    let x = [0.7, 2.1];
    let mut first = [0.0; 4];
    program.jacobian(&mut scratch, 0.0, &x, &[1.0, 3.0], &mut first);
    // [analytic] d/dx, d/dy of each rate: [-(b+1) + 2xy, x^2; b - 2xy, -x^2]
    let expected = [
        -4.0 + 2.0 * 0.7 * 2.1,
        0.7 * 0.7,
        3.0 - 2.0 * 0.7 * 2.1,
        -(0.7 * 0.7),
    ];
    for (got, want) in first.iter().zip(&expected) {
        assert!((got - want).abs() <= 1e-15, "{first:?}");
    }
    // a clone shares the count: many calls later the machine code is made and used, and gives
    // the same numbers bit for bit as the first calls, taken without it
    let clone = program.clone();
    let mut later = [0.0; 4];
    for _ in 0..1000 {
        clone.jacobian(&mut scratch, 0.0, &x, &[1.0, 3.0], &mut later);
        assert!(later.iter().zip(&first).all(|(l, f)| same(*l, *f)));
    }
}
