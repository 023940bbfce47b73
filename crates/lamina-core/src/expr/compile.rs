//! Parsing with `meval` and building the shared instruction graph of a whole system.
//!
//! Each expression is tokenized by `meval`, checked name by name against the model (with the
//! position of every token known from a light scan of the text), put in reverse Polish order,
//! and appended to one graph in which equal subexpressions are stored once and constant
//! subexpressions are folded.

use std::collections::HashMap;

use meval::tokenizer::{Operation, Token};

use super::Names;
use super::error::{ExprError, ExprErrorKind};
use super::functions::arity;
use super::instr::{Func1, Func2, Instr};

/// Builds the instruction list, sharing equal subexpressions.
#[derive(Default)]
pub(super) struct Builder {
    pub(super) instrs: Vec<Instr>,
    index: HashMap<InstrKey, u32>,
}

/// Hashable identity of an instruction (floats by their bits).
#[derive(Clone, Copy, PartialEq, Eq, Hash)]
struct InstrKey(u8, u64, u32, u32);

impl Builder {
    /// Adds `instr` (folding it if its arguments are constants) and returns its slot.
    pub(super) fn push(&mut self, instr: Instr) -> u32 {
        let instr = match self.fold(instr) {
            // commutative in IEEE arithmetic: one order, so a*b and b*a are shared
            Instr::Add(a, b) if b < a => Instr::Add(b, a),
            Instr::Mul(a, b) if b < a => Instr::Mul(b, a),
            other => other,
        };
        let key = instr.key();
        let key = InstrKey(key.0, key.1, key.2, key.3);
        if let Some(&slot) = self.index.get(&key) {
            return slot;
        }
        let slot = self.instrs.len() as u32;
        self.instrs.push(instr);
        self.index.insert(key, slot);
        slot
    }

    fn constant(&self, slot: u32) -> Option<f64> {
        match self.instrs[slot as usize] {
            Instr::Const(v) => Some(v),
            _ => None,
        }
    }

    /// Replaces an instruction whose arguments are all constants by its value.
    fn fold(&self, instr: Instr) -> Instr {
        let args = instr.args();
        if args.is_empty() || instr.is_leaf() {
            return instr;
        }
        let mut values = [0.0; 2];
        for (value, &arg) in values.iter_mut().zip(args.iter()) {
            match self.constant(arg) {
                Some(v) => *value = v,
                None => return instr,
            }
        }
        Instr::Const(instr.apply(values[0], values[1]))
    }
}

/// A lexeme's place in the source: start and length in characters.
#[derive(Clone, Copy, Debug)]
struct Span {
    start: usize,
}

/// Finds where each of meval's tokens starts, mirroring its tokenizer's boundaries:
/// identifiers (a function name swallows the following `(`), numbers, single characters.
fn token_starts(text: &str) -> Vec<Span> {
    let chars: Vec<char> = text.chars().collect();
    let mut spans = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let c = chars[i];
        if c.is_whitespace() {
            i += 1;
            continue;
        }
        spans.push(Span { start: i });
        if c.is_ascii_alphabetic() || c == '_' {
            while i < chars.len() && (chars[i].is_ascii_alphanumeric() || chars[i] == '_') {
                i += 1;
            }
            let mut j = i;
            while j < chars.len() && chars[j].is_whitespace() {
                j += 1;
            }
            if j < chars.len() && chars[j] == '(' {
                i = j + 1;
            }
        } else if c.is_ascii_digit() {
            while i < chars.len() && chars[i].is_ascii_digit() {
                i += 1;
            }
            if i < chars.len() && chars[i] == '.' {
                i += 1;
                while i < chars.len() && chars[i].is_ascii_digit() {
                    i += 1;
                }
            }
            if i < chars.len() && (chars[i] == 'e' || chars[i] == 'E') {
                let mut j = i + 1;
                if j < chars.len() && (chars[j] == '+' || chars[j] == '-') {
                    j += 1;
                }
                if j < chars.len() && chars[j].is_ascii_digit() {
                    while j < chars.len() && chars[j].is_ascii_digit() {
                        j += 1;
                    }
                    i = j;
                }
            }
        } else {
            i += 1;
        }
    }
    spans
}

const ALLOWED_SYMBOLS: &str = "+-*/%^(),._";

/// Compiles one expression into `builder`, returning the slot of its value.
pub(super) fn compile_expression(
    builder: &mut Builder,
    names: &Names,
    label: &str,
    text: &str,
) -> Result<u32, Vec<ExprError>> {
    let error = |position: usize, kind: ExprErrorKind| ExprError {
        label: label.to_string(),
        expression: text.to_string(),
        position,
        kind,
    };
    if text.trim().is_empty() {
        return Err(vec![error(0, ExprErrorKind::Empty)]);
    }
    if let Some((position, c)) = text.chars().enumerate().find(|(_, c)| {
        !(c.is_ascii_alphanumeric() || c.is_whitespace() || ALLOWED_SYMBOLS.contains(*c))
    }) {
        return Err(vec![error(
            position,
            ExprErrorKind::Syntax(format!("the character '{c}' is not allowed")),
        )]);
    }
    let end = text.chars().count();
    // meval's tokenizer panics on a few inputs it does not expect; never let that escape.
    let tokens = match std::panic::catch_unwind(|| meval::tokenizer::tokenize(text)) {
        Ok(Ok(tokens)) => tokens,
        Ok(Err(err)) => {
            let (position, message) = match err {
                meval::ParseError::UnexpectedToken(p) => (p, unexpected_message(text, p)),
                meval::ParseError::MissingRParen(n) => (
                    end,
                    format!(
                        "missing {n} closing parenthes{}",
                        if n == 1 { "is" } else { "es" }
                    ),
                ),
                meval::ParseError::MissingArgument => {
                    (end, "the expression ends too early".to_string())
                }
            };
            return Err(vec![error(position, ExprErrorKind::Syntax(message))]);
        }
        Err(_) => {
            return Err(vec![error(
                0,
                ExprErrorKind::Syntax("cannot parse this expression".into()),
            )]);
        }
    };
    let spans = token_starts(text);
    let position_of = |idx: usize| spans.get(idx).map_or(0, |s| s.start);

    let mut errors = Vec::new();
    let known = known_names(names);
    for (idx, token) in tokens.iter().enumerate() {
        match token {
            Token::Var(name) if lookup(names, name).is_none() => {
                let kind = if arity(name).is_some() {
                    ExprErrorKind::Syntax(format!("'{name}' is a function: write {name}(...)"))
                } else {
                    ExprErrorKind::UnknownName {
                        name: name.clone(),
                        known: known.clone(),
                    }
                };
                errors.push(error(position_of(idx), kind));
            }
            Token::Func(name, _) if arity(name).is_none() => {
                errors.push(error(
                    position_of(idx),
                    ExprErrorKind::UnknownFunction { name: name.clone() },
                ));
            }
            _ => {}
        }
    }
    if !errors.is_empty() {
        return Err(errors);
    }
    let rpn = meval::shunting_yard::to_rpn(&tokens).map_err(|err| {
        use meval::RPNError as E;
        let (position, message) = match err {
            E::MismatchedLParen(i) => (
                position_of(i),
                "this parenthesis is never closed".to_string(),
            ),
            E::MismatchedRParen(i) => (
                position_of(i),
                "this parenthesis closes nothing".to_string(),
            ),
            E::UnexpectedComma(i) => (
                position_of(i),
                "a comma outside a function's arguments".to_string(),
            ),
            E::NotEnoughOperands(_) => (
                0,
                "an operator or function is missing an operand".to_string(),
            ),
            E::TooManyOperands => (0, "operands without an operator between them".to_string()),
        };
        vec![error(position, ExprErrorKind::Syntax(message))]
    })?;

    // Function tokens in RPN appear in the same order as in the source, so the n-th
    // function call of the RPN is the n-th function token of the input.
    let func_positions: Vec<usize> = tokens
        .iter()
        .enumerate()
        .filter(|(_, t)| matches!(t, Token::Func(..)))
        .map(|(idx, _)| position_of(idx))
        .collect();
    let mut func_count = 0;
    let mut stack: Vec<u32> = Vec::new();
    for token in &rpn {
        let slot = match token {
            Token::Number(v) => builder.push(Instr::Const(*v)),
            Token::Var(name) => match lookup(names, name) {
                Some(instr) => builder.push(instr),
                None => {
                    return Err(vec![error(
                        0,
                        ExprErrorKind::UnknownName {
                            name: name.clone(),
                            known,
                        },
                    )]);
                }
            },
            Token::Unary(op) => {
                let a = pop(&mut stack, &error)?;
                match op {
                    Operation::Minus => builder.push(Instr::Neg(a)),
                    _ => a,
                }
            }
            Token::Binary(op) => {
                let b = pop(&mut stack, &error)?;
                let a = pop(&mut stack, &error)?;
                binary(builder, *op, a, b)
            }
            Token::Func(name, n_args) => {
                let position = func_positions.get(func_count).copied().unwrap_or(0);
                func_count += 1;
                let found = n_args.unwrap_or(0);
                let expected = arity(name).unwrap_or(0);
                if found != expected {
                    return Err(vec![error(
                        position,
                        ExprErrorKind::WrongArgumentCount {
                            name: name.clone(),
                            expected,
                            found,
                        },
                    )]);
                }
                let mut args = [0u32; 2];
                for arg in args[..found].iter_mut().rev() {
                    *arg = pop(&mut stack, &error)?;
                }
                function(builder, name, args)
            }
            Token::LParen | Token::RParen | Token::Comma => {
                return Err(vec![error(
                    0,
                    ExprErrorKind::Syntax("unbalanced parentheses".into()),
                )]);
            }
        };
        stack.push(slot);
    }
    match stack.as_slice() {
        [slot] => Ok(*slot),
        _ => Err(vec![error(
            0,
            ExprErrorKind::Syntax("operands without an operator between them".into()),
        )]),
    }
}

fn pop(
    stack: &mut Vec<u32>,
    error: &dyn Fn(usize, ExprErrorKind) -> ExprError,
) -> Result<u32, Vec<ExprError>> {
    stack.pop().ok_or_else(|| {
        vec![error(
            0,
            ExprErrorKind::Syntax("an operator is missing an operand".into()),
        )]
    })
}

fn unexpected_message(text: &str, position: usize) -> String {
    match text.chars().nth(position) {
        Some(c) => format!("unexpected '{c}'"),
        None => "unexpected end".to_string(),
    }
}

/// Every name an expression may use, for the "known names" list of an error.
fn known_names(names: &Names) -> Vec<String> {
    let mut known: Vec<String> = names
        .states
        .iter()
        .chain(&names.parameters)
        .cloned()
        .collect();
    known.extend(super::CONSTANTS.iter().map(|c| c.to_string()));
    known
}

/// The leaf instruction a name stands for.
fn lookup(names: &Names, name: &str) -> Option<Instr> {
    if let Some(idx) = names.states.iter().position(|s| s == name) {
        return Some(Instr::State(idx as u32));
    }
    if let Some(idx) = names.parameters.iter().position(|s| s == name) {
        return Some(Instr::Param(idx as u32));
    }
    match name {
        "t" => Some(Instr::Time),
        "pi" => Some(Instr::Const(std::f64::consts::PI)),
        "e" => Some(Instr::Const(std::f64::consts::E)),
        _ => None,
    }
}

fn binary(builder: &mut Builder, op: Operation, a: u32, b: u32) -> u32 {
    match op {
        Operation::Plus => builder.push(Instr::Add(a, b)),
        Operation::Minus => builder.push(Instr::Sub(a, b)),
        Operation::Times => builder.push(Instr::Mul(a, b)),
        Operation::Div => builder.push(Instr::Div(a, b)),
        Operation::Rem => builder.push(Instr::Rem(a, b)),
        Operation::Pow => match builder.instrs[b as usize] {
            Instr::Const(v) if v == v.trunc() && v.abs() <= 64.0 => {
                builder.push(Instr::PowI(a, v as i32))
            }
            _ => builder.push(Instr::Pow(a, b)),
        },
    }
}

fn function(builder: &mut Builder, name: &str, args: [u32; 2]) -> u32 {
    let [a, b] = args;
    let f1 = |f| Instr::F1(f, a);
    let instr = match name {
        "sin" => f1(Func1::Sin),
        "cos" => f1(Func1::Cos),
        "tan" => f1(Func1::Tan),
        "asin" => f1(Func1::Asin),
        "acos" => f1(Func1::Acos),
        "atan" => f1(Func1::Atan),
        "sinh" => f1(Func1::Sinh),
        "cosh" => f1(Func1::Cosh),
        "tanh" => f1(Func1::Tanh),
        "exp" => f1(Func1::Exp),
        "ln" => f1(Func1::Ln),
        "log10" => f1(Func1::Log10),
        "sqrt" => f1(Func1::Sqrt),
        "abs" => f1(Func1::Abs),
        "sign" => f1(Func1::Sign),
        "floor" => f1(Func1::Floor),
        "ceil" => f1(Func1::Ceil),
        "step" => f1(Func1::Step),
        "atan2" => Instr::F2(Func2::Atan2, a, b),
        "min" => Instr::F2(Func2::Min, a, b),
        "max" => Instr::F2(Func2::Max, a, b),
        // arity() accepted the name, so this is unreachable; a constant keeps it panic-free
        _ => Instr::Const(f64::NAN),
    };
    builder.push(instr)
}
