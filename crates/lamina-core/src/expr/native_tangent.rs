//! Forward-mode tangents in machine code, generated instruction by instruction with the
//! coefficients and zero-skipping of [`super::tangent`]. Each value carries a sparse tangent:
//! entries along a list of directions, where the seed of a state says which directions and
//! what entries. The Jacobian seeds state `i` with a unit entry along direction `i` (so a value
//! carries only the states it depends on); the derivative along given vectors seeds state `i`
//! with entry `q_k[i]` along direction `k`, for every vector `k`.

use cranelift_codegen::ir::condcodes::FloatCC;
use cranelift_codegen::ir::{InstBuilder, Value};

use super::instr::{Func1, Func2, Instr};
use super::native::Gen;
use super::native_calls::{Call, FUNC1, FUNC2};

/// The tangent of one value: `(direction, entry)` for the directions along which it may vary,
/// in increasing order; every other entry is zero.
#[derive(Clone, Default)]
pub(super) struct Sparse(Vec<(u32, Value)>);

impl Sparse {
    /// The tangent with these `(direction, entry)` pairs, directions in increasing order.
    pub(super) fn new(entries: Vec<(u32, Value)>) -> Self {
        Self(entries)
    }

    /// Entry `j`, if it may be nonzero.
    pub(super) fn get(&self, j: usize) -> Option<Value> {
        self.0
            .iter()
            .find(|(k, _)| *k as usize == j)
            .map(|&(_, v)| v)
    }
}

/// Emits the tangent of every instruction given their `values`; `seed(g, i)` emits the tangent
/// of state `i`. `careful` keeps the reference's skipping of zero entries in sums (so that a
/// zero entry stays zero even where its coefficient is infinite or not a number); without it
/// a sum's entries are the plain sums of products, bit for bit the careful ones wherever the
/// coefficients are finite (and not finite where one that meets a zero entry is not: the
/// caller then takes the careful form).
pub(super) fn tangents(
    g: &mut Gen<'_, '_>,
    instrs: &[Instr],
    values: &[Value],
    careful: bool,
    mut seed: impl FnMut(&mut Gen<'_, '_>, u32) -> Option<Sparse>,
) -> Option<Vec<Sparse>> {
    let mut tangents: Vec<Sparse> = Vec::with_capacity(instrs.len());
    for (idx, instr) in instrs.iter().enumerate() {
        let val = |slot: u32| values.get(slot as usize).copied();
        let tan = |slot: u32| tangents.get(slot as usize).cloned();
        let this = values.get(idx).copied()?;
        let out = match *instr {
            Instr::Const(_) | Instr::Param(_) | Instr::Time => Sparse::default(),
            Instr::State(i) => seed(g, i)?,
            Instr::Neg(a) if !careful => negate(g, &tan(a)?),
            Instr::Neg(a) => {
                let c = g.b.ins().f64const(-1.0);
                combine1(g, &tan(a)?, c)
            }
            Instr::Add(a, b) | Instr::Sub(a, b) => {
                let cb = if matches!(instr, Instr::Add(..)) {
                    Coefficient::One
                } else {
                    Coefficient::MinusOne
                };
                combine2(g, &tan(a)?, Coefficient::One, &tan(b)?, cb, careful)
            }
            Instr::Mul(a, b) => combine2(
                g,
                &tan(a)?,
                val(b)?.into(),
                &tan(b)?,
                val(a)?.into(),
                careful,
            ),
            Instr::Div(a, b) => {
                let one = g.b.ins().f64const(1.0);
                let inv = g.b.ins().fdiv(one, val(b)?);
                let q = g.b.ins().fmul(this, inv);
                let cb = g.b.ins().fneg(q);
                combine2(g, &tan(a)?, inv.into(), &tan(b)?, cb.into(), careful)
            }
            Instr::Rem(a, b) => {
                let q = g.b.ins().fdiv(val(a)?, val(b)?);
                let q = g.b.ins().trunc(q);
                let cb = g.b.ins().fneg(q);
                combine2(g, &tan(a)?, Coefficient::One, &tan(b)?, cb.into(), careful)
            }
            Instr::Pow(a, b) => {
                let (base, exponent) = (val(a)?, val(b)?);
                let one = g.b.ins().f64const(1.0);
                let e1 = g.b.ins().fsub(exponent, one);
                let pw = g.call(Call::Pow, &[base, e1])?;
                let da = g.b.ins().fmul(exponent, pw);
                let tb = tan(b)?;
                // the log term only where the exponent varies, so a^c stays defined for a <= 0
                let db = if tb.0.is_empty() {
                    g.b.ins().f64const(0.0)
                } else {
                    let zero = g.b.ins().f64const(0.0);
                    let mut varies = None;
                    for &(_, e) in &tb.0 {
                        let ne = g.b.ins().fcmp(FloatCC::NotEqual, e, zero);
                        varies = Some(match varies {
                            None => ne,
                            Some(v) => g.b.ins().bor(v, ne),
                        });
                    }
                    let ln = g.call(Call::F1(Func1::Ln), &[base])?;
                    let term = g.b.ins().fmul(this, ln);
                    g.b.ins().select(varies?, term, zero)
                };
                combine2(g, &tan(a)?, da.into(), &tb, db.into(), careful)
            }
            Instr::PowI(a, n) => {
                let d = if n == 0 {
                    g.b.ins().f64const(0.0)
                } else {
                    let p = g.powi(val(a)?, n - 1)?;
                    let nf = g.b.ins().f64const(f64::from(n));
                    g.b.ins().fmul(nf, p)
                };
                combine1(g, &tan(a)?, d)
            }
            Instr::F1(f, a) => {
                let number = FUNC1.iter().position(|&k| k == f)?;
                let number =
                    g.b.ins()
                        .iconst(cranelift_codegen::ir::types::I32, number as i64);
                let d = g.call(Call::D1, &[number, val(a)?, this])?;
                combine1(g, &tan(a)?, d)
            }
            Instr::F2(f, a, b) => {
                let number = FUNC2.iter().position(|&k: &Func2| k == f)?;
                let number =
                    g.b.ins()
                        .iconst(cranelift_codegen::ir::types::I32, number as i64);
                let da = g.call(Call::D2a, &[number, val(a)?, val(b)?])?;
                let db = g.call(Call::D2b, &[number, val(a)?, val(b)?])?;
                combine2(g, &tan(a)?, da.into(), &tan(b)?, db.into(), careful)
            }
        };
        tangents.push(out);
    }
    Some(tangents)
}

/// A coefficient of a tangent sum: the `1` and `-1` of sums and differences known as such, so
/// that the plain sums add or subtract the entry instead of multiplying it by them first
/// (the same value for every finite entry: `v + 1 e = v + e`, `v + (-1) e = v - e`).
#[derive(Clone, Copy)]
enum Coefficient {
    One,
    MinusOne,
    Of(Value),
}

impl From<Value> for Coefficient {
    fn from(value: Value) -> Self {
        Self::Of(value)
    }
}

impl Coefficient {
    /// The coefficient as a value of the function.
    fn value(self, g: &mut Gen<'_, '_>) -> Value {
        match self {
            Self::One => g.b.ins().f64const(1.0),
            Self::MinusOne => g.b.ins().f64const(-1.0),
            Self::Of(value) => value,
        }
    }

    /// `acc + c e`, the plain sum's next term.
    fn add_to(self, g: &mut Gen<'_, '_>, acc: Value, e: Value) -> Value {
        match self {
            Self::One => g.b.ins().fadd(acc, e),
            Self::MinusOne => g.b.ins().fsub(acc, e),
            Self::Of(c) => {
                let product = g.b.ins().fmul(c, e);
                g.b.ins().fadd(acc, product)
            }
        }
    }
}

/// The plain form of a negation's tangent, `0 - a`: `-a` where `a` is not zero and +0 where
/// it is, as the careful `-1 * a` with its zero skipped (a value that is not finite sends the
/// whole call to the careful form anyway).
fn negate(g: &mut Gen<'_, '_>, ta: &Sparse) -> Sparse {
    let zero = g.b.ins().f64const(0.0);
    Sparse(
        ta.0.iter()
            .map(|&(j, a)| (j, g.b.ins().fsub(zero, a)))
            .collect(),
    )
}

/// `ca * a` where `a` is not zero, else 0 (as `tangent::combine1`), in both forms: the
/// product of a zero entry may be -0, where the skipping gives +0.
fn combine1(g: &mut Gen<'_, '_>, ta: &Sparse, ca: Value) -> Sparse {
    let zero = g.b.ins().f64const(0.0);
    let mut out = Vec::with_capacity(ta.0.len());
    for &(j, a) in &ta.0 {
        let product = g.b.ins().fmul(ca, a);
        let nonzero = g.b.ins().fcmp(FloatCC::NotEqual, a, zero);
        out.push((j, g.b.ins().select(nonzero, product, zero)));
    }
    Sparse(out)
}

/// `0 (+ ca * a where a is not zero) (+ cb * b where b is not zero)`, in that order (as
/// `tangent::combine2`), over the union of both tangents' states; not `careful`, the plain
/// `0 + ca * a + cb * b` of the entries there, the same value wherever the coefficients are
/// finite.
fn combine2(
    g: &mut Gen<'_, '_>,
    ta: &Sparse,
    ca: Coefficient,
    tb: &Sparse,
    cb: Coefficient,
    careful: bool,
) -> Sparse {
    let zero = g.b.ins().f64const(0.0);
    let mut out = Vec::with_capacity(ta.0.len() + tb.0.len());
    let (mut i, mut k) = (0, 0);
    loop {
        // the next state in either tangent, with its entry from each (if there)
        let (j, a, b) = match (ta.0.get(i).copied(), tb.0.get(k).copied()) {
            (Some((x, a)), Some((y, b))) if x == y => {
                i += 1;
                k += 1;
                (x, Some(a), Some(b))
            }
            (Some((x, a)), Some((y, _))) if x < y => {
                i += 1;
                (x, Some(a), None)
            }
            (Some((x, a)), None) => {
                i += 1;
                (x, Some(a), None)
            }
            (_, Some((y, b))) => {
                k += 1;
                (y, None, Some(b))
            }
            (None, None) => break,
        };
        if !careful {
            // from zero as the careful sum: a sum that starts at +0 is never -0, so a zero
            // entry's product (+0 or -0 with a finite coefficient) leaves it as skipping would
            let mut v = zero;
            for (e, c) in [(a, ca), (b, cb)] {
                if let Some(e) = e {
                    v = c.add_to(g, v, e);
                }
            }
            out.push((j, v));
            continue;
        }
        let mut v = zero;
        if let Some(a) = a {
            let ca = ca.value(g);
            v = term(g, v, a, ca, zero);
        }
        if let Some(b) = b {
            let cb = cb.value(g);
            v = term(g, v, b, cb, zero);
        }
        out.push((j, v));
    }
    Sparse(out)
}

/// `acc + c * e` where `e` is not zero (NaN counts as not zero), else `acc`.
fn term(g: &mut Gen<'_, '_>, acc: Value, e: Value, c: Value, zero: Value) -> Value {
    let product = g.b.ins().fmul(c, e);
    let sum = g.b.ins().fadd(acc, product);
    let nonzero = g.b.ins().fcmp(FloatCC::NotEqual, e, zero);
    g.b.ins().select(nonzero, sum, acc)
}
