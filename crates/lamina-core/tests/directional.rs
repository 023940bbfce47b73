//! The directional kernel (a program's outputs and their derivatives along given vectors, one
//! machine-code call) against the straight-line reference evaluator, bit for bit, and against
//! the Jacobian times the vectors, to rounding: on random expressions and on small models.

mod common;

use common::{any_expression, lorenz_from, model, names};
use lamina_core::expr::Program;
use lamina_core::integrate::Rates;
use lamina_core::model::Model;
use proptest::prelude::*;

fn same(fast: f64, reference: f64) -> bool {
    fast.to_bits() == reference.to_bits() || (fast.is_nan() && reference.is_nan())
}

/// `J q_k` for each of the `m` vectors after the state in `y`, from the Jacobian `jacobian`
/// (`n_out x n` row-major), with the sum of the magnitudes of its terms (the scale of its
/// rounding): `(value, scale)` per output and vector, vector after vector.
fn jacobian_times(jacobian: &[f64], n: usize, y: &[f64], m: usize) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    for k in 0..m {
        let q = &y[(k + 1) * n..(k + 2) * n];
        for row in jacobian.chunks_exact(n) {
            let value = row.iter().zip(q).map(|(a, b)| a * b).sum();
            let scale = row.iter().zip(q).map(|(a, b)| (a * b).abs()).sum();
            out.push((value, scale));
        }
    }
    out
}

/// Whether forward mode along the vectors gives `value` within rounding of the product
/// `(expected, scale)` of the Jacobian and the vector; `size` is the sum of the vector's
/// entries' magnitudes, the scale of cancellations inside the expressions.
fn agrees(value: f64, (expected, scale): (f64, f64), size: f64, output: f64) -> bool {
    // [common practice] forward-mode derivatives and the Jacobian's matrix product differ only
    // in the order of summation, so by a few units of rounding of the terms' magnitudes (and
    // of the vector's, where terms inside an expression cancel, as x * (b / x) does; inside
    // an outer power or product such a cancellation is multiplied by the factors around it,
    // whose size the output's own value stands for: ((a / y) ((t - b) y + y) + 2.3)^5 has a
    // derivative along y of exactly 0 that the two orders leave at 0 and 1e-10)
    let output = if output.is_finite() {
        output.abs()
    } else {
        0.0
    };
    let cancellation = size * (1.0 + output);
    (value - expected).abs() <= 1e-13 * scale.max(expected.abs()) + 1e-12 * cancellation
}

/// The sum of the magnitudes of the entries of each of the `m` vectors after the state in
/// `y`, once per output (`n_out` outputs), in the order of [`jacobian_times`].
fn sizes(y: &[f64], n: usize, m: usize, n_out: usize) -> Vec<f64> {
    (0..m)
        .flat_map(|k| {
            let size = y[(k + 1) * n..(k + 2) * n].iter().map(|v| v.abs()).sum();
            std::iter::repeat_n(size, n_out)
        })
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]
    #[test]
    fn the_kernel_equals_the_reference_and_the_jacobian_times_the_vectors(
        f in any_expression(),
        g in any_expression(),
        h in any_expression(),
        x in -2.0f64..2.0, y in -2.0f64..2.0,
        a in -1.5f64..1.5, b in -1.5f64..1.5, t in -1.0f64..3.0,
        m in 1usize..4,
        vectors in proptest::collection::vec(
            prop_oneof![4 => -2.0f64..2.0, 1 => Just(0.0)], 6),
    ) {
        let n = names(&["x", "y"], &["a", "b"]);
        let program = Program::compile(
            &n,
            &[("f".into(), f.as_str()), ("g".into(), g.as_str()), ("h".into(), h.as_str())],
        ).expect("generated expressions compile");
        let mut scratch = program.scratch();
        let parameters = [a, b];
        let mut input = vec![x, y];
        input.extend_from_slice(&vectors[..2 * m]);
        // machine code on the hosts the tests run on (x86-64 and aarch64 Linux)
        let kernel = program.directional_kernel(m).expect("machine code");
        prop_assert_eq!(kernel.n_vectors(), m);
        let mut native = vec![0.0; 3 * (m + 1)];
        prop_assert!(kernel.eval(t, &input, &parameters, &mut native));
        let mut reference = vec![0.0; 3 * (m + 1)];
        program.directional_reference(&mut scratch, t, &input, &parameters, m, &mut reference);
        for (i, (&n, &r)) in native.iter().zip(&reference).enumerate() {
            prop_assert!(same(n, r), "entry {i}: {n} vs {r}");
        }
        let mut values = [0.0; 3];
        program.eval_reference(&mut scratch, t, &input[..2], &parameters, &mut values);
        for i in 0..3 {
            prop_assert!(same(native[i], values[i]), "output {i}: {} vs {}", native[i], values[i]);
        }
        let mut jacobian = [0.0; 6];
        program.jacobian_reference(&mut scratch, t, &input[..2], &parameters, &mut jacobian);
        // the product meets the skipping of zero tangents only where the Jacobian is finite
        if jacobian.iter().all(|v| v.is_finite()) {
            let expected = jacobian_times(&jacobian, 2, &input, m);
            let sizes = sizes(&input, 2, m, 3);
            let derivatives = native[3..].iter().zip(&expected).zip(&sizes);
            for (i, ((&d, &e), &size)) in derivatives.enumerate() {
                let output = native[i % 3];
                prop_assert!(
                    d.is_nan() || agrees(d, e, size, output),
                    "derivative {i}: {d} vs {e:?}"
                );
            }
        }
    }
}

/// Checks the kernel of `model` for 1 to 3 vectors at a few states and times: rates bit for
/// bit as the model's own, derivatives as its Jacobian times the vectors.
fn check_model(mut model: Model, states: &[&[f64]], times: &[f64]) {
    let n = model.dim();
    for m in 1..=3 {
        let kernel = model.program().directional_kernel(m).expect("machine code");
        for (s, state) in states.iter().enumerate() {
            for &t in times {
                let mut input = state.to_vec();
                for k in 0..m * n {
                    // irregular vectors with entries of both signs
                    input.push((1.3 + 0.7 * k as f64 + 0.3 * s as f64).sin());
                }
                let mut out = vec![0.0; n * (m + 1)];
                assert!(kernel.eval(t, &input, model.parameters(), &mut out));
                let mut rates = vec![0.0; n];
                model.rates(t, state, &mut rates);
                for i in 0..n {
                    assert!(
                        same(out[i], rates[i]),
                        "rate {i}: {} vs {}",
                        out[i],
                        rates[i]
                    );
                }
                let mut jacobian = vec![0.0; n * n];
                model.jacobian(t, state, &mut jacobian);
                let expected = jacobian_times(&jacobian, n, &input, m);
                for (i, (&d, &e)) in out[n..].iter().zip(&expected).enumerate() {
                    // no cancelling terms inside these rates: the product's own scale
                    assert!(
                        agrees(d, e, 0.0, 0.0),
                        "m = {m}, derivative {i}: {d} vs {e:?}"
                    );
                }
            }
        }
    }
}

#[test]
fn lorenz_model_derivatives_along_vectors() {
    // [analytic] the Jacobian of Lorenz's rates is exact from forward mode; the kernel's
    // derivatives are that Jacobian times the vectors
    let lorenz = lorenz_from([1.0, 1.0, 1.0]);
    check_model(
        lorenz,
        &[&[1.0, 2.0, 3.0], &[-7.3, 4.1, 25.0], &[0.0, 0.0, 0.0]],
        &[0.0],
    );
}

#[test]
fn brusselator_derivatives_along_vectors() {
    // [analytic] as for Lorenz's model
    let brusselator = model(
        &[
            ("x", 1.3, "a - (b + 1)*x + x^2*y"),
            ("y", 2.0, "b*x - x^2*y"),
        ],
        &[("a", 1.0), ("b", 3.0)],
    );
    check_model(
        brusselator,
        &[&[1.3, 2.0], &[0.2, 4.5], &[1.0, 3.0]],
        &[0.0],
    );
}

#[test]
fn forced_model_derivatives_along_vectors_at_several_times() {
    // [analytic] the forcing depends on t only: the derivatives are those of the unforced
    // rates at the same state
    let forced = model(
        &[
            ("x", 0.1, "v"),
            ("v", 0.0, "-c*v - k*x - x^3/3 + f*cos(w*t) + x*sin(t)^2"),
        ],
        &[("c", 0.2), ("k", 1.0), ("f", 0.4), ("w", 1.3)],
    );
    check_model(
        forced,
        &[&[0.1, 0.0], &[-1.5, 0.8]],
        &[0.0, 0.7, 3.9, 12.25],
    );
}

#[test]
fn a_model_with_jumps_gets_the_derivative_of_its_current_branch() {
    // [analytic] sign, step and abs are constant or linear on each side of their switch: the
    // derivative is the branch's, as the Jacobian gives it
    let switched = model(
        &[
            ("x", 0.5, "y - 0.3*sign(x) + abs(x - y)"),
            ("y", -0.5, "-x + 2*step(y - 0.1)*y^2 - floor(x)"),
        ],
        &[],
    );
    check_model(switched, &[&[0.5, -0.5], &[-0.4, 0.7], &[1.2, 2.0]], &[0.0]);
    // on the branch y > 0.1, x > y: the rates are y - 0.3 + x - y and -x + 2 y^2 - floor(x)
    let m = model(
        &[
            ("x", 0.5, "y - 0.3*sign(x) + abs(x - y)"),
            ("y", -0.5, "-x + 2*step(y - 0.1)*y^2 - floor(x)"),
        ],
        &[],
    );
    let kernel = m.program().directional_kernel(2).expect("machine code");
    let mut out = [0.0; 6];
    assert!(kernel.eval(
        0.0,
        &[1.2, 0.5, 1.0, 0.0, 0.0, 1.0],
        m.parameters(),
        &mut out
    ));
    // [analytic] J = [[1, 0], [-1, 4 y]] at y = 0.5: J e_x = (1, -1), J e_y = (0, 2)
    assert_eq!(&out[2..], &[1.0, -1.0, 0.0, 2.0]);
}

#[test]
fn a_kernel_given_too_few_values_evaluates_nothing() {
    let m = model(&[("x", 1.0, "-x"), ("y", 1.0, "x*y")], &[]);
    let kernel = m.program().directional_kernel(2).expect("machine code");
    let mut out = [7.0; 6];
    // the state and one vector only, where two are needed
    assert!(!kernel.eval(0.0, &[1.0, 2.0, 1.0, 0.0], m.parameters(), &mut out));
    assert!(!kernel.eval(0.0, &[1.0; 6], m.parameters(), &mut out[..5]));
    assert_eq!(out, [7.0; 6]);
}

#[test]
fn clones_of_a_model_share_one_kernel_per_number_of_vectors() {
    let m = model(&[("x", 1.0, "-x*y"), ("y", 1.0, "x - y")], &[]);
    let clone = m.clone();
    let first = clone.program().directional_kernel(1).expect("machine code");
    // made once and shared: the clone made before the code has it too, and works alike
    let second = m.program().directional_kernel(1).expect("machine code");
    let (mut a, mut b) = ([0.0; 4], [0.0; 4]);
    let input = [0.5, 2.0, 1.0, -1.0];
    assert!(first.eval(0.0, &input, &[], &mut a));
    assert!(second.eval(0.0, &input, &[], &mut b));
    assert_eq!(a, b);
    // [analytic] f = (-x y, x - y) = (-1, -1.5); J = [[-y, -x], [1, -1]], J q = (-1.5, 2)
    assert_eq!(a, [-1.0, -1.5, -1.5, 2.0]);
    assert!(first.shares_code_with(&second));
}

#[test]
fn kernels_move_between_threads() {
    fn send_and_share<T: Send + Sync>() {}
    send_and_share::<lamina_core::expr::DirectionalKernel>();
}

#[test]
fn an_infinite_slope_along_a_zero_entry_leaves_the_derivative_finite() {
    // [analytic] f = x^0.7 + 2 y at x = 0: df/dx = 0.7 x^-0.3 is infinite, but along
    // q = (0, 1) the derivative is (skipped) + 2 * 1 = 2, as the reference's skipping of zero
    // entries gives; the kernel's plain sums meet inf * 0 there and must hand over to its
    // careful form
    let n = names(&["x", "y"], &[]);
    let program = Program::compile(&n, &[("f".into(), "x^0.7 + 2*y")]).expect("compiles");
    let kernel = program.directional_kernel(1).expect("machine code");
    let input = [0.0, 0.5, 0.0, 1.0];
    let mut out = [0.0; 2];
    assert!(kernel.eval(0.0, &input, &[], &mut out));
    let mut scratch = program.scratch();
    let mut reference = [0.0; 2];
    program.directional_reference(&mut scratch, 0.0, &input, &[], 1, &mut reference);
    assert_eq!(out[1], 2.0);
    assert!(same(out[0], reference[0]) && same(out[1], reference[1]));
    // along q = (1, 1) the slope itself is infinite, in both forms
    let input = [0.0, 0.5, 1.0, 1.0];
    assert!(kernel.eval(0.0, &input, &[], &mut out));
    program.directional_reference(&mut scratch, 0.0, &input, &[], 1, &mut reference);
    assert!(out[1].is_infinite() && same(out[1], reference[1]));
}
