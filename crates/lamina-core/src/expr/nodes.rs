//! Expression trees compiled into nested closures.
//!
//! Each operation becomes one closure, specialised (by monomorphisation) to its operation and
//! to the kind of each argument: a state read in place from the state vector, a register
//! (time, parameter, constant or shared value) read by a `u8` index and so without a bounds
//! check, or a sub-tree, which is called. Values pass between closures in machine registers
//! rather than through memory, and a leaf costs no call; the fused operations of up to four
//! leaves make many a rate one call. The arithmetic is that of the reference evaluator,
//! operation for operation (measured on Lorenz inside the DOP853 stepper: a match-dispatched
//! register program cost about twice the closures' overhead).

use super::instr::{Func1, Func2, sign, step};
use super::plan::{OpKind, Registers, Tree};

/// A compiled tree: its value given the state vector and the registers.
pub(super) type Node = Box<dyn Fn(&[f64], &Registers) -> f64 + Send + Sync>;

/// An argument of an operation, before its kind is fixed into a closure's type.
enum Arg {
    State(State),
    Reg(Reg),
    Node(Node),
}

/// Something a closure reads an argument from.
trait Operand: Send + Sync + 'static {
    fn get(&self, x: &[f64], r: &Registers) -> f64;
}

/// A state, read in place (NaN if the state vector is too short, as never happens when the
/// caller passes one value per state).
struct State(u32);

impl Operand for State {
    #[inline(always)]
    fn get(&self, x: &[f64], _: &Registers) -> f64 {
        x.get(self.0 as usize).copied().unwrap_or(f64::NAN)
    }
}

/// A register.
struct Reg(u8);

impl Operand for Reg {
    #[inline(always)]
    fn get(&self, _: &[f64], r: &Registers) -> f64 {
        r[self.0 as usize]
    }
}

impl Operand for Node {
    #[inline(always)]
    fn get(&self, x: &[f64], r: &Registers) -> f64 {
        self(x, r)
    }
}

/// How an output or a statement is computed: read in place, or by a closure.
pub(super) enum Root {
    State(u32),
    Reg(u8),
    Node(Node),
}

/// Compiles `tree`; `None` for a malformed tree (wrong number or kind of arguments).
pub(super) fn compile(tree: &Tree) -> Option<Root> {
    Some(match *tree {
        Tree::State(i) => Root::State(i),
        Tree::Reg(k) => Root::Reg(k),
        Tree::Op(kind, ref args) => Root::Node(operation(kind, args)?),
    })
}

fn arg(tree: &Tree) -> Option<Arg> {
    Some(match *tree {
        Tree::State(i) => Arg::State(State(i)),
        Tree::Reg(k) => Arg::Reg(Reg(k)),
        Tree::Op(kind, ref args) => Arg::Node(operation(kind, args)?),
    })
}

fn operation(kind: OpKind, trees: &[Tree]) -> Option<Node> {
    let mut args = Vec::with_capacity(trees.len());
    for t in trees {
        args.push(arg(t)?);
    }
    let mut args = args.into_iter();
    let mut next = || args.next();
    Some(match kind {
        OpKind::Neg => unary(|a| -a, next()?),
        OpKind::Square => unary(|a| a * a, next()?),
        OpKind::Cube => unary(|a| a * (a * a), next()?),
        OpKind::PowI(n) => unary(move |a: f64| a.powi(n), next()?),
        OpKind::F1(f) => function(f, next()?),
        OpKind::Add => binary(|a, b| a + b, next()?, next()?),
        OpKind::Sub => binary(|a, b| a - b, next()?, next()?),
        OpKind::Mul => binary(|a, b| a * b, next()?, next()?),
        OpKind::Div => binary(|a, b| a / b, next()?, next()?),
        OpKind::Rem => binary(|a, b| a % b, next()?, next()?),
        OpKind::Pow => binary(f64::powf, next()?, next()?),
        OpKind::F2(Func2::Atan2) => binary(f64::atan2, next()?, next()?),
        OpKind::F2(Func2::Min) => binary(|a, b| Func2::Min.apply(a, b), next()?, next()?),
        OpKind::F2(Func2::Max) => binary(|a, b| Func2::Max.apply(a, b), next()?, next()?),
        OpKind::MulAdd => ternary(|a, b, c| a * b + c, next()?, next()?, next()?),
        OpKind::MulSub => ternary(|a, b, c| a * b - c, next()?, next()?, next()?),
        OpKind::NegMulAdd => ternary(|a, b, c| c - a * b, next()?, next()?, next()?),
        OpKind::AddMul => ternary(|a, b, c| (a + b) * c, next()?, next()?, next()?),
        OpKind::SubMul => ternary(|a, b, c| (a - b) * c, next()?, next()?, next()?),
        OpKind::MulMulAdd => quaternary(|a, b, c, d| a * b + c * d, trees)?,
        OpKind::MulMulSub => quaternary(|a, b, c, d| a * b - c * d, trees)?,
        OpKind::AddMulAdd => quaternary(|a, b, c, d| (a + b) * c + d, trees)?,
        OpKind::AddMulSub => quaternary(|a, b, c, d| (a + b) * c - d, trees)?,
        OpKind::NegAddMulAdd => quaternary(|a, b, c, d| d - (a + b) * c, trees)?,
        OpKind::SubMulAdd => quaternary(|a, b, c, d| (a - b) * c + d, trees)?,
        OpKind::SubMulSub => quaternary(|a, b, c, d| (a - b) * c - d, trees)?,
        OpKind::NegSubMulAdd => quaternary(|a, b, c, d| d - (a - b) * c, trees)?,
    })
}

/// One-argument functions: the frequent ones get their own closure, the rest share one.
fn function(f: Func1, a: Arg) -> Node {
    match f {
        Func1::Sin => unary(f64::sin, a),
        Func1::Cos => unary(f64::cos, a),
        Func1::Exp => unary(f64::exp, a),
        Func1::Tanh => unary(f64::tanh, a),
        Func1::Sqrt => unary(f64::sqrt, a),
        Func1::Ln => unary(f64::ln, a),
        Func1::Abs => unary(f64::abs, a),
        Func1::Sign => unary(sign, a),
        Func1::Step => unary(step, a),
        other => unary(move |v| other.apply(v), a),
    }
}

/// Calls `$k` with the argument `$a` turned into its operand type.
macro_rules! with_operand {
    ($a:expr, |$o:ident| $k:expr) => {
        match $a {
            Arg::State($o) => $k,
            Arg::Reg($o) => $k,
            Arg::Node($o) => $k,
        }
    };
}

fn unary<F>(f: F, a: Arg) -> Node
where
    F: Fn(f64) -> f64 + Send + Sync + 'static,
{
    with_operand!(a, |a| Box::new(move |x: &[f64], r: &Registers| f(
        a.get(x, r)
    )))
}

fn binary<F>(f: F, a: Arg, b: Arg) -> Node
where
    F: Fn(f64, f64) -> f64 + Send + Sync + 'static,
{
    with_operand!(a, |a| binary_with(f, a, b))
}

fn binary_with<F, A: Operand>(f: F, a: A, b: Arg) -> Node
where
    F: Fn(f64, f64) -> f64 + Send + Sync + 'static,
{
    with_operand!(b, |b| Box::new(move |x: &[f64], r: &Registers| f(
        a.get(x, r),
        b.get(x, r)
    )))
}

fn ternary<F>(f: F, a: Arg, b: Arg, c: Arg) -> Node
where
    F: Fn(f64, f64, f64) -> f64 + Send + Sync + 'static,
{
    with_operand!(a, |a| ternary_with(f, a, b, c))
}

fn ternary_with<F, A: Operand>(f: F, a: A, b: Arg, c: Arg) -> Node
where
    F: Fn(f64, f64, f64) -> f64 + Send + Sync + 'static,
{
    with_operand!(b, |b| ternary_with2(f, a, b, c))
}

fn ternary_with2<F, A: Operand, B: Operand>(f: F, a: A, b: B, c: Arg) -> Node
where
    F: Fn(f64, f64, f64) -> f64 + Send + Sync + 'static,
{
    with_operand!(c, |c| Box::new(move |x: &[f64], r: &Registers| f(
        a.get(x, r),
        b.get(x, r),
        c.get(x, r)
    )))
}

/// A leaf of a four-argument operation (those are fused on leaves only).
enum Leaf {
    State(State),
    Reg(Reg),
}

/// Calls `$k` with the leaf `$a` turned into its operand type.
macro_rules! with_leaf {
    ($a:expr, |$o:ident| $k:expr) => {
        match $a {
            Leaf::State($o) => $k,
            Leaf::Reg($o) => $k,
        }
    };
}

fn quaternary<F>(f: F, trees: &[Tree]) -> Option<Node>
where
    F: Fn(f64, f64, f64, f64) -> f64 + Send + Sync + 'static,
{
    let leaf = |t: &Tree| match *t {
        Tree::State(i) => Some(Leaf::State(State(i))),
        Tree::Reg(k) => Some(Leaf::Reg(Reg(k))),
        Tree::Op(..) => None,
    };
    let [a, b, c, d] = trees else {
        return None;
    };
    let (a, b, c, d) = (leaf(a)?, leaf(b)?, leaf(c)?, leaf(d)?);
    Some(with_leaf!(a, |a| with_leaf!(b, |b| quaternary_with(
        f, a, b, c, d
    ))))
}

fn quaternary_with<F, A: Operand, B: Operand>(f: F, a: A, b: B, c: Leaf, d: Leaf) -> Node
where
    F: Fn(f64, f64, f64, f64) -> f64 + Send + Sync + 'static,
{
    with_leaf!(c, |c| with_leaf!(d, |d| Box::new(
        move |x: &[f64], r: &Registers| f(a.get(x, r), b.get(x, r), c.get(x, r), d.get(x, r))
    )))
}
