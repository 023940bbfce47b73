//! The instructions of the evaluation program and their values and derivatives.

/// Functions of one argument.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Func1 {
    Sin,
    Cos,
    Tan,
    Asin,
    Acos,
    Atan,
    Sinh,
    Cosh,
    Tanh,
    Exp,
    Ln,
    Log10,
    Sqrt,
    Abs,
    Sign,
    Floor,
    Ceil,
    Step,
}

/// Functions of two arguments.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Func2 {
    Atan2,
    Min,
    Max,
}

/// One instruction; arguments are slots of earlier instructions.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Instr {
    Const(f64),
    State(u32),
    Param(u32),
    Time,
    Neg(u32),
    Add(u32, u32),
    Sub(u32, u32),
    Mul(u32, u32),
    Div(u32, u32),
    Rem(u32, u32),
    Pow(u32, u32),
    PowI(u32, i32),
    F1(Func1, u32),
    F2(Func2, u32, u32),
}

/// `sign(u)`: -1, 0 or 1.
#[inline]
pub fn sign(u: f64) -> f64 {
    if u > 0.0 {
        1.0
    } else if u < 0.0 {
        -1.0
    } else {
        u // 0 stays 0, NaN stays NaN
    }
}

/// `step(u)`: 0 for u < 0, 1 otherwise.
#[inline]
pub fn step(u: f64) -> f64 {
    if u < 0.0 {
        0.0
    } else if u.is_nan() {
        u
    } else {
        1.0
    }
}

impl Func1 {
    /// The function's value.
    #[inline]
    pub fn apply(self, a: f64) -> f64 {
        match self {
            Self::Sin => a.sin(),
            Self::Cos => a.cos(),
            Self::Tan => a.tan(),
            Self::Asin => a.asin(),
            Self::Acos => a.acos(),
            Self::Atan => a.atan(),
            Self::Sinh => a.sinh(),
            Self::Cosh => a.cosh(),
            Self::Tanh => a.tanh(),
            Self::Exp => a.exp(),
            Self::Ln => a.ln(),
            Self::Log10 => a.log10(),
            Self::Sqrt => a.sqrt(),
            Self::Abs => a.abs(),
            Self::Sign => sign(a),
            Self::Floor => a.floor(),
            Self::Ceil => a.ceil(),
            Self::Step => step(a),
        }
    }

    /// Derivative with respect to the argument, given the argument `a` and the value `v`.
    #[inline]
    pub fn derivative(self, a: f64, v: f64) -> f64 {
        match self {
            Self::Sin => a.cos(),
            Self::Cos => -a.sin(),
            Self::Tan => 1.0 + v * v,
            Self::Asin => 1.0 / (1.0 - a * a).sqrt(),
            Self::Acos => -1.0 / (1.0 - a * a).sqrt(),
            Self::Atan => 1.0 / (1.0 + a * a),
            Self::Sinh => a.cosh(),
            Self::Cosh => a.sinh(),
            Self::Tanh => 1.0 - v * v,
            Self::Exp => v,
            Self::Ln => 1.0 / a,
            Self::Log10 => 1.0 / (a * std::f64::consts::LN_10),
            Self::Sqrt => 0.5 / v,
            Self::Abs => sign(a),
            Self::Sign | Self::Floor | Self::Ceil | Self::Step => 0.0,
        }
    }
}

impl Func2 {
    /// The function's value.
    #[inline]
    pub fn apply(self, a: f64, b: f64) -> f64 {
        match self {
            Self::Atan2 => a.atan2(b),
            Self::Min => {
                if a <= b || b.is_nan() {
                    a
                } else {
                    b
                }
            }
            Self::Max => {
                if a >= b || b.is_nan() {
                    a
                } else {
                    b
                }
            }
        }
    }

    /// Partial derivatives with respect to both arguments.
    #[inline]
    pub fn derivatives(self, a: f64, b: f64) -> (f64, f64) {
        match self {
            Self::Atan2 => {
                let r2 = a * a + b * b;
                (b / r2, -a / r2)
            }
            Self::Min => {
                if a <= b {
                    (1.0, 0.0)
                } else {
                    (0.0, 1.0)
                }
            }
            Self::Max => {
                if a >= b {
                    (1.0, 0.0)
                } else {
                    (0.0, 1.0)
                }
            }
        }
    }
}

/// Integer power by repeated squaring (exact for the small exponents typed in models).
#[inline]
pub fn powi(a: f64, n: i32) -> f64 {
    a.powi(n)
}

impl Instr {
    /// Whether the instruction reads an input rather than computing.
    pub fn is_leaf(&self) -> bool {
        matches!(
            self,
            Self::Const(_) | Self::State(_) | Self::Param(_) | Self::Time
        )
    }

    /// Argument slots.
    pub fn args(&self) -> Vec<u32> {
        match *self {
            Self::Const(_) | Self::State(_) | Self::Param(_) | Self::Time => Vec::new(),
            Self::Neg(a) | Self::PowI(a, _) | Self::F1(_, a) => vec![a],
            Self::Add(a, b)
            | Self::Sub(a, b)
            | Self::Mul(a, b)
            | Self::Div(a, b)
            | Self::Rem(a, b)
            | Self::Pow(a, b)
            | Self::F2(_, a, b) => vec![a, b],
        }
    }

    /// Renumbers the argument slots through `map`.
    pub fn remap(&self, map: &[u32]) -> Self {
        let m = |s: u32| map[s as usize];
        match *self {
            Self::Neg(a) => Self::Neg(m(a)),
            Self::PowI(a, n) => Self::PowI(m(a), n),
            Self::F1(f, a) => Self::F1(f, m(a)),
            Self::Add(a, b) => Self::Add(m(a), m(b)),
            Self::Sub(a, b) => Self::Sub(m(a), m(b)),
            Self::Mul(a, b) => Self::Mul(m(a), m(b)),
            Self::Div(a, b) => Self::Div(m(a), m(b)),
            Self::Rem(a, b) => Self::Rem(m(a), m(b)),
            Self::Pow(a, b) => Self::Pow(m(a), m(b)),
            Self::F2(f, a, b) => Self::F2(f, m(a), m(b)),
            leaf => leaf,
        }
    }

    /// The value of a non-leaf instruction from its argument values (`b` unused for one
    /// argument). Leaves give NaN here; they are read from the inputs instead.
    #[inline]
    pub fn apply(&self, a: f64, b: f64) -> f64 {
        match *self {
            Self::Const(v) => v,
            Self::State(_) | Self::Param(_) | Self::Time => f64::NAN,
            Self::Neg(_) => -a,
            Self::Add(..) => a + b,
            Self::Sub(..) => a - b,
            Self::Mul(..) => a * b,
            Self::Div(..) => a / b,
            Self::Rem(..) => a % b,
            Self::Pow(..) => a.powf(b),
            Self::PowI(_, n) => powi(a, n),
            Self::F1(f, _) => f.apply(a),
            Self::F2(f, ..) => f.apply(a, b),
        }
    }

    /// A hashable identity: (tag, payload bits, first argument, second argument).
    pub fn key(&self) -> (u8, u64, u32, u32) {
        match *self {
            Self::Const(v) => (0, v.to_bits(), 0, 0),
            Self::State(i) => (1, 0, i, 0),
            Self::Param(i) => (2, 0, i, 0),
            Self::Time => (3, 0, 0, 0),
            Self::Neg(a) => (4, 0, a, 0),
            Self::Add(a, b) => (5, 0, a, b),
            Self::Sub(a, b) => (6, 0, a, b),
            Self::Mul(a, b) => (7, 0, a, b),
            Self::Div(a, b) => (8, 0, a, b),
            Self::Rem(a, b) => (9, 0, a, b),
            Self::Pow(a, b) => (10, 0, a, b),
            Self::PowI(a, n) => (11, n as u32 as u64, a, 0),
            Self::F1(f, a) => (12, f as u64, a, 0),
            Self::F2(f, a, b) => (13, f as u64, a, b),
        }
    }
}
