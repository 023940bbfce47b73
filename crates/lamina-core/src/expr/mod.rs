//! Typed expressions: parsing with `meval`, compiling a whole system of expressions into one
//! evaluation program with shared subexpressions, compiling it into machine code (or fast
//! closures where there is none),
//! forward-mode derivatives from it (also as machine code along given vectors), and its
//! switching functions.

mod affine;
mod compile;
mod directional;
mod error;
mod functions;
mod fuse;
mod instr;
mod kernel;
mod lower;
mod native;
mod native_calls;
mod native_tangent;
mod nodes;
mod plan;
mod program;
mod switches;
mod tangent;

pub use directional::DirectionalKernel;
pub use error::{CompileError, ExprError, ExprErrorKind};
pub use functions::{CONSTANTS, FUNCTIONS, is_reserved};
pub use kernel::Kernel;
pub use native::MachineCall;
pub use plan::N_REGISTERS;
pub use program::{Program, Scratch};
pub use switches::{Branch, Switch, SwitchKind};

/// The names an expression may use besides functions and constants: states (in order),
/// parameters (in order), and always the time `t`.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Names {
    /// State names in order.
    pub states: Vec<String>,
    /// Parameter names in order.
    pub parameters: Vec<String>,
}
