//! Lowering the instruction graph to a [`Plan`]: after folding and fusing
//! ([`super::fuse`]), values used once are computed inside the tree of their user, and the
//! values used more often get registers by liveness. There are at most 256 registers (`u8`),
//! so a register index never needs a bounds check.

use std::collections::HashMap;

use super::fuse::{Form, arity, fold, fuse};
use super::instr::Instr;
use super::plan::{OpKind, Plan, Tree};

/// Deepest tree of one statement; a deeper value is computed by a statement of its own.
const MAX_DEPTH: u32 = 24;

/// Lowers `instrs` (slots in topological order) with `outputs` to a [`Plan`]; with
/// `parameters`, parameter values are fixed and folded as constants. A value used once is
/// computed inside the tree of its user; a value used more often gets a statement and a
/// register. `None` when the program needs more registers than there are.
pub(super) fn lower(instrs: &[Instr], outputs: &[u32], parameters: Option<&[f64]>) -> Option<Plan> {
    let forms = fuse(instrs, outputs, fold(instrs, parameters));
    let graph = Graph {
        instrs,
        forms: &forms,
    };
    let computed: Vec<usize> = (0..instrs.len()).filter(|&i| graph.computed(i)).collect();

    let mut uses = vec![0u32; instrs.len()];
    for &idx in &computed {
        for a in graph.reads(idx) {
            uses[a as usize] += 1;
        }
    }
    for &o in outputs {
        uses[o as usize] += 1;
    }
    // which computed values get a statement; the depth of the trees of the others
    let mut own = vec![false; instrs.len()];
    let mut depth = vec![0u32; instrs.len()];
    for &idx in &computed {
        let below = graph
            .reads(idx)
            .iter()
            .filter(|&&a| graph.computed(a as usize) && !own[a as usize])
            .map(|&a| depth[a as usize])
            .max()
            .unwrap_or(0);
        depth[idx] = below + 1;
        own[idx] = uses[idx] > 1 || depth[idx] >= MAX_DEPTH;
    }

    // registers of the time, parameters and constants
    let mut alloc = Allocator::default();
    let mut plan = Plan {
        time: None,
        parameters: Vec::new(),
        constants: Vec::new(),
        statements: Vec::new(),
        outputs: Vec::new(),
    };
    let mut reg: Vec<Option<u8>> = vec![None; instrs.len()];
    let mut constants: HashMap<u64, u8> = HashMap::new();
    let leaves = computed
        .iter()
        .flat_map(|&i| graph.reads(i))
        .chain(outputs.iter().copied());
    for slot in leaves {
        let s = slot as usize;
        if reg[s].is_some() {
            continue;
        }
        reg[s] = match (forms[s], instrs[s]) {
            (Form::Constant(v), _) => Some(match constants.get(&v.to_bits()) {
                Some(&r) => r,
                None => {
                    let r = alloc.next()?;
                    constants.insert(v.to_bits(), r);
                    plan.constants.push((r, v));
                    r
                }
            }),
            (Form::Input, Instr::Time) => {
                let r = alloc.next()?;
                plan.time = Some(r);
                Some(r)
            }
            (Form::Input, Instr::Param(i)) => {
                let r = alloc.next()?;
                plan.parameters.push((r, i));
                Some(r)
            }
            _ => None, // states are read in place; computed values are assigned below
        };
    }

    // statements in order, then the outputs; a statement's register is reused once the
    // last tree reading it has run (outputs run last, so what they read stays)
    let statements: Vec<usize> = computed.iter().copied().filter(|&i| own[i]).collect();
    let mut last_use = vec![usize::MAX; instrs.len()];
    for (k, &idx) in statements.iter().enumerate() {
        for s in graph.registers_read(idx, &own) {
            last_use[s as usize] = k;
        }
    }
    for &o in outputs {
        last_use[o as usize] = usize::MAX;
        if !own[o as usize] {
            for s in graph.registers_read(o as usize, &own) {
                last_use[s as usize] = usize::MAX;
            }
        }
    }
    for (k, &idx) in statements.iter().enumerate() {
        let root = graph.tree(idx, &own, &reg)?;
        for s in graph.registers_read(idx, &own) {
            let s = s as usize;
            if last_use[s] == k
                && own[s]
                && let Some(r) = reg[s].take()
            {
                alloc.release(r);
            }
        }
        let dst = alloc.temporary()?;
        reg[idx] = Some(dst);
        plan.statements.push((dst, root));
    }
    for &o in outputs {
        plan.outputs.push(graph.arg(o, &own, &reg)?);
    }
    Some(plan)
}

/// The instruction graph with the form each slot is computed in.
struct Graph<'a> {
    instrs: &'a [Instr],
    forms: &'a [Form],
}

impl Graph<'_> {
    /// Whether slot `idx` is computed by an operation of its own.
    fn computed(&self, idx: usize) -> bool {
        matches!(self.forms[idx], Form::Plain | Form::Fused(..))
    }

    /// The slots the operation of `idx` reads.
    fn reads(&self, idx: usize) -> Vec<u32> {
        match self.forms[idx] {
            Form::Plain => self.instrs[idx].args(),
            Form::Fused(kind, args) => args[..arity(kind)].to_vec(),
            _ => Vec::new(),
        }
    }

    /// The slots held in registers that the tree of `idx` reads.
    fn registers_read(&self, idx: usize, own: &[bool]) -> Vec<u32> {
        let mut out = Vec::new();
        for a in self.reads(idx) {
            let s = a as usize;
            if own[s] || !self.computed(s) {
                out.push(a);
            } else {
                out.extend(self.registers_read(s, own));
            }
        }
        out
    }

    /// The tree computing slot `idx`, with values used once computed inside it.
    fn tree(&self, idx: usize, own: &[bool], reg: &[Option<u8>]) -> Option<Tree> {
        let mut args = Vec::new();
        for a in self.reads(idx) {
            args.push(self.arg(a, own, reg)?);
        }
        Some(Tree::Op(kind(self.forms[idx], self.instrs[idx])?, args))
    }

    /// How slot `s` enters a tree: a state, a register, or its own sub-tree.
    fn arg(&self, slot: u32, own: &[bool], reg: &[Option<u8>]) -> Option<Tree> {
        let s = slot as usize;
        match (self.instrs[s], self.forms[s]) {
            (Instr::State(i), Form::Input) => Some(Tree::State(i)),
            _ if own[s] || !self.computed(s) => reg[s].map(Tree::Reg),
            _ => self.tree(s, own, reg),
        }
    }
}

/// The operation of a computed slot.
fn kind(form: Form, instr: Instr) -> Option<OpKind> {
    if let Form::Fused(kind, _) = form {
        return Some(kind);
    }
    Some(match instr {
        Instr::Neg(_) => OpKind::Neg,
        Instr::Add(..) => OpKind::Add,
        Instr::Sub(..) => OpKind::Sub,
        Instr::Mul(..) => OpKind::Mul,
        Instr::Div(..) => OpKind::Div,
        Instr::Rem(..) => OpKind::Rem,
        Instr::Pow(..) => OpKind::Pow,
        Instr::F2(f, ..) => OpKind::F2(f),
        Instr::PowI(_, 2) => OpKind::Square,
        Instr::PowI(_, 3) => OpKind::Cube,
        Instr::PowI(_, n) => OpKind::PowI(n),
        Instr::F1(f, _) => OpKind::F1(f),
        Instr::Const(_) | Instr::State(_) | Instr::Param(_) | Instr::Time => return None,
    })
}

/// Register numbering: time, parameters and constants first, then statement values,
/// reused from a free list once dead.
#[derive(Default)]
struct Allocator {
    /// The lowest register never handed out.
    next: usize,
    /// Registers whose value is dead.
    free: Vec<u8>,
}

impl Allocator {
    /// A register never used before.
    fn next(&mut self) -> Option<u8> {
        let r = u8::try_from(self.next).ok()?;
        self.next += 1;
        Some(r)
    }

    /// A register for a statement's value.
    fn temporary(&mut self) -> Option<u8> {
        match self.free.pop() {
            Some(r) => Some(r),
            None => self.next(),
        }
    }

    fn release(&mut self, r: u8) {
        self.free.push(r);
    }
}
