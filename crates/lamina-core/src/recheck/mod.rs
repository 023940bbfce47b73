//! Recheck: an answer computed a second time at tighter tolerances, and the significant digits
//! on which the two computations agree, with the number that agrees least named.
//!
//! The second computation divides both integrator tolerances by [`TIGHTER_BY`] (and the
//! Newton tolerance of a periodic orbit with them). Where the two agree to D digits, the first
//! answer's error is about `10^-D` of each number; a number the tolerance does not control
//! (a chaotic run's points far from their common start, an exponent limited by its averaging
//! time) shows up as the worst.
//!
//! One function per kind of result runs the second computation and compares:
//! [`cycle`] (a periodic orbit), [`points`] (cut points or strobe samples), [`exponents`]
//! (a Lyapunov spectrum). The comparisons alone, for two results already at hand, are
//! [`compare_cycles`], [`compare_points`] and [`compare_spectra`]; [`significant_digits`] is the
//! measure under all of them.

mod compare;
mod repeat;

use std::fmt;

pub use compare::{HORIZON, compare_cycles, compare_points, compare_spectra};
pub use repeat::{cycle, exponents, points};

use crate::cycle::Number;
use crate::integrate::StepControl;

/// Both tolerances of the second computation are the first's divided by this.
pub const TIGHTER_BY: f64 = 100.0;

/// The tightest relative tolerance a second computation asks for: below about a hundred
/// machine epsilons double precision cannot deliver it and the step size collapses.
pub const TIGHTEST_RTOL: f64 = 100.0 * f64::EPSILON;

/// The most significant digits reported: about what a double carries.
pub const MAX_DIGITS: u32 = 15;

/// The step control of the second computation: `rtol` and `atol` divided by [`TIGHTER_BY`],
/// `rtol` no tighter than [`TIGHTEST_RTOL`]; the step limits as they were.
pub fn tighter(control: &StepControl) -> StepControl {
    StepControl {
        rtol: (control.rtol / TIGHTER_BY).max(TIGHTEST_RTOL.min(control.rtol)),
        atol: control.atol / TIGHTER_BY,
        ..*control
    }
}

/// The significant digits on which `first` and `second` agree, measured against `scale`:
/// `-log10(|first - second| / scale)`, between 0 and [`MAX_DIGITS`] (equal numbers agree in
/// all of them). Two non-finite numbers agree when they are the same (both NaN, or the same
/// infinity); a finite and a non-finite one agree in none.
pub fn significant_digits(first: f64, second: f64, scale: f64) -> f64 {
    let max = f64::from(MAX_DIGITS);
    if !first.is_finite() || !second.is_finite() {
        let same = (first.is_nan() && second.is_nan()) || first == second;
        return if same { max } else { 0.0 };
    }
    let difference = (first - second).abs();
    if difference == 0.0 {
        return max;
    }
    if !(scale.is_finite() && scale > 0.0) {
        return 0.0;
    }
    (-(difference / scale).log10()).clamp(0.0, max)
}

/// The significant digits on which two computations of one number agree, relative to the
/// larger of the two; numbers that are both within `zero_below` of zero (an absolute noise
/// floor, such as the absolute tolerance for a state) count as the same zero.
pub fn digits_of_agreement(first: f64, second: f64, zero_below: f64) -> f64 {
    let scale = first.abs().max(second.abs());
    if first.is_finite() && second.is_finite() && scale <= zero_below {
        return f64::from(MAX_DIGITS);
    }
    significant_digits(first, second, scale)
}

/// One number of a result as the two computations gave it.
#[derive(Clone, Debug, PartialEq)]
pub struct Compared {
    /// What it is, as the output names it (`period`, `x`, `multiplier 2`, `point 7: x`, `l1`).
    pub name: String,
    /// The first computation's value.
    pub first: f64,
    /// The second (tighter) computation's value.
    pub second: f64,
    /// Significant digits on which they agree.
    pub digits: f64,
}

/// How well a result survives being computed again at tighter tolerances.
#[derive(Clone, Debug, PartialEq)]
pub struct Recheck {
    /// Relative tolerance of the second computation.
    pub rtol: f64,
    /// Absolute tolerance of the second computation.
    pub atol: f64,
    /// Significant digits on which the two agree: the fewest of any number compared, rounded
    /// down, 0 to [`MAX_DIGITS`].
    pub digits: u32,
    /// The number that agrees least.
    pub worst: Compared,
    /// How many numbers were compared.
    pub n_compared: usize,
    /// What the comparison covered, where that needs saying (a short horizon of a chaotic
    /// run, exponents limited by their spread, a different number of points).
    pub note: Option<String>,
}

impl fmt::Display for Recheck {
    /// One line: the digits, the tolerances and the worst number with both values.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{} significant digit(s) agree with a second computation at rtol {:.1e}, atol \
             {:.1e}; worst: {} ({} against {})",
            self.digits,
            self.rtol,
            self.atol,
            self.worst.name,
            Number(self.worst.first),
            Number(self.worst.second)
        )
    }
}

/// Why a recheck could not be made.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum RecheckError {
    /// The second computation failed.
    #[error("the second computation (rtol {rtol:e}, atol {atol:e}) failed: {reason}")]
    Failed {
        /// Its relative tolerance.
        rtol: f64,
        /// Its absolute tolerance.
        atol: f64,
        /// What went wrong.
        reason: String,
    },
    /// The interrupt was raised during the second computation.
    #[error("the second computation was cancelled at t = {t}")]
    Cancelled {
        /// Time reached.
        t: f64,
    },
    /// The two computations had no number in common to compare.
    #[error("nothing to compare: {0}")]
    NothingToCompare(String),
}

/// Collects the numbers of a comparison and finds the worst.
#[derive(Clone, Debug, Default)]
struct Comparison {
    numbers: Vec<Compared>,
}

impl Comparison {
    /// Adds a number with its digits already measured.
    fn add(&mut self, name: impl Into<String>, first: f64, second: f64, digits: f64) {
        self.numbers.push(Compared {
            name: name.into(),
            first,
            second,
            digits,
        });
    }

    /// The number that agrees least (the first of equals).
    fn worst(&self) -> Option<&Compared> {
        self.numbers
            .iter()
            .reduce(|worst, c| if c.digits < worst.digits { c } else { worst })
    }

    /// The result, for a second computation at `control`'s tolerances.
    fn finish(self, control: &StepControl, note: Option<String>) -> Result<Recheck, RecheckError> {
        let worst = self
            .worst()
            .cloned()
            .ok_or_else(|| RecheckError::NothingToCompare("no numbers".to_string()))?;
        Ok(Recheck {
            rtol: control.rtol,
            atol: control.atol,
            digits: worst.digits.floor().clamp(0.0, f64::from(MAX_DIGITS)) as u32,
            worst,
            n_compared: self.numbers.len(),
            note,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn digits_count_the_leading_figures_that_agree() {
        // [analytic] 4.567891 against 4.567892: a relative difference of 2.19e-7, 6.66 digits
        let d = digits_of_agreement(4.567891, 4.567892, 0.0);
        assert!((d - 6.66).abs() < 0.01, "{d}");
        // [analytic] equal numbers agree in every digit a double carries
        assert_eq!(digits_of_agreement(1.5, 1.5, 0.0), 15.0);
        // [analytic] opposite signs agree in none
        assert_eq!(digits_of_agreement(1.0, -1.0, 0.0), 0.0);
        // [analytic] two values below the noise floor are the same zero
        assert_eq!(digits_of_agreement(1e-17, -3e-18, 1e-12), 15.0);
        // [analytic] NaN agrees only with NaN
        assert_eq!(digits_of_agreement(f64::NAN, f64::NAN, 0.0), 15.0);
        assert_eq!(digits_of_agreement(f64::NAN, 1.0, 0.0), 0.0);
        // [analytic] measured against a scale: 1e-9 off on a scale of 10 is 10 digits
        assert!((significant_digits(3.0, 3.0 + 1e-9, 10.0) - 10.0).abs() < 1e-6);
    }

    #[test]
    fn tighter_divides_both_tolerances_by_a_hundred() {
        let control = StepControl {
            rtol: 1e-9,
            atol: 1e-12,
            max_step: Some(0.5),
            initial_step: None,
        };
        let tight = tighter(&control);
        // [analytic] divided by 100, the step limit kept
        assert!((tight.rtol - 1e-11).abs() < 1e-25 && (tight.atol - 1e-14).abs() < 1e-28);
        assert_eq!(tight.max_step, Some(0.5));
        // [common practice] never below about 100 machine epsilons
        let tight = tighter(&StepControl {
            rtol: 1e-13,
            ..control
        });
        assert_eq!(tight.rtol, TIGHTEST_RTOL);
    }

    #[test]
    fn the_worst_number_is_named() {
        let mut comparison = Comparison::default();
        comparison.add("period", 1.0, 1.0, 12.3);
        comparison.add("x", 2.0, 2.0001, 4.3);
        comparison.add("y", 3.0, 3.0, 15.0);
        let recheck = comparison
            .finish(&StepControl::default(), None)
            .expect("numbers");
        assert_eq!(recheck.digits, 4);
        assert_eq!(recheck.worst.name, "x");
        assert_eq!(recheck.n_compared, 3);
        assert!(recheck.to_string().contains("worst: x (2 against 2.0001)"));
    }
}
