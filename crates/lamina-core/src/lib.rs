//! Lamina's numerical core: typed model equations compiled into an evaluation program,
//! adaptive integrators with dense output (explicit Runge–Kutta pairs, the Rosenbrock method
//! Rodas4 for stiff models and the automatic choice between them), the location of the
//! switches of piecewise-smooth models, the cut (Poincaré section) and strobe (time-T map)
//! drivers built on them, parameter sweeps, periodic orbits found by Newton's method on the
//! cut or strobe map with their Floquet multipliers, Lyapunov exponents, resting points with
//! their eigenvalues, and branches of resting points and orbits in one parameter with the
//! points where the behaviour changes, and regime maps over two parameters.
//!
//! **Invariant:** this crate does no I/O, starts no threads, never reads the clock and knows
//! nothing of serde or egui. Cancellation comes in as an [`Interrupt`] flag, progress goes out
//! through a [`run::Sink`].

pub mod branch;
pub mod cycle;
pub mod expr;
pub mod integrate;
pub mod lyapunov;
pub mod memory;
pub mod model;
pub mod recheck;
pub mod recurrence;
pub mod regime_map;
pub mod rest;
pub mod run;
pub mod sweep;
pub mod switching;

pub use integrate::Interrupt;
