//! The closure evaluator, a [`Plan`] whose trees are compiled into closures, and the
//! [`Kernel`], a program with fixed parameter values: machine code or closures.

use super::native::{MachineCall, NativeCode};
use super::nodes::{Node, Root, compile};
use super::plan::{Plan, Registers, Tree, registers};

/// A plan with its trees compiled.
pub(super) struct Compiled {
    plan: Plan,
    /// `(register, tree)` of the values used more than once.
    statements: Vec<(u8, Node)>,
    /// `(output index, tree)` of the computed outputs.
    computed: Vec<(usize, Node)>,
    /// `(output index, state index)` of the outputs that are states.
    states: Vec<(usize, u32)>,
    /// `(output index, register)` of the outputs held in registers.
    held: Vec<(usize, u8)>,
    /// Whether `computed` is every output, in order.
    in_order: bool,
    n_operations: usize,
}

impl Compiled {
    /// Compiles the trees of `plan`; `None` if one is malformed.
    pub(super) fn new(plan: Plan) -> Option<Self> {
        let mut compiled = Self {
            statements: Vec::with_capacity(plan.statements.len()),
            computed: Vec::new(),
            states: Vec::new(),
            held: Vec::new(),
            in_order: false,
            n_operations: 0,
            plan: Plan {
                time: None,
                parameters: Vec::new(),
                constants: Vec::new(),
                statements: Vec::new(),
                outputs: Vec::new(),
            },
        };
        for (dst, root) in &plan.statements {
            let Root::Node(node) = compile(root)? else {
                return None;
            };
            compiled.statements.push((*dst, node));
            compiled.n_operations += count_operations(root);
        }
        for (idx, root) in plan.outputs.iter().enumerate() {
            match compile(root)? {
                Root::Node(node) => compiled.computed.push((idx, node)),
                Root::State(i) => compiled.states.push((idx, i)),
                Root::Reg(k) => compiled.held.push((idx, k)),
            }
            compiled.n_operations += count_operations(root);
        }
        compiled.in_order = compiled.states.is_empty()
            && compiled.held.is_empty()
            && compiled
                .computed
                .iter()
                .enumerate()
                .all(|(k, (idx, _))| k == *idx);
        compiled.plan = plan;
        Some(compiled)
    }

    /// Writes the constants into `regs`.
    pub(super) fn load_constants(&self, regs: &mut Registers) {
        self.plan.load_constants(regs);
    }

    /// Evaluates every output into `out`; the constants must be in `regs` already.
    #[inline(always)]
    pub(super) fn eval(&self, regs: &mut Registers, t: f64, x: &[f64], p: &[f64], out: &mut [f64]) {
        self.plan.load_inputs(regs, t, p);
        for (dst, node) in &self.statements {
            let v = node(x, regs);
            regs[*dst as usize] = v;
        }
        if self.in_order {
            // every output computed, in order (the usual case): no index to check
            for (o, (_, node)) in out.iter_mut().zip(&self.computed) {
                *o = node(x, regs);
            }
            return;
        }
        for (idx, node) in &self.computed {
            if let Some(o) = out.get_mut(*idx) {
                *o = node(x, regs);
            }
        }
        for &(idx, i) in &self.states {
            if let Some(o) = out.get_mut(idx) {
                *o = x.get(i as usize).copied().unwrap_or(f64::NAN);
            }
        }
        for &(idx, k) in &self.held {
            if let Some(o) = out.get_mut(idx) {
                *o = regs[k as usize];
            }
        }
    }

    /// Operations per evaluation.
    pub(super) fn n_operations(&self) -> usize {
        self.n_operations
    }
}

impl Clone for Compiled {
    /// Compiles the plan again (closures are not `Clone`); it compiled before, so it does
    /// again, and a kernel that somehow did not would evaluate nothing rather than panic.
    fn clone(&self) -> Self {
        Self::new(self.plan.clone()).unwrap_or_else(|| Self {
            plan: self.plan.clone(),
            statements: Vec::new(),
            computed: Vec::new(),
            states: Vec::new(),
            held: Vec::new(),
            in_order: false,
            n_operations: 0,
        })
    }
}

impl std::fmt::Debug for Compiled {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Compiled")
            .field("plan", &self.plan)
            .finish_non_exhaustive()
    }
}

fn count_operations(tree: &Tree) -> usize {
    match tree {
        Tree::State(_) | Tree::Reg(_) => 0,
        Tree::Op(_, args) => 1 + args.iter().map(count_operations).sum::<usize>(),
    }
}

/// A program with its parameter values fixed, made by
/// [`Program::specialise`](super::Program::specialise): the program's machine code with the
/// parameter values it reads, or (where there is no machine code, or when asked for by
/// [`Program::specialise_closures`](super::Program::specialise_closures)) compiled closures in
/// which the parameters and everything that depends only on them are folded into constants.
/// The fastest way to evaluate a program; it owns what it needs, so it needs no
/// [`Scratch`](super::Scratch).
#[derive(Clone, Debug)]
pub struct Kernel {
    form: Form,
}

#[derive(Clone, Debug)]
enum Form {
    /// Machine code (its memory shared between the kernels of one program) and the parameter
    /// values.
    Native {
        code: NativeCode,
        parameters: Box<[f64]>,
    },
    /// Closures over their own registers.
    Closures {
        compiled: Compiled,
        registers: Box<Registers>,
    },
}

impl Kernel {
    /// A kernel of `compiled`, whose parameters are all fixed.
    pub(super) fn new(compiled: Compiled) -> Self {
        let mut registers = registers();
        compiled.load_constants(&mut registers);
        Self {
            form: Form::Closures {
                compiled,
                registers,
            },
        }
    }

    /// A kernel running `code` with `parameters`.
    pub(super) fn native(code: NativeCode, parameters: &[f64]) -> Self {
        Self {
            form: Form::Native {
                code,
                parameters: parameters.into(),
            },
        }
    }

    /// Evaluates every output at `(t, x)` into `out` (NaN in every output when `x` or `out` is
    /// shorter than the program needs).
    #[inline(always)]
    pub fn eval(&mut self, t: f64, x: &[f64], out: &mut [f64]) {
        match &mut self.form {
            Form::Native { code, parameters } => {
                if !code.eval(t, x, parameters, out) {
                    out.fill(f64::NAN);
                }
            }
            Form::Closures {
                compiled,
                registers,
            } => compiled.eval(registers, t, x, &[], out),
        }
    }

    /// The kernel's machine code with its parameter values as one call, looked up once for
    /// many evaluations; `None` for closures.
    pub fn machine_call(&self) -> Option<MachineCall<'_>> {
        match &self.form {
            Form::Native { code, parameters } => code.call_with(parameters),
            Form::Closures { .. } => None,
        }
    }

    /// Whether this kernel runs machine code (rather than closures).
    pub fn is_native(&self) -> bool {
        matches!(self.form, Form::Native { .. })
    }

    /// Operations per evaluation of the closures (after folding and fusing), or `None` for
    /// machine code.
    pub fn n_operations(&self) -> Option<usize> {
        match &self.form {
            Form::Native { .. } => None,
            Form::Closures { compiled, .. } => Some(compiled.n_operations()),
        }
    }
}
