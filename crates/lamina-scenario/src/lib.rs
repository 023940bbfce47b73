//! Lamina scenario files, format 2 (RON); format 1 files are read too.
//!
//! **Boundary:** this crate is the only place that knows the file format. Its serde types
//! ([`Scenario`] and the blocks in it) mirror the file field for field; [`load_str`],
//! [`load_bytes`] and [`load_file`] read them with located errors (a format-1 file through the
//! mapping of its old words), in time and memory in proportion to the text whatever it holds;
//! [`Scenario::check`] finds every problem that makes a scenario unrunnable or meaningless,
//! with its field path and location; the `*_spec` methods convert a scenario into the core's
//! plain specifications; [`save_file`] writes atomically.

mod check;
mod compile;
mod convert;
mod error;
mod format1;
mod load;
mod number;
mod save;
mod scenario;
mod source;
mod syntax;

pub use check::{is_colour, is_identifier};
pub use compile::Compiled;
pub use convert::{MapAxisSpec, RegimeMapSpec, ViewAxis};
pub use error::{Problem, ScenarioError, Severity};
pub use load::{load_bytes, load_file, load_str};
pub use save::{save_file, to_ron_string};
pub use scenario::{
    Camera, Colours, Cut, Direction, FORMAT, Integrator, Limits, MapAxis, MethodChoice,
    OLDEST_FORMAT, Parameter, RegimeMap, Scenario, State, Strobe, Surface, Sweep, SweepSource,
    Time, View, Weights,
};
pub use source::Location;
