//! The stored run: accepted steps with their dense output, for re-slicing without
//! integrating again.

/// Accepted steps of a run with their dense-output coefficients.
#[derive(Clone, Debug, Default)]
pub struct StoredRun {}
