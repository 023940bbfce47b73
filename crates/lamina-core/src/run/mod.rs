//! Runs: integrate a model over its time window and report cut points and strobe samples
//! to a [`Sink`], keeping the accepted steps so a moved cut can be re-sliced later.

mod cut;
mod driver;
pub(crate) mod graze;
mod level_plane;
mod plane_scan;
pub(crate) mod root;
mod spec;
mod stored;
mod strobe;
mod tangent;
mod time_resolution;

pub use cut::{Cut, CutPoint, Direction, Surface};
pub(crate) use driver::stop_reason;
pub use driver::{Collect, Run, RunOutcome, Sink, Size, StopReason, run_once};
pub use spec::{CutSpec, RunSpec, SpecError, StrobeSpec, SurfaceSpec};
pub use stored::StoredRun;
pub use strobe::{Strobe, StrobeSample};
pub use time_resolution::{
    TimeResolution, WindowPart, check_time_resolution, smallest_step_at, step_lost_to_time,
    time_spacing,
};
