//! Dense output on demand: steps taken without it are the same steps, the dense output built
//! afterwards is the same interpolant, and leaving it out saves DOP853 three evaluations.

use lamina_core::integrate::{FnRates, Integrator, Method, Rates, StepControl};

fn lorenz() -> impl Rates {
    FnRates::new(3, |_t: f64, x: &[f64], dx: &mut [f64]| {
        dx[0] = 10.0 * (x[1] - x[0]);
        dx[1] = x[0] * (28.0 - x[2]) - x[1];
        dx[2] = x[0] * x[1] - 8.0 / 3.0 * x[2];
    })
}

fn integrator(method: Method) -> Integrator {
    let control = StepControl {
        rtol: 1e-9,
        atol: 1e-9,
        max_step: None,
        initial_step: None,
    };
    Integrator::new(method, control, 3)
}

#[test]
fn lazy_steps_are_the_eager_steps_and_build_the_same_interpolant() {
    for method in [Method::Dp5, Method::Dp853] {
        let mut rates = lorenz();
        let (mut eager, mut lazy) = (integrator(method), integrator(method));
        eager.reset(&mut rates, 0.0, &[1.0, 1.0, 1.0]);
        lazy.reset(&mut rates, 0.0, &[1.0, 1.0, 1.0]);
        for idx in 0..2000 {
            eager.step(&mut rates, 30.0).expect("eager step");
            lazy.step_lazy(&mut rates, 30.0).expect("lazy step");
            assert_eq!(eager.t(), lazy.t(), "{method:?} step {idx}");
            assert_eq!(eager.x(), lazy.x(), "{method:?} step {idx}");
            // start and end states are there before the dense output is built
            assert_eq!(eager.segment().start_state(), lazy.segment().start_state());
            assert_eq!((eager.segment().t0, eager.segment().h), {
                let s = lazy.segment();
                (s.t0, s.h)
            });
            if idx % 7 == 0 {
                assert!(!lazy.has_dense());
                let segment = lazy.segment_dense(&mut rates).expect("finite");
                assert_eq!(segment, eager.segment(), "{method:?} step {idx}");
                assert!(lazy.has_dense());
            }
            if eager.t() >= 30.0 {
                break;
            }
        }
    }
}

#[test]
fn dop853_saves_three_evaluations_per_step_without_dense_output() {
    let mut rates = lorenz();
    let (mut eager, mut lazy) = (integrator(Method::Dp853), integrator(Method::Dp853));
    eager.reset(&mut rates, 0.0, &[1.0, 1.0, 1.0]);
    lazy.reset(&mut rates, 0.0, &[1.0, 1.0, 1.0]);
    for _ in 0..500 {
        eager.step(&mut rates, f64::INFINITY).expect("eager step");
        lazy.step_lazy(&mut rates, f64::INFINITY)
            .expect("lazy step");
    }
    let (e, l) = (eager.stats(), lazy.stats());
    assert_eq!(e.n_accepted, l.n_accepted);
    // [analytic] stages 14-16 of DOP853 serve the dense output only
    assert_eq!(
        e.n_rate_evaluations - l.n_rate_evaluations,
        3 * e.n_accepted
    );
    lazy.ensure_dense(&mut rates).expect("finite");
    assert_eq!(lazy.stats().n_rate_evaluations, l.n_rate_evaluations + 3);
    lazy.ensure_dense(&mut rates).expect("finite");
    assert_eq!(
        lazy.stats().n_rate_evaluations,
        l.n_rate_evaluations + 3,
        "built once"
    );
}
