//! The compiled evaluation program: one straight-line instruction list for all outputs.

use super::compile::{Builder, compile_expression};
use super::instr::Instr;
use super::{CompileError, Names};

/// Working memory of a [`Program`]; one per thread, made by [`Program::scratch`].
#[derive(Clone, Debug, Default)]
pub struct Scratch {
    pub(super) values: Vec<f64>,
    pub(super) tangents: Vec<f64>,
}

/// A compiled set of expressions over states, parameters and `t`.
///
/// All outputs share one instruction list in which equal subexpressions appear once and
/// constant subexpressions are folded; evaluating allocates nothing and looks up no names.
#[derive(Clone, Debug)]
pub struct Program {
    pub(super) instrs: Vec<Instr>,
    pub(super) outputs: Vec<u32>,
    n_states: usize,
    n_parameters: usize,
    uses_time: bool,
    uses_states: bool,
}

impl Program {
    /// Compiles `sources` (label, text) over `names`. All problems of all sources are
    /// reported together, each with its label, the text and the position.
    pub fn compile(names: &Names, sources: &[(String, &str)]) -> Result<Self, CompileError> {
        let mut builder = Builder::default();
        let mut outputs = Vec::with_capacity(sources.len());
        let mut errors = Vec::new();
        for (label, text) in sources {
            match compile_expression(&mut builder, names, label, text) {
                Ok(slot) => outputs.push(slot),
                Err(mut errs) => errors.append(&mut errs),
            }
        }
        if !errors.is_empty() {
            return Err(CompileError { errors });
        }
        Ok(Self::from_graph(builder.instrs, outputs, names))
    }

    /// Keeps only the instructions the outputs need, renumbered in order.
    fn from_graph(instrs: Vec<Instr>, outputs: Vec<u32>, names: &Names) -> Self {
        let mut needed = vec![false; instrs.len()];
        for &o in &outputs {
            needed[o as usize] = true;
        }
        for idx in (0..instrs.len()).rev() {
            if needed[idx] {
                for a in instrs[idx].args() {
                    needed[a as usize] = true;
                }
            }
        }
        let mut map = vec![u32::MAX; instrs.len()];
        let mut kept = Vec::new();
        for (idx, instr) in instrs.iter().enumerate() {
            if needed[idx] {
                map[idx] = kept.len() as u32;
                kept.push(instr.remap(&map));
            }
        }
        let outputs: Vec<u32> = outputs.iter().map(|&o| map[o as usize]).collect();
        let uses_time = kept.iter().any(|i| matches!(i, Instr::Time));
        let uses_states = kept.iter().any(|i| matches!(i, Instr::State(_)));
        Self {
            instrs: kept,
            outputs,
            n_states: names.states.len(),
            n_parameters: names.parameters.len(),
            uses_time,
            uses_states,
        }
    }

    /// Number of outputs (one per source).
    pub fn n_outputs(&self) -> usize {
        self.outputs.len()
    }

    /// Number of instructions after sharing and folding.
    pub fn n_instructions(&self) -> usize {
        self.instrs.len()
    }

    /// Number of states the program reads.
    pub fn n_states(&self) -> usize {
        self.n_states
    }

    /// Number of parameters the program reads.
    pub fn n_parameters(&self) -> usize {
        self.n_parameters
    }

    /// Fresh working memory for this program.
    pub fn scratch(&self) -> Scratch {
        Scratch {
            values: vec![0.0; self.instrs.len()],
            tangents: Vec::new(),
        }
    }

    /// Evaluates every instruction into `scratch` (values only).
    #[inline]
    pub(super) fn run(&self, scratch: &mut Scratch, t: f64, x: &[f64], p: &[f64]) {
        let values = &mut scratch.values;
        if values.len() != self.instrs.len() {
            values.resize(self.instrs.len(), 0.0);
        }
        for idx in 0..self.instrs.len() {
            let v = match self.instrs[idx] {
                Instr::Const(v) => v,
                Instr::State(i) => x[i as usize],
                Instr::Param(i) => p[i as usize],
                Instr::Time => t,
                Instr::Neg(a) => -values[a as usize],
                Instr::Add(a, b) => values[a as usize] + values[b as usize],
                Instr::Sub(a, b) => values[a as usize] - values[b as usize],
                Instr::Mul(a, b) => values[a as usize] * values[b as usize],
                Instr::Div(a, b) => values[a as usize] / values[b as usize],
                Instr::PowI(a, n) => values[a as usize].powi(n),
                Instr::F1(f, a) => f.apply(values[a as usize]),
                ref other @ (Instr::Rem(a, b) | Instr::Pow(a, b) | Instr::F2(_, a, b)) => {
                    other.apply(values[a as usize], values[b as usize])
                }
            };
            values[idx] = v;
        }
    }

    /// Evaluates every output at `(t, x)` with parameters `p` into `out`.
    #[inline]
    pub fn eval(&self, scratch: &mut Scratch, t: f64, x: &[f64], p: &[f64], out: &mut [f64]) {
        self.run(scratch, t, x, p);
        for (o, &slot) in out.iter_mut().zip(&self.outputs) {
            *o = scratch.values[slot as usize];
        }
    }

    /// Evaluates the single output of a one-expression program.
    pub fn eval_one(&self, scratch: &mut Scratch, t: f64, x: &[f64], p: &[f64]) -> f64 {
        self.run(scratch, t, x, p);
        self.outputs
            .first()
            .map_or(f64::NAN, |&slot| scratch.values[slot as usize])
    }

    /// Whether any output depends on `t`.
    pub fn uses_time(&self) -> bool {
        self.uses_time
    }

    /// Whether any output depends on a state.
    pub fn uses_states(&self) -> bool {
        self.uses_states
    }
}
