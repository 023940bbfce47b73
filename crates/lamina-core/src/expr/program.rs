//! The compiled evaluation program: one straight-line instruction list for all outputs.

use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::{Arc, Mutex, OnceLock};

use super::compile::{Builder, compile_expression};
use super::instr::{Func1, Instr};
use super::kernel::{Compiled, Kernel};
use super::lower::lower;
use super::native::NativeCode;
use super::plan::{Registers, registers};
use super::{CompileError, Names};

/// How many Jacobians a program and its clones take without machine code before it is made
/// (making it costs about as much as a few thousand of them for a small model).
const JACOBIANS_BEFORE_CODE: usize = 256;

/// Working memory of a [`Program`]; one per thread, made by [`Program::scratch`].
#[derive(Clone, Debug, Default)]
pub struct Scratch {
    pub(super) values: Vec<f64>,
    pub(super) tangents: Vec<f64>,
    pub(super) registers: Option<Box<Registers>>,
}

/// A compiled set of expressions over states, parameters and `t`.
///
/// All outputs share one instruction list in which equal subexpressions appear once and
/// constant subexpressions are folded; evaluating allocates nothing and looks up no names.
/// [`Program::eval`] runs the list lowered to compiled expression trees (see
/// [`Program::specialise`] for a faster form with fixed parameters);
/// [`Program::eval_reference`] runs the list itself, the reference the faster forms agree
/// with.
/// Machine code made at most once for a program and all its clones (the program's
/// instructions never change after it is compiled, so every clone can run the same code).
type SharedCode = Arc<OnceLock<Option<Box<NativeCode>>>>;

/// Machine code made at most once per number of vectors `m` (the key) for a program and all its
/// clones; `None` where the host has none. Looked up once per tangent system, not per call.
type SharedDirectional = Arc<Mutex<Vec<(usize, Option<NativeCode>)>>>;

#[derive(Clone, Debug)]
pub struct Program {
    pub(super) instrs: Vec<Instr>,
    pub(super) outputs: Vec<u32>,
    /// The fast form (boxed: it is large, and a program sits in other types).
    fast: Option<Box<Compiled>>,
    /// Machine code, made on first use by [`Program::specialise`] and shared by every clone
    /// (the cell itself is shared, so a clone made before the code was made gets it too).
    native: SharedCode,
    /// Machine code of the Jacobian with respect to the states, made on the first
    /// [`Program::jacobian`] of this program or any clone of it, then shared by all: a regime
    /// map or a sweep clones the model for every cell or value, and making the code again for
    /// each cost more than a cell's exponent.
    native_jacobian: SharedCode,
    /// Jacobians asked of this program and its clones before its machine code was made.
    jacobians_asked: Arc<AtomicUsize>,
    /// Machine code of the outputs with their derivatives along `m` vectors, one per `m`
    /// asked for, made on the first [`Program::directional_kernel`] of this program or any
    /// clone with that `m`, then shared by all (as the Jacobian's code).
    native_directional: SharedDirectional,
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
        Ok(Self::from_graph(
            builder.instrs,
            outputs,
            names.states.len(),
            names.parameters.len(),
        ))
    }

    /// Keeps only the instructions the outputs need, renumbered in order.
    pub(super) fn from_graph(
        instrs: Vec<Instr>,
        outputs: Vec<u32>,
        n_states: usize,
        n_parameters: usize,
    ) -> Self {
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
        let fast = lower(&kept, &outputs, None)
            .and_then(Compiled::new)
            .map(Box::new);
        Self {
            fast,
            native: SharedCode::default(),
            native_jacobian: SharedCode::default(),
            jacobians_asked: Arc::default(),
            native_directional: SharedDirectional::default(),
            instrs: kept,
            outputs,
            n_states,
            n_parameters,
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
            registers: self.fast.as_ref().map(|_| registers()),
        }
    }

    /// This program with the parameter values fixed to `parameters`: the fastest form to
    /// evaluate. It runs the program's machine code (made on the first call, then shared) with
    /// these parameter values; where there is no machine code (see [`Kernel::is_native`]) it is
    /// [`Program::specialise_closures`]. Make a new kernel when a parameter changes (cheap: the
    /// code is not made again). `None` only when neither form can be made (no machine code and
    /// a program too large for the register file: evaluate it with [`Program::eval`] then).
    pub fn specialise(&self, parameters: &[f64]) -> Option<Kernel> {
        match self.native_code() {
            Some(code) => Some(Kernel::native(code, parameters)),
            None => self.specialise_closures(parameters),
        }
    }

    /// This program with the parameter values fixed and folded into constants (with everything
    /// that depends only on them), evaluated by compiled closures that own their registers: the
    /// form used where no machine code can be made, and the one the machine code is measured
    /// against. `None` when the program is too large for the register file.
    pub fn specialise_closures(&self, parameters: &[f64]) -> Option<Kernel> {
        let plan = lower(&self.instrs, &self.outputs, Some(parameters))?;
        Compiled::new(plan).map(Kernel::new)
    }

    /// The program's machine code, made on the first call; `None` if the host has none.
    fn native_code(&self) -> Option<NativeCode> {
        self.made_once(&self.native, NativeCode::compile).cloned()
    }

    /// Whether a Jacobian is still to be taken without machine code: true for the first
    /// [`JACOBIANS_BEFORE_CODE`] asked of this program and its clones.
    #[inline]
    pub(super) fn jacobian_before_code(&self) -> bool {
        self.native_jacobian.get().is_none()
            && self.jacobians_asked.fetch_add(1, Ordering::Relaxed) < JACOBIANS_BEFORE_CODE
    }

    /// The machine code of the Jacobian, made on the first call; `None` if the host has none.
    pub(super) fn native_jacobian_code(&self) -> Option<&NativeCode> {
        self.made_once(&self.native_jacobian, NativeCode::compile_jacobian)
    }

    /// The machine code of the outputs with their derivatives along `m` vectors, made on the
    /// first call for this `m`; `None` if the host has none.
    pub(super) fn native_directional_code(&self, m: usize) -> Option<NativeCode> {
        // a poisoned lock only means a panic elsewhere while it was held: the list is intact
        let mut made = self
            .native_directional
            .lock()
            .unwrap_or_else(std::sync::PoisonError::into_inner);
        if let Some((_, code)) = made.iter().find(|(k, _)| *k == m) {
            return code.clone();
        }
        let code = NativeCode::compile_directional(
            &self.instrs,
            &self.outputs,
            self.n_states,
            self.n_parameters,
            m,
        );
        made.push((m, code.clone()));
        code
    }

    /// The code in `cell`, made by `make` from this program on the first call.
    fn made_once<'a>(
        &self,
        cell: &'a SharedCode,
        make: fn(&[Instr], &[u32], usize, usize) -> Option<NativeCode>,
    ) -> Option<&'a NativeCode> {
        cell.get_or_init(|| {
            make(
                &self.instrs,
                &self.outputs,
                self.n_states,
                self.n_parameters,
            )
            .map(Box::new)
        })
        .as_deref()
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
        match &self.fast {
            Some(fast) => {
                let regs = scratch.registers.get_or_insert_with(registers);
                fast.load_constants(regs);
                fast.eval(regs, t, x, p, out);
            }
            None => self.eval_reference(scratch, t, x, p, out),
        }
    }

    /// Evaluates every output with the straight-line instruction list itself: the reference
    /// that [`Program::eval`] and [`Kernel::eval`] reproduce (bit for bit, as the tests check).
    pub fn eval_reference(
        &self,
        scratch: &mut Scratch,
        t: f64,
        x: &[f64],
        p: &[f64],
        out: &mut [f64],
    ) {
        self.run(scratch, t, x, p);
        for (o, &slot) in out.iter_mut().zip(&self.outputs) {
            *o = scratch.values[slot as usize];
        }
    }

    /// Evaluates the single output of a one-expression program.
    pub fn eval_one(&self, scratch: &mut Scratch, t: f64, x: &[f64], p: &[f64]) -> f64 {
        let mut out = [f64::NAN];
        if self.outputs.is_empty() {
            return f64::NAN;
        }
        self.eval(scratch, t, x, p, &mut out);
        out[0]
    }

    /// Number of operations [`Program::eval`] runs on its fast path (after folding and
    /// fusing products into sums), or `None` when it runs the reference list.
    pub fn n_fast_operations(&self) -> Option<usize> {
        self.fast.as_deref().map(Compiled::n_operations)
    }

    /// Whether any output depends on `t`.
    pub fn uses_time(&self) -> bool {
        self.uses_time
    }

    /// Whether any output depends on a state.
    pub fn uses_states(&self) -> bool {
        self.uses_states
    }

    /// Whether an output can jump as the states change: a `sign`, `step`, `floor`, `ceil` or
    /// `%` of something that depends on a state. Forward-mode derivatives are zero across such
    /// a jump, so derivatives of the flow from the variational equations miss it.
    pub fn jumps_with_states(&self) -> bool {
        let mut depends = vec![false; self.instrs.len()];
        for (idx, instr) in self.instrs.iter().enumerate() {
            let on_state = |slot: u32| depends[slot as usize];
            let (state_dependent, jumps) = match *instr {
                Instr::State(_) => (true, false),
                Instr::F1(Func1::Sign | Func1::Step | Func1::Floor | Func1::Ceil, a) => {
                    (on_state(a), on_state(a))
                }
                Instr::Rem(a, b) => {
                    let d = on_state(a) || on_state(b);
                    (d, d)
                }
                ref other => (other.args().into_iter().any(on_state), false),
            };
            if jumps {
                return true;
            }
            depends[idx] = state_dependent;
        }
        false
    }
}
