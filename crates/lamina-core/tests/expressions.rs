//! Expression compiler: values, precedence, sharing, located errors, and forward-mode
//! derivatives against finite differences on random expressions.

use lamina_core::expr::{ExprErrorKind, Names, Program};
use proptest::prelude::*;

fn names(states: &[&str], parameters: &[&str]) -> Names {
    Names {
        states: states.iter().map(|s| s.to_string()).collect(),
        parameters: parameters.iter().map(|s| s.to_string()).collect(),
    }
}

fn compile(text: &str) -> Program {
    Program::compile(&names(&["x", "v"], &["a", "w"]), &[("test".into(), text)])
        .unwrap_or_else(|e| panic!("{e}"))
}

/// Evaluates `text` at x = 0.3, v = -1.7, a = 0.5, w = 1.25, t = 2.0.
fn value(text: &str) -> f64 {
    let program = compile(text);
    let mut scratch = program.scratch();
    program.eval_one(&mut scratch, 2.0, &[0.3, -1.7], &[0.5, 1.25])
}

fn check(text: &str, expected: f64) {
    let got = value(text);
    assert!(
        (got - expected).abs() <= 1e-14 * expected.abs().max(1.0)
            || (got.is_nan() && expected.is_nan()),
        "{text}: got {got}, expected {expected}"
    );
}

#[test]
fn values_match_plain_rust() {
    let (x, v, a, w, t) = (0.3f64, -1.7f64, 0.5f64, 1.25f64, 2.0f64);
    // [analytic] each typed expression against the same formula written in Rust
    check(
        "-2*a*v - x - w*x^3 + a*cos(w*t)",
        -2.0 * a * v - x - w * x.powi(3) + a * (w * t).cos(),
    );
    check("sin(x)+cos(v)+tan(x)", x.sin() + v.cos() + x.tan());
    check(
        "asin(x)+acos(x)+atan(v)+atan2(v, x)",
        x.asin() + x.acos() + v.atan() + v.atan2(x),
    );
    check("sinh(v)*cosh(x)/tanh(w)", v.sinh() * x.cosh() / w.tanh());
    check(
        "exp(x) + ln(w) + log10(a) + sqrt(w)",
        x.exp() + w.ln() + a.log10() + w.sqrt(),
    );
    check(
        "abs(v) + min(x, v) + max(x, v)",
        v.abs() + x.min(v) + x.max(v),
    );
    check(
        "floor(v) + ceil(v) + sign(v) + sign(0) + sign(x)",
        v.floor() + v.ceil() - 1.0 + 0.0 + 1.0,
    );
    check("pi*e + t", std::f64::consts::PI * std::f64::consts::E + t);
    check("x^w", x.powf(w));
    check("7 % 3", 1.0);
}

#[test]
fn step_is_zero_below_and_one_at_and_above_zero() {
    // [analytic] step(u) = 0 for u < 0, 1 otherwise (the definition Lamina documents)
    check("step(-1e-300)", 0.0);
    check("step(0)", 1.0);
    check("step(2)", 1.0);
    check("step(x - 0.3)", 1.0);
}

#[test]
fn precedence_follows_ordinary_math() {
    // [common practice] unary minus binds looser than ^, and ^ is right-associative
    check("-x^2", -0.09);
    check("2^3^2", 512.0);
    check("2*3+4", 10.0);
    check("2*(3+4)", 14.0);
    check("1 - 2 - 3", -4.0);
    check("8 / 2 / 2", 2.0);
    check("2^-1", 0.5);
    check("1.5e-3 * 2E2", 0.3);
}

#[test]
fn shared_subexpressions_are_computed_once() {
    let once = compile("sin(x*v)");
    let twice = compile("sin(x*v) + sin(v*x)");
    // sin(x*v) + sin(v*x) needs one more instruction (the addition) than sin(x*v) alone
    assert_eq!(twice.n_instructions(), once.n_instructions() + 1);
    let folded = compile("2*pi*3 + x");
    // constants fold: x, the folded constant, the addition
    assert_eq!(folded.n_instructions(), 3);
}

#[test]
fn a_system_shares_across_rates() {
    let n = names(&["x", "y", "z"], &["s", "r", "b"]);
    let sources = [
        ("rate of x".to_string(), "s*(y - x)"),
        ("rate of y".to_string(), "x*(r - z) - y"),
        ("rate of z".to_string(), "x*y - b*z"),
    ];
    let program = Program::compile(&n, &sources).expect("Lorenz compiles");
    let mut scratch = program.scratch();
    let mut out = [0.0; 3];
    program.eval(
        &mut scratch,
        0.0,
        &[1.0, 2.0, 3.0],
        &[10.0, 28.0, 8.0 / 3.0],
        &mut out,
    );
    // [analytic] Lorenz right-hand side at (1, 2, 3)
    assert_eq!(out, [10.0, 1.0 * (28.0 - 3.0) - 2.0, 2.0 - 8.0]);
    assert!(!program.uses_time());
}

fn error_of(text: &str) -> lamina_core::expr::ExprError {
    let err = Program::compile(
        &names(&["x", "v"], &["a"]),
        &[("rate of state 'v'".into(), text)],
    )
    .expect_err("should not compile");
    err.errors[0].clone()
}

#[test]
fn unknown_name_is_located_and_lists_known_names() {
    let err = error_of("-x - k3*x^3");
    assert_eq!(err.position, 5);
    match &err.kind {
        ExprErrorKind::UnknownName { name, known } => {
            assert_eq!(name, "k3");
            assert_eq!(known, &["x", "v", "a", "pi", "e", "t"]);
        }
        other => panic!("wrong kind {other:?}"),
    }
    let shown = err.to_string();
    assert!(shown.contains("rate of state 'v'"), "{shown}");
    assert!(shown.contains("-x - k3*x^3"), "{shown}");
    assert!(shown.contains("\n         ^"), "caret under k3: {shown}");
}

#[test]
fn function_problems_are_located() {
    let err = error_of("x + foo(v)");
    assert_eq!(err.position, 4);
    assert!(matches!(err.kind, ExprErrorKind::UnknownFunction { .. }));
    let err = error_of("x + atan2(v)");
    assert_eq!(err.position, 4);
    assert_eq!(
        err.kind,
        ExprErrorKind::WrongArgumentCount {
            name: "atan2".into(),
            expected: 2,
            found: 1
        }
    );
    let err = error_of("sin + x");
    assert!(matches!(err.kind, ExprErrorKind::Syntax(ref m) if m.contains("sin(")));
}

#[test]
fn syntax_errors_are_located() {
    let err = error_of("x + * v");
    assert_eq!(err.position, 4);
    let err = error_of("(x + v");
    assert!(matches!(err.kind, ExprErrorKind::Syntax(ref m) if m.contains("parenthes")));
    let err = error_of("x v");
    assert_eq!(err.position, 2);
    let err = error_of("x + é");
    assert_eq!(err.position, 4);
    assert_eq!(error_of("   ").kind, ExprErrorKind::Empty);
    let err = error_of("x +");
    assert_eq!(err.position, 3);
}

#[test]
fn every_bad_rate_is_reported_at_once() {
    let err = Program::compile(
        &names(&["x", "v"], &[]),
        &[("rate of x".into(), "q"), ("rate of v".into(), "x + r")],
    )
    .expect_err("two bad rates");
    assert_eq!(err.errors.len(), 2);
    assert_eq!(err.errors[1].label, "rate of v");
}

#[test]
fn odd_inputs_never_panic() {
    for text in [
        "",
        ")",
        "(",
        ",",
        "1,2",
        "max(1,2,3)",
        "2e",
        "2e+",
        ".5",
        "x..",
        "((((",
        "x^^2",
        "--x",
        "+",
        "1e999",
    ] {
        let _ = Program::compile(&names(&["x"], &[]), &[("f".into(), text)]);
    }
}

// ---------- derivatives against finite differences ----------

/// Random smooth expressions over x, y (states), a (parameter) and t, kept inside the
/// domains of their functions so that central differences are meaningful.
fn smooth_expression() -> impl Strategy<Value = String> {
    let leaf = prop_oneof![
        Just("x".to_string()),
        Just("y".to_string()),
        Just("a".to_string()),
        Just("t".to_string()),
        (-3.0f64..3.0).prop_map(|c| format!("{c:.3}")),
    ];
    leaf.prop_recursive(4, 24, 2, |inner| {
        prop_oneof![
            (inner.clone(), inner.clone()).prop_map(|(p, q)| format!("({p} + {q})")),
            (inner.clone(), inner.clone()).prop_map(|(p, q)| format!("({p} - {q})")),
            (inner.clone(), inner.clone()).prop_map(|(p, q)| format!("({p} * {q})")),
            (inner.clone(), inner.clone()).prop_map(|(p, q)| format!("({p} / (2 + sin({q})))")),
            inner.clone().prop_map(|p| format!("sin({p})")),
            inner.clone().prop_map(|p| format!("cos({p})")),
            inner.clone().prop_map(|p| format!("tanh({p})")),
            inner.clone().prop_map(|p| format!("exp(tanh({p}))")),
            inner.clone().prop_map(|p| format!("sqrt(1 + ({p})^2)")),
            inner.clone().prop_map(|p| format!("ln(2 + cos({p}))")),
            inner.clone().prop_map(|p| format!("atan({p})")),
            inner.clone().prop_map(|p| format!("({p})^3")),
            inner.clone().prop_map(|p| format!("-({p})")),
            (inner.clone(), inner.clone()).prop_map(|(p, q)| format!("atan2({p}, 3 + cos({q}))")),
            (inner.clone(), inner).prop_map(|(p, q)| format!("(2 + sin({p}))^(cos({q}))")),
        ]
    })
}

/// Central difference of `f` at `at`, or `None` where the function turns too fast for a
/// finite difference to be trusted there (two step sizes disagree).
fn central_difference(f: &mut dyn FnMut(f64) -> f64, at: f64) -> Option<f64> {
    let h = 1e-5 * at.abs().max(1.0);
    let coarse = (f(at + h) - f(at - h)) / (2.0 * h);
    let fine = (f(at + h / 4.0) - f(at - h / 4.0)) / (h / 2.0);
    let scale = coarse.abs().max(fine.abs()).max(1.0);
    // [common practice] the error of a central difference shrinks with h^2: two step sizes
    // agree where it is small, and only there is the difference a fair check
    ((coarse - fine).abs() <= 1e-6 * scale).then_some(fine)
}

fn close(analytic: f64, numeric: Option<f64>) -> bool {
    let Some(numeric) = numeric else { return true };
    // [common practice] a central difference with h = 2.5e-6 carries about 1e-9 relative error
    let scale = analytic.abs().max(numeric.abs()).max(1.0);
    (analytic - numeric).abs() <= 1e-6 * scale
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]
    #[test]
    fn derivatives_match_finite_differences(
        f in smooth_expression(),
        g in smooth_expression(),
        x in -1.5f64..1.5, y in -1.5f64..1.5, a in -1.0f64..1.0, t in 0.0f64..3.0,
    ) {
        let n = names(&["x", "y"], &["a"]);
        let program = Program::compile(&n, &[("f".into(), f.as_str()), ("g".into(), g.as_str())])
            .expect("generated expressions compile");
        let mut scratch = program.scratch();
        let mut jac = [0.0; 4];
        program.jacobian(&mut scratch, t, &[x, y], &[a], &mut jac);
        let mut dp = [0.0; 2];
        program.parameter_derivative(&mut scratch, t, &[x, y], &[a], 0, &mut dp);
        let mut dt = [0.0; 2];
        program.time_derivative(&mut scratch, t, &[x, y], &[a], &mut dt);
        for row in 0..2 {
            let mut out = [0.0; 2];
            let mut by_x = |s: f64| { program.eval(&mut program.scratch(), t, &[s, y], &[a], &mut out); out[row] };
            let fd = central_difference(&mut by_x, x);
            prop_assert!(close(jac[row * 2], fd), "d/dx row {row}: {} vs {fd:?}", jac[row * 2]);
            let mut by_y = |s: f64| { program.eval(&mut program.scratch(), t, &[x, s], &[a], &mut out); out[row] };
            let fd = central_difference(&mut by_y, y);
            prop_assert!(close(jac[row * 2 + 1], fd), "d/dy row {row}: {} vs {fd:?}", jac[row * 2 + 1]);
            let mut by_a = |s: f64| { program.eval(&mut program.scratch(), t, &[x, y], &[s], &mut out); out[row] };
            let fd = central_difference(&mut by_a, a);
            prop_assert!(close(dp[row], fd), "d/da row {row}: {} vs {fd:?}", dp[row]);
            let mut by_t = |s: f64| { program.eval(&mut program.scratch(), s, &[x, y], &[a], &mut out); out[row] };
            let fd = central_difference(&mut by_t, t);
            prop_assert!(close(dt[row], fd), "d/dt row {row}: {} vs {fd:?}", dt[row]);
        }
    }
}

#[test]
fn piecewise_derivatives_take_the_active_branch() {
    let n = names(&["x", "y"], &[]);
    let program = Program::compile(
        &n,
        &[
            (
                "f".into(),
                "abs(x) + max(x, y) + 3*step(x) + sign(y)*0 + floor(x)",
            ),
            ("g".into(), "min(x, y)"),
        ],
    )
    .expect("compiles");
    let mut scratch = program.scratch();
    let mut jac = [0.0; 4];
    program.jacobian(&mut scratch, 0.0, &[-0.5, 0.25], &[], &mut jac);
    // [analytic] at x = -0.5 < y: d|x|/dx = -1, max picks y, step and floor are flat; min picks x
    assert_eq!(jac, [-1.0, 1.0, 1.0, 0.0]);
}

/// Lorenz (sigma, rho, beta) compiled from typed text.
fn lorenz_program() -> Program {
    let n = names(&["x", "y", "z"], &["sigma", "rho", "beta"]);
    let sources = [
        ("rate of x".to_string(), "sigma*(y - x)"),
        ("rate of y".to_string(), "x*(rho - z) - y"),
        ("rate of z".to_string(), "x*y - beta*z"),
    ];
    Program::compile(&n, &sources).expect("Lorenz compiles")
}

#[test]
fn lorenz_equilibria_trace_and_hopf_value() {
    let program = lorenz_program();
    let mut scratch = program.scratch();
    let (sigma, beta) = (10.0f64, 8.0f64 / 3.0);
    for rho in [28.0f64, 470.0 / 19.0] {
        let p = [sigma, rho, beta];
        let c = (beta * (rho - 1.0)).sqrt();
        for sign in [1.0, -1.0] {
            let eq = [sign * c, sign * c, rho - 1.0];
            let mut rates = [1.0; 3];
            program.eval(&mut scratch, 0.0, &eq, &p, &mut rates);
            // [analytic] REFERENCES case 7: (+-sqrt(beta (rho - 1)), same, rho - 1) are equilibria
            for r in rates {
                assert!(r.abs() < 1e-12, "rate {r} at {eq:?}");
            }
            let mut j = [0.0; 9];
            program.jacobian(&mut scratch, 0.0, &eq, &p, &mut j);
            let trace = j[0] + j[4] + j[8];
            // [analytic] REFERENCES case 7: the trace of the Jacobian is -(sigma + 1 + beta) everywhere
            assert!((trace + (sigma + 1.0 + beta)).abs() < 1e-12);
            if rho != 28.0 {
                // characteristic polynomial l^3 + c2 l^2 + c1 l + c0 from the compiled Jacobian
                let c2 = -trace;
                let c1 = j[0] * j[4] - j[1] * j[3] + j[0] * j[8] - j[2] * j[6] + j[4] * j[8]
                    - j[5] * j[7];
                let det = j[0] * (j[4] * j[8] - j[5] * j[7]) - j[1] * (j[3] * j[8] - j[5] * j[6])
                    + j[2] * (j[3] * j[7] - j[4] * j[6]);
                let c0 = -det;
                // [analytic] REFERENCES case 7: at rho_H = sigma (sigma + beta + 3) / (sigma - beta - 1) = 470/19
                // a pair of eigenvalues is purely imaginary, i.e. c2 c1 = c0
                assert!(
                    (c2 * c1 - c0).abs() < 1e-9 * c0.abs(),
                    "c2 c1 = {}, c0 = {c0}",
                    c2 * c1
                );
            }
        }
    }
    // [analytic] (28 - 1) * 8/3 = 72: the equilibria at rho = 28 are (+-sqrt 72, +-sqrt 72, 27)
    assert!(((beta * 27.0f64).sqrt() - 72f64.sqrt()).abs() < 1e-14);
}
