//! The stage storage and steps of the chosen Runge–Kutta pair, behind one enum.

use super::dop853::{self, Dop853};
use super::dp5::{self, Dp5};
use super::{Method, Rates, StepControl};

/// The stage storage of the chosen method (enum dispatch, no allocation per step).
// one per integrator, so the size difference of the variants does not matter
#[allow(clippy::large_enum_variant)]
#[derive(Clone, Debug)]
pub(super) enum Stepper {
    Dp5(Dp5),
    Dp853(Dop853),
}

impl Stepper {
    pub(super) fn new(method: Method, dim: usize) -> Self {
        match method {
            Method::Dp5 => Self::Dp5(Dp5::new(dim)),
            Method::Dp853 => Self::Dp853(Dop853::new(dim)),
        }
    }

    pub(super) fn n_terms(method: Method) -> usize {
        match method {
            Method::Dp5 => dp5::N_TERMS,
            Method::Dp853 => dop853::N_TERMS,
        }
    }

    pub(super) fn order(&self) -> i32 {
        match self {
            Self::Dp5(_) => dp5::ORDER,
            Self::Dp853(_) => dop853::ORDER,
        }
    }

    pub(super) fn f0(&self) -> &[f64] {
        match self {
            Self::Dp5(s) => s.f0(),
            Self::Dp853(s) => s.f0(),
        }
    }

    pub(super) fn f0_mut(&mut self) -> &mut [f64] {
        match self {
            Self::Dp5(s) => s.f0_mut(),
            Self::Dp853(s) => s.f0_mut(),
        }
    }

    /// `f0` with two scratch vectors, for the automatic initial step.
    pub(super) fn f0_and_scratch(&mut self) -> (&[f64], &mut [f64], &mut [f64]) {
        match self {
            Self::Dp5(s) => s.f0_and_scratch(),
            Self::Dp853(s) => s.f0_and_scratch(),
        }
    }

    pub(super) fn x_new(&self) -> &[f64] {
        match self {
            Self::Dp5(s) => s.x_new(),
            Self::Dp853(s) => s.x_new(),
        }
    }

    pub(super) fn dense_mut(&mut self) -> &mut Vec<f64> {
        match self {
            Self::Dp5(s) => s.dense_mut(),
            Self::Dp853(s) => s.dense_mut(),
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
        control: &StepControl,
        n_rates: &mut u64,
    ) -> f64 {
        let (rtol, atol) = (control.rtol, control.atol);
        match self {
            Self::Dp5(s) => s.attempt(rates, t, x, h, rtol, atol, n_rates),
            Self::Dp853(s) => s.attempt(rates, t, x, h, rtol, atol, n_rates),
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
        n_rates: &mut u64,
        dense: bool,
    ) -> bool {
        match self {
            Self::Dp5(s) => s.finish(x, h, dense),
            Self::Dp853(s) => s.finish(rates, t, x, h, n_rates, dense),
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
        n_rates: &mut u64,
        coeffs: &mut [f64],
    ) -> bool {
        match self {
            Self::Dp5(s) => s.build_dense(start, h, coeffs),
            Self::Dp853(s) => s.build_dense(rates, t, start, h, n_rates, coeffs),
        }
    }
}
