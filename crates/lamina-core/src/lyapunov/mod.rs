//! Lyapunov exponents: the largest one or the whole Lyapunov spectrum, by integrating the
//! variational equations with QR re-orthonormalisation (Benettin's method), with a running
//! estimate for a convergence plot, its spread as an error indication, the Kaplan–Yorke
//! dimension and a plain verdict.
//!
//! Start with [`spectrum`]: it takes a compiled model, the run window and
//! [`ExponentSettings`], reports running estimates and progress to an [`ExponentSink`] and
//! returns a [`Spectrum`].

mod chatter;
mod driver;
mod largest;
mod qr;
mod result;
mod sampling;
mod settings;
mod summary;
mod tangent;

pub use driver::{spectrum, workspace_bytes};
pub use largest::LargestExponent;
pub(crate) use largest::OneVector;
pub use result::{ExponentSink, Spectrum};
pub use settings::{ExponentError, ExponentSettings};
pub use summary::{
    Trace, Verdict, admits_chaos, classify, kaplan_yorke, settled_spectrum, zero_band,
};
pub(crate) use tangent::Tangent;
