//! Step-size control: the PI controller, the predictive controller, and the automatic
//! initial step.
//!
//! The explicit pairs use the stabilised ("PI", Gustafsson) rule of Hairer, Nørsett & Wanner,
//! Solving ODEs I, sec. IV.2, in the form of their DOPRI5 / DOP853 codes:
//! `h_new = h * safety / (err^alpha / err_prev^beta)` with `alpha = 1/q - beta * k`,
//! limited to `min_factor <= h_new / h <= max_factor`. Rodas4 uses Gustafsson's predictive
//! controller as in Hairer & Wanner's RODAS (Solving ODEs II, sec. IV.8).
//!
//! The PI rule takes its powers from tables ([`FixedPower`]): the next step waits for them,
//! and the library's `ln` and `exp` cost a small model about a tenth of its time.

use std::sync::OnceLock;

use super::fixed_power::FixedPower;
use super::{ErrorScale, Method, Rates};

/// Safety factor applied to every proposed step.
const SAFETY: f64 = 0.9;
/// Floor for the previous error in the PI term (Hairer's `FACOLD` lower bound).
const PREVIOUS_ERROR_FLOOR: f64 = 1e-4;

/// The PI step-size controller of one integrator.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct PiController {
    /// The powers of the errors, for this method's exponents.
    powers: &'static ControllerPowers,
    /// Smallest allowed `h_new / h`.
    min_factor: f64,
    /// Largest allowed `h_new / h`.
    max_factor: f64,
    /// `safety * err_prev^beta`, from the error of the last accepted step (at least
    /// [`PREVIOUS_ERROR_FLOOR`]): the part of the next growth known before the next step.
    weight: f64,
    /// Whether the last attempt was rejected (then the next accepted step may not grow `h`).
    after_rejection: bool,
}

/// The powers a PI controller takes of the errors: `err^-alpha` of an accepted step,
/// `err^alpha` of a rejected one, `err_prev^beta`.
#[derive(Debug)]
pub(crate) struct ControllerPowers {
    falling: FixedPower,
    rising: FixedPower,
    previous: FixedPower,
}

impl ControllerPowers {
    fn new(alpha: f64, beta: f64) -> Self {
        Self {
            falling: FixedPower::new(-alpha),
            rising: FixedPower::new(alpha),
            previous: FixedPower::new(beta),
        }
    }

    /// `safety * err_prev^beta` after an accepted error `err`.
    fn weight(&self, err: f64) -> f64 {
        SAFETY * self.previous.pow(err.max(PREVIOUS_ERROR_FLOOR))
    }
}

impl PartialEq for ControllerPowers {
    fn eq(&self, other: &Self) -> bool {
        self.rising.exponent() == other.rising.exponent()
            && self.previous.exponent() == other.previous.exponent()
    }
}

/// The tables of the two PI rules, made on first use.
static DP5_POWERS: OnceLock<ControllerPowers> = OnceLock::new();
static DP853_POWERS: OnceLock<ControllerPowers> = OnceLock::new();

impl PiController {
    /// The controller settings used for `method`.
    ///
    /// Dormand–Prince 5(4): order exponent 1/5, beta 0.04, factors 0.2..10 (DOPRI5's
    /// defaults). DOP853: order exponent 1/8, factors 0.333..6 (DOP853's defaults) and a
    /// small beta.
    pub(crate) fn for_method(method: Method) -> Self {
        let (alpha0, beta, beta_weight, min_factor, max_factor, powers) = match method {
            Method::Dp5 => (0.2, 0.04, 0.75, 0.2, 10.0, &DP5_POWERS),
            Method::Dp853 | Method::Automatic | Method::Rodas4 => {
                (1.0 / 8.0, DP853_BETA, 0.2, 0.333, 6.0, &DP853_POWERS)
            }
        };
        let powers =
            powers.get_or_init(|| ControllerPowers::new(alpha0 - beta * beta_weight, beta));
        Self {
            powers,
            min_factor,
            max_factor,
            weight: powers.weight(PREVIOUS_ERROR_FLOOR),
            after_rejection: false,
        }
    }

    /// Forgets the step history (after a reset of the state).
    pub(crate) fn reset(&mut self) {
        self.weight = self.powers.weight(PREVIOUS_ERROR_FLOOR);
        self.after_rejection = false;
    }

    /// Next step size after a step of size `h` was accepted with scaled error `err <= 1`.
    #[inline]
    pub(crate) fn accepted(&mut self, h: f64, err: f64) -> f64 {
        // safety * err_prev^beta / err^alpha: the next step waits for this, so the power is
        // read from tables (err = 0 gives the largest growth) and multiplied, not divided
        let growth = self.weight * self.powers.falling.pow(err);
        let mut h_new = h * growth.clamp(self.min_factor, self.max_factor);
        self.weight = self.powers.weight(err);
        if self.after_rejection {
            h_new = h_new.min(h);
        }
        self.after_rejection = false;
        h_new
    }

    /// Next step size after a step of size `h` was rejected with scaled error `err > 1`.
    #[inline]
    pub(crate) fn rejected(&mut self, h: f64, err: f64) -> f64 {
        self.after_rejection = true;
        let fac = (self.powers.rising.pow(err) / SAFETY).min(1.0 / self.min_factor);
        h / fac
    }

    /// Notes an attempt that failed for another reason (non-finite values); the caller
    /// chooses the smaller step itself.
    pub(crate) fn failed(&mut self) {
        self.after_rejection = true;
    }
}

/// The step-size rule of the method in use.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum StepRule {
    /// The PI rule of the explicit pairs.
    Pi(PiController),
    /// The predictive rule of Rodas4.
    Predictive(PredictiveController),
}

impl StepRule {
    /// The rule used for `method` (`Automatic` starts with DOP853's).
    pub(crate) fn for_method(method: Method) -> Self {
        match method {
            Method::Rodas4 => Self::Predictive(PredictiveController::new()),
            other => Self::Pi(PiController::for_method(other)),
        }
    }

    /// Forgets the step history.
    pub(crate) fn reset(&mut self) {
        match self {
            Self::Pi(c) => c.reset(),
            Self::Predictive(c) => c.reset(),
        }
    }

    /// Next step size after an accepted step of size `h` with scaled error `err <= 1`.
    #[inline]
    pub(crate) fn accepted(&mut self, h: f64, err: f64) -> f64 {
        match self {
            Self::Pi(c) => c.accepted(h, err),
            Self::Predictive(c) => c.accepted(h, err),
        }
    }

    /// Next step size after a rejected step of size `h` with scaled error `err > 1`.
    #[inline]
    pub(crate) fn rejected(&mut self, h: f64, err: f64) -> f64 {
        match self {
            Self::Pi(c) => c.rejected(h, err),
            Self::Predictive(c) => c.rejected(h, err),
        }
    }

    /// Notes an attempt that failed for another reason.
    pub(crate) fn failed(&mut self) {
        match self {
            Self::Pi(c) => c.failed(),
            Self::Predictive(c) => c.failed(),
        }
    }
}

/// Gustafsson's predictive step-size controller in the form of Hairer & Wanner's RODAS
/// (Solving ODEs II, sec. IV.8): after an accepted step the factor is the larger of the
/// plain `err^(1/4) / safety` and the predicted
/// `(h_prev / h) (err^2 / err_prev)^(1/4) / safety`, with `h_new / h` limited to 1/5..6.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct PredictiveController {
    /// Size and error (at least 0.01) of the previous accepted step, if any.
    previous: Option<(f64, f64)>,
    /// Whether the last attempt was rejected (then the next accepted step may not grow `h`).
    after_rejection: bool,
}

/// Limits of `h / h_new` of the predictive controller (RODAS's `FAC2` and `FAC1`).
const PREDICTIVE_FACTOR_MIN: f64 = 1.0 / 6.0;
const PREDICTIVE_FACTOR_MAX: f64 = 5.0;
/// Exponent of the predictive controller: one over the order of the error estimate plus one.
const PREDICTIVE_EXPONENT: f64 = 0.25;

impl PredictiveController {
    pub(crate) fn new() -> Self {
        Self {
            previous: None,
            after_rejection: false,
        }
    }

    pub(crate) fn reset(&mut self) {
        *self = Self::new();
    }

    fn limited(factor: f64) -> f64 {
        if factor.is_nan() {
            return PREDICTIVE_FACTOR_MAX;
        }
        factor.clamp(PREDICTIVE_FACTOR_MIN, PREDICTIVE_FACTOR_MAX)
    }

    #[inline]
    pub(crate) fn accepted(&mut self, h: f64, err: f64) -> f64 {
        let mut factor = Self::limited(err.powf(PREDICTIVE_EXPONENT) / SAFETY);
        if let Some((h_previous, err_previous)) = self.previous {
            let predicted =
                (h_previous / h) * (err * err / err_previous).powf(PREDICTIVE_EXPONENT) / SAFETY;
            factor = factor.max(Self::limited(predicted));
        }
        self.previous = Some((h, err.max(0.01)));
        let mut h_new = h / factor;
        if self.after_rejection {
            h_new = h_new.min(h);
        }
        self.after_rejection = false;
        h_new
    }

    #[inline]
    pub(crate) fn rejected(&mut self, h: f64, err: f64) -> f64 {
        self.after_rejection = true;
        h / Self::limited(err.powf(PREDICTIVE_EXPONENT) / SAFETY)
    }

    pub(crate) fn failed(&mut self) {
        self.after_rejection = true;
    }
}

/// Beta of the DOP853 controller. Hairer's code uses 0. Measured on Lorenz (10, 28, 8/3) at
/// rtol = atol = 1e-9 over 5000 time units: beta 0 rejects 19 % of the accepted steps with 428
/// evaluations per crossing of z = 27; beta 0.05 rejects 3 % with 413.
const DP853_BETA: f64 = 0.05;

/// Hairer's automatic choice of the first step (function `HINIT` of DOPRI5 / DOP853).
///
/// `f0` is `f(t, x)`; `y1` and `f1` are scratch of the state's length. One evaluation of
/// `rates` is made. `order` is the order of the method, `h_max` the largest allowed step.
/// The result is positive (finite unless `h_max` is infinite and the data are degenerate).
#[allow(clippy::too_many_arguments)]
pub(crate) fn initial_step<R: Rates + ?Sized>(
    rates: &mut R,
    t: f64,
    x: &[f64],
    f0: &[f64],
    y1: &mut [f64],
    f1: &mut [f64],
    order: i32,
    h_max: f64,
    scale: ErrorScale,
) -> f64 {
    let n = x.len();
    let (x, f0, y1, f1) = (&x[..n], &f0[..n], &mut y1[..n], &mut f1[..n]);
    // the norms over the values the error control measures
    let (rtol, atol, controlled) = (scale.rtol, scale.atol, scale.controlled.min(n));
    // a first guess for explicit Euler: h = 0.01 * norm(x) / norm(f0)
    let mut norm_f_sq = 0.0;
    let mut norm_x_sq = 0.0;
    for i in 0..controlled {
        let sk = atol + rtol * x[i].abs();
        norm_f_sq += (f0[i] / sk).powi(2);
        norm_x_sq += (x[i] / sk).powi(2);
    }
    let mut h = if norm_f_sq <= 1e-10 || norm_x_sq <= 1e-10 || !(norm_f_sq * norm_x_sq).is_finite()
    {
        1e-6
    } else {
        (norm_x_sq / norm_f_sq).sqrt() * 0.01
    };
    h = h.min(h_max);
    // one explicit Euler step to estimate the second derivative
    for i in 0..n {
        y1[i] = x[i] + h * f0[i];
    }
    rates.rates(t + h, y1, f1);
    let mut der2_sq = 0.0;
    for i in 0..controlled {
        let sk = atol + rtol * x[i].abs();
        der2_sq += ((f1[i] - f0[i]) / sk).powi(2);
    }
    let der2 = der2_sq.sqrt() / h;
    // h^order * max(norm(f0), norm(der2)) = 0.01; f64::max ignores a NaN operand
    let der12 = der2.abs().max(norm_f_sq.sqrt());
    let h1 = if der12.is_nan() || der12 <= 1e-15 {
        (h * 1e-3).max(1e-6)
    } else {
        (0.01 / der12).powf(1.0 / f64::from(order))
    };
    let h = (100.0 * h).min(h1).min(h_max);
    if h > 0.0 { h } else { 1e-6_f64.min(h_max) }
}
