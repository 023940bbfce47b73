//! The compiled evaluation program: one straight-line instruction list for all outputs.

use super::{CompileError, Names};

/// Working memory of a [`Program`]; one per thread, made by [`Program::scratch`].
#[derive(Clone, Debug, Default)]
pub struct Scratch {
    values: Vec<f64>,
    tangents: Vec<f64>,
}

/// A compiled set of expressions over states, parameters and `t`.
#[derive(Clone, Debug)]
pub struct Program {}

impl Program {
    /// Compiles `sources` (label, text) over `names`. All problems are reported together.
    pub fn compile(names: &Names, sources: &[(String, &str)]) -> Result<Self, CompileError> {
        let _ = (names, sources);
        todo!()
    }
    /// Number of outputs (one per source).
    pub fn n_outputs(&self) -> usize {
        todo!()
    }
    /// Fresh working memory for this program.
    pub fn scratch(&self) -> Scratch {
        Scratch { values: Vec::new(), tangents: Vec::new() }
    }
    /// Evaluates every output at `(t, x)` with parameters `p` into `out`.
    pub fn eval(&self, scratch: &mut Scratch, t: f64, x: &[f64], p: &[f64], out: &mut [f64]) {
        let _ = (scratch, t, x, p, out);
        todo!()
    }
    /// Jacobian of the outputs with respect to the states, row-major.
    pub fn jacobian(&self, scratch: &mut Scratch, t: f64, x: &[f64], p: &[f64], out: &mut [f64]) {
        let _ = (scratch, t, x, p, out);
        todo!()
    }
    /// Derivative of the outputs with respect to parameter `param_idx`.
    pub fn parameter_derivative(
        &self,
        scratch: &mut Scratch,
        t: f64,
        x: &[f64],
        p: &[f64],
        param_idx: usize,
        out: &mut [f64],
    ) {
        let _ = (scratch, t, x, p, param_idx, out);
        todo!()
    }
    /// Whether any output depends on `t`.
    pub fn uses_time(&self) -> bool {
        todo!()
    }
    /// Whether any output depends on a state.
    pub fn uses_states(&self) -> bool {
        todo!()
    }
}
