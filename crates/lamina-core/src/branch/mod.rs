//! Branches: numerical continuation of a resting point or a periodic orbit in one parameter
//! by pseudo-arclength continuation (H. B. Keller 1977; E. L. Allgower and K. Georg,
//! Introduction to Numerical Continuation Methods), so a branch turns around folds and its
//! unstable parts are followed as well, with the special points where the behaviour changes
//! (fold, Hopf, period doubling, torus birth, branch point) located by roots of test
//! functions (Y. A. Kuznetsov, Elements of Applied Bifurcation Theory, ch. 10).
//!
//! Use: [`follow_rest_branch`] from a resting point ([`crate::rest`]);
//! [`follow_orbit_branch`] from a periodic orbit ([`OrbitStart::from_report`] of a
//! [`crate::cycle::find_cycle`] report); [`orbits_from_hopf`] and [`doubled_orbits`] start
//! the branches born at a Hopf point or a period doubling of a branch already followed. Each
//! reports every point and special point to a [`BranchSink`] as it is computed (for a live
//! picture), stops promptly when the [`crate::Interrupt`] is raised, and returns a plain
//! [`Branch`].
//!
//! A resting point's stability comes from the eigenvalues of its Jacobian; an orbit's from
//! the multipliers of its return map, from the variational equations integrated with the
//! orbit (shooting with as many segments as an unstable orbit needs). The walk itself is
//! generic: a [`problem`] supplies the equations, the walker ([`walk`]) the predictor,
//! Newton's corrector and the step control, [`locate`] the special points.

mod assemble;
mod error;
mod follow;
mod linear;
mod locate;
mod orbit;
mod problem;
mod rest_problem;
mod settings;
mod types;
mod walk;

pub use error::BranchError;
pub use follow::{doubled_orbits, follow_orbit_branch, follow_rest_branch, orbits_from_hopf};
pub use orbit::{OrbitMap, OrbitStart};
pub use settings::BranchSettings;
pub use types::{
    Anchor, Branch, BranchEnd, BranchOf, BranchPoint, BranchRange, BranchSink, BranchStart,
    EndReason, SpecialKind, SpecialPoint, Spectrum,
};
