//! Folding and fusing the instruction graph before it is lowered: constants (and parameters
//! whose values are fixed) are folded, and a product or sum is fused into its only user, so
//! that `a*b + c`, `(a - b)*c` or `x*y - b*z` is one operation.

use super::instr::Instr;
use super::plan::OpKind;

/// How an instruction of the graph is computed.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(super) enum Form {
    /// A value known while lowering.
    Constant(f64),
    /// An input read from its register (state, time, parameter).
    Input,
    /// Computed by its own operation.
    Plain,
    /// A product or sum done inside the operation of its only user.
    Absorbed,
    /// Computed together with the arguments it absorbed (`a*b + c` and the like): the
    /// operation and its arguments (three or four, see [`arity`]).
    Fused(OpKind, [u32; 4]),
}

/// Number of arguments of a fused operation.
pub(super) fn arity(kind: OpKind) -> usize {
    match kind {
        OpKind::MulMulAdd
        | OpKind::MulMulSub
        | OpKind::AddMulAdd
        | OpKind::AddMulSub
        | OpKind::NegAddMulAdd
        | OpKind::SubMulAdd
        | OpKind::SubMulSub
        | OpKind::NegSubMulAdd => 4,
        _ => 3,
    }
}

/// Constants (with fixed parameters) folded through the graph; inputs and the rest plain.
pub(super) fn fold(instrs: &[Instr], parameters: Option<&[f64]>) -> Vec<Form> {
    let mut forms: Vec<Form> = Vec::with_capacity(instrs.len());
    for instr in instrs {
        let form = match (*instr, parameters) {
            (Instr::Const(v), _) => Form::Constant(v),
            (Instr::Param(i), Some(p)) => {
                Form::Constant(p.get(i as usize).copied().unwrap_or(f64::NAN))
            }
            (Instr::State(_) | Instr::Param(_) | Instr::Time, _) => Form::Input,
            _ => {
                let mut values = [0.0; 2];
                let mut all_constant = true;
                for (value, arg) in values.iter_mut().zip(instr.args()) {
                    match forms[arg as usize] {
                        Form::Constant(v) => *value = v,
                        _ => all_constant = false,
                    }
                }
                if all_constant {
                    // the same arithmetic the reference evaluator does at run time
                    Form::Constant(instr.apply(values[0], values[1]))
                } else {
                    Form::Plain
                }
            }
        };
        forms.push(form);
    }
    forms
}

/// Fuses products and sums into their only user: `a*b ± c`, `c - a*b`, `(a ± b)*c`, and on
/// inputs and constants alone also `a*b ± c*d`, `(a ± b)*c ± d` and `d - (a ± b)*c`.
pub(super) fn fuse(instrs: &[Instr], outputs: &[u32], mut forms: Vec<Form>) -> Vec<Form> {
    let mut uses = vec![0u32; instrs.len()];
    for (idx, instr) in instrs.iter().enumerate() {
        if forms[idx] == Form::Plain {
            for a in instr.args() {
                uses[a as usize] += 1;
            }
        }
    }
    for &o in outputs {
        uses[o as usize] += 1;
    }
    for idx in 0..instrs.len() {
        if forms[idx] != Form::Plain {
            continue;
        }
        let fusion = {
            let f = Fusion {
                instrs,
                forms: &forms,
                uses: &uses,
            };
            match instrs[idx] {
                Instr::Add(a, b) => f.sum(a, b, false),
                Instr::Sub(a, b) => f.sum(a, b, true),
                Instr::Mul(a, b) => f
                    .sum_factor(a)
                    .map(|(kind, p, q)| (kind, [a, a], [p, q, b, 0]))
                    .or_else(|| {
                        f.sum_factor(b)
                            .map(|(kind, p, q)| (kind, [b, b], [p, q, a, 0]))
                    }),
                _ => None,
            }
        };
        if let Some((kind, absorbed, args)) = fusion {
            for child in absorbed {
                forms[child as usize] = Form::Absorbed;
            }
            forms[idx] = Form::Fused(kind, args);
        }
    }
    forms
}

/// What the fusion of one instruction may absorb.
struct Fusion<'a> {
    instrs: &'a [Instr],
    forms: &'a [Form],
    uses: &'a [u32],
}

/// A fusion: the operation, the one or two absorbed slots, the arguments.
type Fused = (OpKind, [u32; 2], [u32; 4]);

impl Fusion<'_> {
    fn single(&self, s: u32) -> bool {
        self.uses[s as usize] == 1 && self.forms[s as usize] == Form::Plain
    }

    fn leaf(&self, s: u32) -> bool {
        matches!(self.forms[s as usize], Form::Constant(_) | Form::Input)
    }

    /// `p * q` used only here (a square counts as `p * p`).
    fn product(&self, s: u32) -> Option<(u32, u32)> {
        match self.instrs[s as usize] {
            Instr::Mul(p, q) if self.single(s) => Some((p, q)),
            Instr::PowI(p, 2) if self.single(s) => Some((p, p)),
            _ => None,
        }
    }

    fn leaf_product(&self, s: u32) -> Option<(u32, u32)> {
        self.product(s)
            .filter(|&(p, q)| self.leaf(p) && self.leaf(q))
    }

    /// `p ± q` used only here, as the factor of a product.
    fn sum_factor(&self, s: u32) -> Option<(OpKind, u32, u32)> {
        match self.instrs[s as usize] {
            Instr::Add(p, q) if self.single(s) => Some((OpKind::AddMul, p, q)),
            Instr::Sub(p, q) if self.single(s) => Some((OpKind::SubMul, p, q)),
            _ => None,
        }
    }

    /// `(p ± q) * r` on leaves, already fused and used only here.
    fn leaf_sum_product(&self, s: u32) -> Option<(OpKind, [u32; 3])> {
        match self.forms[s as usize] {
            Form::Fused(kind @ (OpKind::AddMul | OpKind::SubMul), [p, q, r, _])
                if self.uses[s as usize] == 1 && [p, q, r].iter().all(|&a| self.leaf(a)) =>
            {
                Some((kind, [p, q, r]))
            }
            _ => None,
        }
    }

    /// The fusion of `a + b` (or `a - b` with `minus`).
    fn sum(&self, a: u32, b: u32, minus: bool) -> Option<Fused> {
        if let (Some((p, q)), Some((r, s))) = (self.leaf_product(a), self.leaf_product(b)) {
            let kind = if minus {
                OpKind::MulMulSub
            } else {
                OpKind::MulMulAdd
            };
            return Some((kind, [a, b], [p, q, r, s]));
        }
        if self.leaf(b)
            && let Some((factor, [p, q, r])) = self.leaf_sum_product(a)
        {
            let kind = match (factor, minus) {
                (OpKind::AddMul, false) => OpKind::AddMulAdd,
                (OpKind::AddMul, true) => OpKind::AddMulSub,
                (_, false) => OpKind::SubMulAdd,
                (_, true) => OpKind::SubMulSub,
            };
            return Some((kind, [a, a], [p, q, r, b]));
        }
        if self.leaf(a)
            && let Some((factor, [p, q, r])) = self.leaf_sum_product(b)
        {
            let kind = match (factor, minus) {
                (OpKind::AddMul, false) => OpKind::AddMulAdd,
                (OpKind::AddMul, true) => OpKind::NegAddMulAdd,
                (_, false) => OpKind::SubMulAdd,
                (_, true) => OpKind::NegSubMulAdd,
            };
            return Some((kind, [b, b], [p, q, r, a]));
        }
        if let Some((p, q)) = self.product(a) {
            let kind = if minus {
                OpKind::MulSub
            } else {
                OpKind::MulAdd
            };
            return Some((kind, [a, a], [p, q, b, 0]));
        }
        self.product(b).map(|(p, q)| {
            let kind = if minus {
                OpKind::NegMulAdd
            } else {
                OpKind::MulAdd
            };
            (kind, [b, b], [p, q, a, 0])
        })
    }
}
