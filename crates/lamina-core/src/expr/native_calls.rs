//! The Rust functions that generated machine code calls (the functions other than `+ - * /`,
//! `sqrt` and `abs`, and the derivatives of functions), registered under fixed symbol names,
//! so that machine code computes exactly what the reference evaluator computes.

use cranelift_codegen::ir::types::{F64, I32};
use cranelift_codegen::ir::{AbiParam, Signature};
use cranelift_jit::JITModule;
use cranelift_module::Module;

use super::instr::{Func1, Func2, sign, step};

/// A Rust function the generated code calls.
#[derive(Clone, Copy, PartialEq)]
pub(super) enum Call {
    Rem,
    Pow,
    PowI,
    F1(Func1),
    F2(Func2),
    /// `Func1::derivative(a, v)` of the function numbered by the first (integer) argument.
    D1,
    /// The first of `Func2::derivatives(a, b)`, function numbered by the first argument.
    D2a,
    /// The second of `Func2::derivatives(a, b)`.
    D2b,
}

impl Call {
    /// The symbol name under which the function is registered (see [`calls`]).
    pub(super) fn symbol(self) -> &'static str {
        self.entry().0
    }

    /// The symbol name and the address of the function.
    fn entry(self) -> (&'static str, *const u8) {
        let unary = |f: Unary| f as *const u8;
        let binary = |f: Binary| f as *const u8;
        let derivative = |f: Derivative| f as *const u8;
        match self {
            Self::Rem => ("lamina_rem", binary(lamina_rem)),
            Self::Pow => ("lamina_pow", binary(lamina_pow)),
            Self::PowI => ("lamina_powi", lamina_powi as PowI as *const u8),
            Self::D1 => ("lamina_d1", derivative(lamina_d1)),
            Self::D2a => ("lamina_d2a", derivative(lamina_d2a)),
            Self::D2b => ("lamina_d2b", derivative(lamina_d2b)),
            Self::F2(Func2::Atan2) => ("lamina_atan2", binary(lamina_atan2)),
            Self::F2(Func2::Min) => ("lamina_min", binary(lamina_min)),
            Self::F2(Func2::Max) => ("lamina_max", binary(lamina_max)),
            Self::F1(f) => match f {
                Func1::Sin => ("lamina_sin", unary(lamina_sin)),
                Func1::Cos => ("lamina_cos", unary(lamina_cos)),
                Func1::Tan => ("lamina_tan", unary(lamina_tan)),
                Func1::Asin => ("lamina_asin", unary(lamina_asin)),
                Func1::Acos => ("lamina_acos", unary(lamina_acos)),
                Func1::Atan => ("lamina_atan", unary(lamina_atan)),
                Func1::Sinh => ("lamina_sinh", unary(lamina_sinh)),
                Func1::Cosh => ("lamina_cosh", unary(lamina_cosh)),
                Func1::Tanh => ("lamina_tanh", unary(lamina_tanh)),
                Func1::Exp => ("lamina_exp", unary(lamina_exp)),
                Func1::Ln => ("lamina_ln", unary(lamina_ln)),
                Func1::Log10 => ("lamina_log10", unary(lamina_log10)),
                Func1::Sqrt => ("lamina_sqrt", unary(lamina_sqrt)),
                Func1::Abs => ("lamina_abs", unary(lamina_abs)),
                Func1::Sign => ("lamina_sign", unary(lamina_sign)),
                Func1::Floor => ("lamina_floor", unary(lamina_floor)),
                Func1::Ceil => ("lamina_ceil", unary(lamina_ceil)),
                Func1::Step => ("lamina_step", unary(lamina_step)),
            },
        }
    }

    /// The function's signature: `f64` arguments (an `i32` exponent for `PowI`, an `i32`
    /// function number first for the derivatives), one `f64` result.
    pub(super) fn signature(self, module: &JITModule) -> Signature {
        let mut s = module.make_signature();
        let params: &[_] = match self {
            Self::F1(_) => &[F64],
            Self::PowI => &[F64, I32],
            Self::Rem | Self::Pow | Self::F2(_) => &[F64, F64],
            Self::D1 | Self::D2a | Self::D2b => &[I32, F64, F64],
        };
        for &ty in params {
            s.params.push(AbiParam::new(ty));
        }
        s.returns.push(AbiParam::new(F64));
        s
    }
}

macro_rules! unary_calls {
    ($($name:ident => $body:expr),* $(,)?) => {
        $(extern "C" fn $name(a: f64) -> f64 {
            let f: fn(f64) -> f64 = $body;
            f(a)
        })*
    };
}

unary_calls! {
    lamina_sin => f64::sin,
    lamina_cos => f64::cos,
    lamina_tan => f64::tan,
    lamina_asin => f64::asin,
    lamina_acos => f64::acos,
    lamina_atan => f64::atan,
    lamina_sinh => f64::sinh,
    lamina_cosh => f64::cosh,
    lamina_tanh => f64::tanh,
    lamina_exp => f64::exp,
    lamina_ln => f64::ln,
    lamina_log10 => f64::log10,
    lamina_sqrt => f64::sqrt,
    lamina_abs => f64::abs,
    lamina_sign => sign,
    lamina_floor => f64::floor,
    lamina_ceil => f64::ceil,
    lamina_step => step,
}

extern "C" fn lamina_rem(a: f64, b: f64) -> f64 {
    a % b
}

extern "C" fn lamina_pow(a: f64, b: f64) -> f64 {
    a.powf(b)
}

extern "C" fn lamina_powi(a: f64, n: i32) -> f64 {
    super::instr::powi(a, n)
}

extern "C" fn lamina_atan2(a: f64, b: f64) -> f64 {
    Func2::Atan2.apply(a, b)
}

extern "C" fn lamina_min(a: f64, b: f64) -> f64 {
    Func2::Min.apply(a, b)
}

extern "C" fn lamina_max(a: f64, b: f64) -> f64 {
    Func2::Max.apply(a, b)
}

/// The one-argument functions in the order of their numbers in derivative calls.
pub(super) const FUNC1: [Func1; 18] = [
    Func1::Sin,
    Func1::Cos,
    Func1::Tan,
    Func1::Asin,
    Func1::Acos,
    Func1::Atan,
    Func1::Sinh,
    Func1::Cosh,
    Func1::Tanh,
    Func1::Exp,
    Func1::Ln,
    Func1::Log10,
    Func1::Sqrt,
    Func1::Abs,
    Func1::Sign,
    Func1::Floor,
    Func1::Ceil,
    Func1::Step,
];

/// The two-argument functions in the order of their numbers in derivative calls.
pub(super) const FUNC2: [Func2; 3] = [Func2::Atan2, Func2::Min, Func2::Max];

extern "C" fn lamina_d1(f: i32, a: f64, v: f64) -> f64 {
    usize::try_from(f)
        .ok()
        .and_then(|f| FUNC1.get(f))
        .map_or(f64::NAN, |f| f.derivative(a, v))
}

extern "C" fn lamina_d2a(f: i32, a: f64, b: f64) -> f64 {
    usize::try_from(f)
        .ok()
        .and_then(|f| FUNC2.get(f))
        .map_or(f64::NAN, |f| f.derivatives(a, b).0)
}

extern "C" fn lamina_d2b(f: i32, a: f64, b: f64) -> f64 {
    usize::try_from(f)
        .ok()
        .and_then(|f| FUNC2.get(f))
        .map_or(f64::NAN, |f| f.derivatives(a, b).1)
}

type Unary = extern "C" fn(f64) -> f64;
type Binary = extern "C" fn(f64, f64) -> f64;
type PowI = extern "C" fn(f64, i32) -> f64;
type Derivative = extern "C" fn(i32, f64, f64) -> f64;

/// The functions generated code may call, by symbol name: every [`Call`].
pub(super) fn calls() -> impl Iterator<Item = (&'static str, *const u8)> {
    [
        Call::Rem,
        Call::Pow,
        Call::PowI,
        Call::D1,
        Call::D2a,
        Call::D2b,
    ]
    .into_iter()
    .chain(FUNC1.map(Call::F1))
    .chain(FUNC2.map(Call::F2))
    .map(Call::entry)
}
