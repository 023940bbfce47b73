//! When the automatic method changes between DOP853 and Rodas4, and the record of each
//! change.
//!
//! To the stiff method: Hairer's stiffness test of DOP853 (Hairer & Wanner, Solving ODEs II,
//! sec. IV.2, and the DOP853 code): after an accepted step, `h lambda` estimated from the two
//! evaluations at the step's end is compared with 6.1, about the length of DOP853's stability
//! region along the negative real axis. Fifteen positive tests before six negative ones in a
//! row mean that the step size is held down by stability rather than accuracy.
//!
//! Back to the explicit method: the spectral radius `rho` of the Jacobian (estimated by
//! Rodas4 from its Jacobian) times the step size the stiff method proposes stays below a
//! quarter of that limit for fifteen steps in a row: an explicit method could take such
//! steps without being held down by stability.

use super::Method;

/// `h lambda` above which DOP853 is held down by stability (Hairer's limit for DOP853).
const EXPLICIT_STABILITY_LIMIT: f64 = 6.1;
/// Positive tests that make a model stiff (Hairer's count).
const STIFF_COUNT: u32 = 15;
/// Negative tests in a row that clear the positive count (Hairer's count).
const NOT_STIFF_COUNT: u32 = 6;
/// `h rho` below which the stiff method's steps would not hold an explicit method down.
const EASY_LIMIT: f64 = EXPLICIT_STABILITY_LIMIT / 4.0;
/// Easy steps in a row that make the model not stiff any more.
const EASY_COUNT: u32 = 15;

/// Why the automatic method changed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ChangeReason {
    /// The explicit method's step size was held down by stability: the last test measured
    /// `h lambda` (step size times the dominant eigenvalue's magnitude) above the limit.
    StabilityLimited {
        /// `h lambda` of the last positive test.
        h_lambda: f64,
    },
    /// The stiff method's steps would no longer hold an explicit method down: step size
    /// times the Jacobian's spectral radius stayed small.
    NotStiff {
        /// Proposed step size times the estimated spectral radius at the last test.
        h_rho: f64,
    },
}

/// One change of the automatic method.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MethodChange {
    /// Time of the change (the end of the step that decided it).
    pub t: f64,
    /// The method used from then on (DOP853 or Rodas4).
    pub to: Method,
    /// Why.
    pub reason: ChangeReason,
}

impl std::fmt::Display for MethodChange {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.reason {
            ChangeReason::StabilityLimited { h_lambda } => write!(
                f,
                "switched to the stiff method ({}) at t = {}: step size limited by stability (h*lambda = {h_lambda:.2})",
                self.to.name(),
                self.t
            ),
            ChangeReason::NotStiff { h_rho } => write!(
                f,
                "switched back to the explicit method ({}) at t = {}: the model is no longer stiff there (h*rho = {h_rho:.2})",
                self.to.name(),
                self.t
            ),
        }
    }
}

/// The counters of the automatic choice.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub(super) struct StiffnessWatch {
    /// Positive stiffness tests since the count was last cleared.
    n_stiff: u32,
    /// Negative tests in a row.
    n_not_stiff: u32,
    /// Easy steps of the stiff method in a row.
    n_easy: u32,
}

impl StiffnessWatch {
    /// Clears all counts.
    pub(super) fn reset(&mut self) {
        *self = Self::default();
    }

    /// Notes an accepted explicit step with `h lambda`; returns the reason to change to the
    /// stiff method, if it is time.
    pub(super) fn explicit_step(&mut self, h_lambda: f64) -> Option<ChangeReason> {
        if h_lambda > EXPLICIT_STABILITY_LIMIT {
            self.n_not_stiff = 0;
            self.n_stiff += 1;
            if self.n_stiff >= STIFF_COUNT {
                self.reset();
                return Some(ChangeReason::StabilityLimited { h_lambda });
            }
        } else {
            self.n_not_stiff += 1;
            if self.n_not_stiff >= NOT_STIFF_COUNT {
                self.n_stiff = 0;
            }
        }
        None
    }

    /// Notes an accepted stiff step with `h rho` (proposed step size times the spectral
    /// radius); returns the reason to change back, if it is time.
    pub(super) fn stiff_step(&mut self, h_rho: f64) -> Option<ChangeReason> {
        if h_rho < EASY_LIMIT {
            self.n_easy += 1;
            if self.n_easy >= EASY_COUNT {
                self.reset();
                return Some(ChangeReason::NotStiff { h_rho });
            }
        } else {
            self.n_easy = 0;
        }
        None
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fifteen_positive_tests_make_a_model_stiff() {
        let mut watch = StiffnessWatch::default();
        for _ in 0..14 {
            assert_eq!(watch.explicit_step(7.0), None);
            // five negative tests in a row do not clear the count (Hairer's DOP853)
            for _ in 0..5 {
                assert_eq!(watch.explicit_step(1.0), None);
            }
        }
        assert_eq!(
            watch.explicit_step(7.0),
            Some(ChangeReason::StabilityLimited { h_lambda: 7.0 })
        );
    }

    #[test]
    fn six_negative_tests_in_a_row_clear_the_count() {
        let mut watch = StiffnessWatch::default();
        for _ in 0..10 {
            for _ in 0..14 {
                assert_eq!(watch.explicit_step(7.0), None);
            }
            for _ in 0..6 {
                assert_eq!(watch.explicit_step(1.0), None);
            }
        }
    }

    #[test]
    fn fifteen_easy_steps_in_a_row_end_stiffness() {
        let mut watch = StiffnessWatch::default();
        for _ in 0..14 {
            assert_eq!(watch.stiff_step(0.1), None);
        }
        assert_eq!(watch.stiff_step(100.0), None);
        for _ in 0..14 {
            assert_eq!(watch.stiff_step(0.1), None);
        }
        assert_eq!(
            watch.stiff_step(0.2),
            Some(ChangeReason::NotStiff { h_rho: 0.2 })
        );
    }

    #[test]
    fn changes_say_when_and_why() {
        let change = MethodChange {
            t: 12.3,
            to: Method::Rodas4,
            reason: ChangeReason::StabilityLimited { h_lambda: 6.5 },
        };
        assert_eq!(
            change.to_string(),
            "switched to the stiff method (Rodas4) at t = 12.3: step size limited by stability (h*lambda = 6.50)"
        );
    }
}
