//! The lowered form of a program: which registers hold the time, parameters and constants, a
//! short list of statements for the values used more than once, and one expression tree per
//! output. States are read in place from the state vector.

use super::instr::{Func1, Func2};

/// Size of the register file; a program needing more registers than this is evaluated by
/// the reference evaluator instead.
pub const N_REGISTERS: usize = 256;

/// The register file. Indexed by `u8`, so no access can fall outside it.
pub type Registers = [f64; N_REGISTERS];

/// A fresh, zeroed register file on the heap.
pub(super) fn registers() -> Box<Registers> {
    Box::new([0.0; N_REGISTERS])
}

/// What a tree node computes from its arguments (in order).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum OpKind {
    Neg,
    Add,
    Sub,
    Mul,
    Div,
    Rem,
    Pow,
    /// `a * a`, what `a^2` computes.
    Square,
    /// `a * (a * a)`, what `a^3` computes.
    Cube,
    PowI(i32),
    F1(Func1),
    F2(Func2),
    /// `a * b + c`
    MulAdd,
    /// `a * b - c`
    MulSub,
    /// `c - a * b`
    NegMulAdd,
    /// `(a + b) * c`
    AddMul,
    /// `(a - b) * c`
    SubMul,
    /// `a * b + c * d`
    MulMulAdd,
    /// `a * b - c * d`
    MulMulSub,
    /// `(a + b) * c + d`
    AddMulAdd,
    /// `(a + b) * c - d`
    AddMulSub,
    /// `d - (a + b) * c`
    NegAddMulAdd,
    /// `(a - b) * c + d`
    SubMulAdd,
    /// `(a - b) * c - d`
    SubMulSub,
    /// `d - (a - b) * c`
    NegSubMulAdd,
}

/// An expression tree over the states and the registers.
#[derive(Clone, Debug, PartialEq)]
pub(super) enum Tree {
    /// A state, read from the state vector in place.
    State(u32),
    /// The value in a register (time, parameter, constant, shared value).
    Reg(u8),
    /// An operation on sub-trees.
    Op(OpKind, Vec<Tree>),
}

/// A lowered program: load the time and parameters, run the statements in order (each
/// writes one register), then compute each output from its tree.
#[derive(Clone, Debug, PartialEq)]
pub(super) struct Plan {
    /// Register of the time, if it is read.
    pub(super) time: Option<u8>,
    /// `(register, parameter index)` loaded on every evaluation (parameters not fixed).
    pub(super) parameters: Vec<(u8, u32)>,
    /// `(register, value)`: constants, loaded once.
    pub(super) constants: Vec<(u8, f64)>,
    /// `(register, tree)`: values used more than once, in order.
    pub(super) statements: Vec<(u8, Tree)>,
    /// The tree of each output.
    pub(super) outputs: Vec<Tree>,
}

impl Plan {
    /// Writes the constants into their registers (statements never overwrite them).
    pub(super) fn load_constants(&self, regs: &mut Registers) {
        for &(r, v) in &self.constants {
            regs[r as usize] = v;
        }
    }

    /// Writes the time and the parameters into their registers.
    #[inline]
    pub(super) fn load_inputs(&self, regs: &mut Registers, t: f64, p: &[f64]) {
        if let Some(r) = self.time {
            regs[r as usize] = t;
        }
        for &(r, idx) in &self.parameters {
            regs[r as usize] = p.get(idx as usize).copied().unwrap_or(f64::NAN);
        }
    }
}
