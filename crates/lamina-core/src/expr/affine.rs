//! Whether a program is affine in the states: a cut written as a level surface such as
//! `x - a` is then a plane whose weights and offset follow the parameters.

use super::instr::Instr;
use super::program::Program;

/// How an instruction's value depends on the states.
#[derive(Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
enum Degree {
    /// Not at all: constants, parameters and functions of them.
    Constant,
    /// A constant plus a weighted sum of states.
    Affine,
    /// Anything else (a product of two states, a function of a state, the time, ...).
    Other,
}

impl Program {
    /// Whether every output is a constant plus a weighted sum of the states, the weights and
    /// the constant depending on the parameters only (not on `t`): built from states,
    /// parameters and constants by sums, differences, negation, products with a factor free of
    /// states and quotients by a divisor free of states. Such an output equals
    /// `w . x + c` with `w` its gradient and `c` its value at `x = 0`, up to rounding.
    pub fn is_affine_in_states(&self) -> bool {
        let mut degrees: Vec<Degree> = Vec::with_capacity(self.instrs.len());
        for instr in &self.instrs {
            let of = |slot: u32| degrees[slot as usize];
            let degree = match *instr {
                Instr::Const(_) | Instr::Param(_) => Degree::Constant,
                Instr::State(_) => Degree::Affine,
                Instr::Time => Degree::Other,
                Instr::Neg(a) => of(a),
                Instr::Add(a, b) | Instr::Sub(a, b) => of(a).max(of(b)),
                Instr::Mul(a, b) => match (of(a), of(b)) {
                    (Degree::Constant, d) | (d, Degree::Constant) => d,
                    _ => Degree::Other,
                },
                Instr::Div(a, b) => match of(b) {
                    Degree::Constant => of(a),
                    _ => Degree::Other,
                },
                ref other => {
                    let free = other.args().into_iter().all(|a| of(a) == Degree::Constant);
                    if free {
                        Degree::Constant
                    } else {
                        Degree::Other
                    }
                }
            };
            degrees.push(degree);
        }
        self.outputs
            .iter()
            .all(|&o| degrees[o as usize] <= Degree::Affine)
    }
}

#[cfg(test)]
mod tests {
    use super::super::Names;
    use super::*;

    fn program(text: &str) -> Program {
        let names = Names {
            states: vec!["x".into(), "y".into()],
            parameters: vec!["a".into(), "b".into()],
        };
        Program::compile(&names, &[("test".to_string(), text)]).unwrap()
    }

    #[test]
    fn sums_of_weighted_states_are_affine() {
        // [analytic] each is w . x + c with w and c free of the states
        for text in [
            "x - a",
            "2*x + 3*y - 1",
            "(x - a)*b",
            "-(y/a) + sin(b)*x",
            "x/(a^2 + 1) - b",
            "a",
            "sqrt(a)*(x + y)/3",
        ] {
            assert!(program(text).is_affine_in_states(), "{text}");
        }
    }

    #[test]
    fn products_functions_and_time_are_not_affine() {
        // [analytic] each has a nonzero second derivative in the states, or moves with t
        for text in [
            "x*y - a",
            "x^2 - a",
            "sin(x)",
            "a/x",
            "x - t",
            "abs(x) - a",
            "min(x, a)",
            "x % 2",
        ] {
            assert!(!program(text).is_affine_in_states(), "{text}");
        }
    }
}
