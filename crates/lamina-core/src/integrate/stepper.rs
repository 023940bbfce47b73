//! The stage storage and steps of the method in use, behind one enum.

use super::dop853::{self, Dop853};
use super::dp5::{self, Dp5};
use super::rodas::{self, Rodas};
use super::{DirectRates, ErrorScale, Method, Rates, Stats};

/// The stage storage of one method (enum dispatch, no allocation per step).
// one or two per integrator, so the size difference of the variants does not matter
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Debug)]
pub(super) enum Stepper {
    Dp5(Dp5),
    Dp853(Dop853),
    Rodas(Rodas),
}

impl Stepper {
    /// The stepper that `method` starts with (`Automatic` starts with DOP853, measuring
    /// stiffness), writing `n_terms` interpolation terms (see [`Stepper::n_terms`]).
    pub(super) fn new(method: Method, dim: usize) -> Self {
        match method {
            Method::Dp5 => Self::Dp5(Dp5::new(dim)),
            Method::Dp853 => Self::Dp853(Dop853::new(dim)),
            Method::Rodas4 => Self::Rodas(Rodas::new(dim, rodas::N_TERMS)),
            Method::Automatic => {
                let mut explicit = Dop853::new(dim);
                explicit.measure_stiffness();
                Self::Dp853(explicit)
            }
        }
    }

    /// The stiff stepper that `Automatic` changes to, writing as many terms as DOP853.
    pub(super) fn stiff_partner(dim: usize) -> Self {
        Self::Rodas(Rodas::new(dim, dop853::N_TERMS))
    }

    /// Interpolation terms per step of a run with `method`: with `Automatic` every step has
    /// DOP853's eight (Rodas4's four padded with zero terms), so that stored runs keep one
    /// layout.
    pub(super) fn n_terms(method: Method) -> usize {
        match method {
            Method::Dp5 => dp5::N_TERMS,
            Method::Dp853 | Method::Automatic => dop853::N_TERMS,
            Method::Rodas4 => rodas::N_TERMS,
        }
    }

    /// Bytes that the steppers of `method` hold for a system of `dim` states whose stiff
    /// method works with `matrix_size x matrix_size` matrices (`dim`, or the model's `n` for
    /// variational equations).
    pub(super) fn bytes(method: Method, dim: usize, matrix_size: usize) -> u64 {
        let n_terms = Self::n_terms(method);
        let (vectors, stiff) = match method {
            Method::Dp5 => (dp5::VECTORS + n_terms, false),
            Method::Dp853 => (dop853::VECTORS + n_terms, false),
            Method::Rodas4 => (rodas::VECTORS + n_terms, true),
            Method::Automatic => (dop853::VECTORS + rodas::VECTORS + 2 * n_terms, true),
        };
        let matrices = if stiff {
            Rodas::matrix_bytes(dim, matrix_size)
        } else {
            0
        };
        (vectors as u64) * (dim as u64) * 8 + matrices
    }

    /// The method this stepper runs.
    pub(super) fn method(&self) -> Method {
        match self {
            Self::Dp5(_) => Method::Dp5,
            Self::Dp853(_) => Method::Dp853,
            Self::Rodas(_) => Method::Rodas4,
        }
    }

    pub(super) fn order(&self) -> i32 {
        match self {
            Self::Dp5(_) => dp5::ORDER,
            Self::Dp853(_) => dop853::ORDER,
            Self::Rodas(_) => rodas::ORDER,
        }
    }

    pub(super) fn f0(&self) -> &[f64] {
        match self {
            Self::Dp5(s) => s.f0(),
            Self::Dp853(s) => s.f0(),
            Self::Rodas(s) => s.f0(),
        }
    }

    pub(super) fn f0_mut(&mut self) -> &mut [f64] {
        match self {
            Self::Dp5(s) => s.f0_mut(),
            Self::Dp853(s) => s.f0_mut(),
            Self::Rodas(s) => s.f0_mut(),
        }
    }

    /// `f0` with two scratch vectors, for the automatic initial step.
    pub(super) fn f0_and_scratch(&mut self) -> (&[f64], &mut [f64], &mut [f64]) {
        match self {
            Self::Dp5(s) => s.f0_and_scratch(),
            Self::Dp853(s) => s.f0_and_scratch(),
            Self::Rodas(s) => s.f0_and_scratch(),
        }
    }

    pub(super) fn x_new(&self) -> &[f64] {
        match self {
            Self::Dp5(s) => s.x_new(),
            Self::Dp853(s) => s.x_new(),
            Self::Rodas(s) => s.x_new(),
        }
    }

    pub(super) fn dense_mut(&mut self) -> &mut Vec<f64> {
        match self {
            Self::Dp5(s) => s.dense_mut(),
            Self::Dp853(s) => s.dense_mut(),
            Self::Rodas(s) => s.dense_mut(),
        }
    }

    /// Goes back to the start of the step completed last (its `f` becomes current again).
    pub(super) fn rewind(&mut self) {
        match self {
            Self::Dp5(s) => s.rewind(),
            Self::Dp853(s) => s.rewind(),
            Self::Rodas(s) => s.rewind(),
        }
    }

    /// Forgets what depends on the rates at the current state beyond `f0` (the Jacobian).
    pub(super) fn rates_changed(&mut self) {
        if let Self::Rodas(s) = self {
            s.invalidate_jacobian();
        }
    }

    /// The error estimate of the last interpolant built, in tolerances: above 1 when the
    /// stiff method's interpolant of a long stiff step does not resolve the solution (0 for
    /// the explicit methods, whose interpolants are as accurate as their steps).
    pub(super) fn dense_error(&self) -> f64 {
        match self {
            Self::Rodas(s) => s.dense_error(),
            _ => 0.0,
        }
    }

    /// The stiffness measure of the last accepted step: `h lambda` of Hairer's test for
    /// DOP853 (when measured), the estimated spectral radius of the Jacobian for Rodas4.
    pub(super) fn stiffness_measure(&self) -> f64 {
        match self {
            Self::Dp5(_) => 0.0,
            Self::Dp853(s) => s.h_lambda(),
            Self::Rodas(s) => s.spectral_radius(),
        }
    }

    /// One attempt; returns the scaled error (NaN if something is not finite).
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub(super) fn attempt<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        scale: ErrorScale,
        stats: &mut Stats,
    ) -> f64 {
        // the explicit pairs only evaluate the rates: where those are one call of machine
        // code, their stages make it directly instead of looking it up again for each
        let n = &mut stats.n_rate_evaluations;
        match self {
            Self::Dp5(s) => match rates.machine_call() {
                Some(call) => s.attempt(&mut DirectRates::new(call, x), t, x, h, scale, n),
                None => s.attempt(rates, t, x, h, scale, n),
            },
            Self::Dp853(s) => match rates.machine_call() {
                Some(call) => s.attempt(&mut DirectRates::new(call, x), t, x, h, scale, n),
                None => s.attempt(rates, t, x, h, scale, n),
            },
            Self::Rodas(s) => s.attempt(rates, t, x, h, scale, stats),
        }
    }

    /// Completes an accepted attempt (first same as last, and with `dense` the dense
    /// output); false if not finite.
    #[inline]
    pub(super) fn finish<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        x: &[f64],
        h: f64,
        stats: &mut Stats,
        dense: bool,
    ) -> bool {
        match self {
            Self::Dp5(s) => s.finish(x, h, dense),
            Self::Dp853(s) => s.finish(rates, t, x, h, &mut stats.n_rate_evaluations, dense),
            Self::Rodas(s) => s.finish(rates, t, x, h, stats, dense),
        }
    }

    /// The dense output of the step completed last without it (from `t`, size `h`, start
    /// state `start`) into `coeffs`; false if not finite.
    #[allow(clippy::too_many_arguments)]
    pub(super) fn build_dense<R: Rates + ?Sized>(
        &mut self,
        rates: &mut R,
        t: f64,
        start: &[f64],
        h: f64,
        stats: &mut Stats,
        coeffs: &mut [f64],
    ) -> bool {
        match self {
            Self::Dp5(s) => s.build_dense(start, h, coeffs),
            Self::Dp853(s) => {
                s.build_dense(rates, t, start, h, &mut stats.n_rate_evaluations, coeffs)
            }
            Self::Rodas(s) => s.build_dense(rates, t, start, h, stats, coeffs),
        }
    }
}
