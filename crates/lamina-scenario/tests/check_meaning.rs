//! Checks that find what a run would stumble on, before it runs: tolerances that cannot mean
//! anything, step limits and times that floating-point numbers cannot carry, rates and
//! surfaces that are not numbers at the start or never change; and numbers in messages in
//! their short form.

mod common;

use common::{EXAMPLE, MINIMAL, at, edit, load, problem_on};
use lamina_scenario::{Problem, Severity};

/// Every problem of `text` after one edit.
fn problems_after(text: &str, from: &str, to: &str) -> Vec<Problem> {
    load(&edit(text, from, to)).check()
}

/// The one problem on `field` after the edit, which must have `severity` and say `part`.
fn one_problem(text: &str, from: &str, to: &str, field: &str, severity: Severity, part: &str) {
    let problems = problems_after(text, from, to);
    let problem = problem_on(&problems, field);
    assert_eq!(problem.severity, severity, "{problem}");
    assert!(problem.message.contains(part), "'{problem}' lacks '{part}'");
    assert!(problem.location.is_some(), "{problem}");
}

#[test]
fn tolerances_that_cannot_mean_anything_are_refused() {
    use Severity::{Error, Warning};
    let below_one = "a relative tolerance must be below 1";
    for rtol in ["1e308", "10.0", "1.0"] {
        let to = format!("rtol: {rtol}");
        one_problem(
            MINIMAL,
            "rtol: 1e-8",
            &to,
            "integrator.rtol",
            Error,
            below_one,
        );
    }
    one_problem(
        MINIMAL,
        "rtol: 1e-8",
        "rtol: 0.5",
        "integrator.rtol",
        Warning,
        "results will be rough",
    );
    for (atol, part) in [
        ("-1e-10", "must be a positive number, not -1e-10"),
        ("inf", "must be a positive number, not inf"),
        ("NaN", "must be a positive number, not NaN"),
        (
            "1e7",
            "is not below the escape size 1000000 (limits.escape)",
        ),
    ] {
        let to = format!("atol: {atol}");
        one_problem(MINIMAL, "atol: 1e-10", &to, "integrator.atol", Error, part);
    }
    // the example is fine with its own tolerances, and at the edges of what is allowed
    assert_eq!(problems_after(EXAMPLE, "rtol: 1e-9", "rtol: 0.1"), []);
}

#[test]
fn a_step_limit_the_time_cannot_carry_is_refused() {
    // [analytic] the integrators take no step below ten units in the last place of t; over
    // a run to t = 50 that is 10 * 2^-52 * 50 = 1.11e-13
    one_problem(
        MINIMAL,
        "atol: 1e-10",
        "atol: 1e-10, max_step: 1e-300",
        "integrator.max_step",
        Severity::Error,
        "max_step 1e-300 is below 1.11e-13, the smallest step that changes the time at t = 50",
    );
    // 50 / 1e-7 = 5e8 steps: allowed, but said
    one_problem(
        MINIMAL,
        "atol: 1e-10",
        "atol: 1e-10, max_step: 1e-7",
        "integrator.max_step",
        Severity::Warning,
        "take at least 5e8 steps",
    );
    assert_eq!(
        problems_after(MINIMAL, "atol: 1e-10", "atol: 1e-10, max_step: 1e-4"),
        []
    );
}

#[test]
fn times_far_from_zero_are_named() {
    // [analytic] doubles between 2^49 and 2^50 (1e15 is about 2^49.8) are 2^-3 = 0.125 apart,
    // and 10 * 2^-52 * 1e15 = 2.22: the damped spring (time scale 1) needs far smaller steps,
    // so its run stops at once there (a trial run shows it), while from t = 0 it steps on
    let text = edit(MINIMAL, "time: (start: 0.0", "time: (start: 1e15");
    let problems = load(&text).check();
    let problem = problem_on(&problems, "time.start");
    assert_eq!(problem.severity, Severity::Error, "{problem}");
    for part in [
        "the run stops at its start: its step size collapses at t = 1e15",
        "no step below 2.22 changes the time there",
        "0.125 apart",
        "while the same run started at t = 0 steps on",
        "start the time nearer 0",
    ] {
        assert!(problem.message.contains(part), "'{problem}' lacks '{part}'");
    }
    assert_eq!(problem.location, at(&text, 13, "1e15"));
    // a span that long: the run starts well and may stop near its end, a warning on the span
    let problems = problems_after(MINIMAL, "span: 50.0", "span: 1e15");
    let problem = problem_on(&problems, "time.span");
    assert_eq!(problem.severity, Severity::Warning, "{problem}");
    assert!(
        problem
            .message
            .starts_with("near the end of the window, at t = 1e15, no step below 2.22"),
        "{problem}"
    );

    // [analytic] at 1e17 doubles are 16 apart: a span of 50 comes out as 48, at 1e20 (16384
    // apart) as 0
    for (start, realised) in [("1e17", "48"), ("1e20", "0")] {
        let to = format!("time: (start: {start}");
        let part = format!("the span of 50 after t = {start} comes out as {realised} for the run");
        one_problem(
            MINIMAL,
            "time: (start: 0.0",
            &to,
            "time.start",
            Severity::Error,
            &part,
        );
    }
    // a settle time so long that the span after it is lost
    one_problem(
        MINIMAL,
        "settle: 0.0",
        "settle: 1e20",
        "time.settle",
        Severity::Error,
        "a shorter settle time keeps the run nearer 0",
    );
    // a sweep's own settle time
    one_problem(
        EXAMPLE,
        "settle: 300.0,\n",
        "settle: 1e19,\n",
        "sweep.settle",
        Severity::Error,
        "for each sweep value",
    );
    // strobe samples that cannot be timed: the first far away, or the window far from 0
    one_problem(
        EXAMPLE,
        "first_at: 0.0",
        "first_at: 1e20",
        "strobe.first_at",
        Severity::Error,
        "cannot be timed",
    );
    // [analytic] T = 2 pi / 1.2 = 5.235987755982989; times near 1e15 are 0.125 apart, more
    // than a thousandth of it
    one_problem(
        EXAMPLE,
        "time: (start: 0.0",
        "time: (start: 1e15",
        "time.start",
        Severity::Error,
        "strobe samples at first_at + k T with first_at = 0 and T = 5.235987755982989 cannot be \
         timed near t = 1e15: floating-point times there are 0.125 apart",
    );
    // a million is no problem for a model of time scale 1
    assert_eq!(
        problems_after(EXAMPLE, "time: (start: 0.0", "time: (start: 1e6"),
        []
    );
    // the field checks alone (no expressions) still refuse a lost window
    let text = edit(MINIMAL, "time: (start: 0.0", "time: (start: 1e20");
    assert!(
        load(&text)
            .check_fields()
            .iter()
            .any(|p| p.field == "time.start" && p.is_error())
    );
}

#[test]
fn a_surface_that_never_changes_is_refused() {
    let level = |expression: &str| format!("Level(\"{expression}\")");
    let plane = "Plane(normal: {\"v\": 1.0}, offset: 0.0)";
    let cases = [
        (
            "1",
            Severity::Error,
            "depends on neither the states nor t: it is 1 everywhere",
        ),
        (
            "0/0",
            Severity::Error,
            "it is NaN (not a number) everywhere",
        ),
        (
            "0/0 + v",
            Severity::Error,
            "is NaN (not a number) at the start (t = 0, x = 0.1, v = 0) and at every other state tried",
        ),
        (
            "sqrt(x - 2) - 1",
            Severity::Warning,
            "crossings are found only where it is a number",
        ),
        ("t - 10", Severity::Warning, "depends on t only"),
    ];
    for (expression, severity, part) in cases {
        let problems = problems_after(EXAMPLE, plane, &level(expression));
        let problem = problem_on(&problems, "cut.surface");
        assert_eq!(problem.severity, severity, "{problem}");
        assert!(problem.message.contains(part), "'{problem}' lacks '{part}'");
        assert_eq!(problem.location.map(|l| l.line), Some(18));
    }
    assert_eq!(problems_after(EXAMPLE, plane, &level("x - 0.5")), []);
}

#[test]
fn rates_that_are_not_numbers_at_the_start_are_refused() {
    one_problem(
        MINIMAL,
        "rate: \"v\"",
        "rate: \"0/0\"",
        "states[0].rate",
        Severity::Error,
        "this rate is NaN (not a number) at the start (t = 0, x = 1, v = 0): the run cannot take its first step",
    );
    one_problem(
        MINIMAL,
        "rate: \"-c*v - x\"",
        "rate: \"1/v\"",
        "states[1].rate",
        Severity::Error,
        "this rate is infinite at the start",
    );
    one_problem(
        EXAMPLE,
        "period: \"2*pi/w\"",
        "period: \"0/0\"",
        "strobe.period",
        Severity::Error,
        "evaluates to NaN (not a number), not a positive number",
    );
}

#[test]
fn numbers_in_messages_are_short() {
    let cases = [
        ("value: 0.2", "value: 1e308", "parameters[0].value", "1e308"),
        ("rtol: 1e-8", "rtol: 1e-300", "integrator.rtol", "1e-300"),
        ("span: 50.0", "span: -1e300", "time.span", "-1e300"),
        (
            "range: (0.0, 1.0)",
            "range: (1e300, 1e-300)",
            "parameters[0].range",
            "(1e300, 1e-300)",
        ),
    ];
    for (from, to, field, shown) in cases {
        let problems = problems_after(MINIMAL, from, to);
        let problem = problem_on(&problems, field);
        assert!(problem.message.contains(shown), "{problem}");
        assert!(
            !problem.message.contains("0000000000"),
            "a long run of digits: {problem}"
        );
    }
}
