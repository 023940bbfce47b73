//! Compile errors that name the field, quote the expression and point at the position.

use std::fmt;

/// What is wrong with an expression.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ExprErrorKind {
    /// Nothing was typed.
    Empty,
    /// The text is not a well-formed expression.
    Syntax(String),
    /// A name that is neither a state, a parameter, `t` nor a constant.
    UnknownName {
        /// The name as typed.
        name: String,
        /// The names that would be accepted here.
        known: Vec<String>,
    },
    /// A function that Lamina does not provide.
    UnknownFunction {
        /// The name as typed.
        name: String,
    },
    /// A known function called with the wrong number of arguments.
    WrongArgumentCount {
        /// The function.
        name: String,
        /// How many it takes.
        expected: usize,
        /// How many were given.
        found: usize,
    },
    /// A name that is known but not allowed in this field (for example a state in a period).
    NotAllowedHere {
        /// The name as typed.
        name: String,
        /// Why not.
        reason: String,
    },
}

/// One located problem in one expression.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ExprError {
    /// Which field the expression belongs to, e.g. `rate of state 'v'`.
    pub label: String,
    /// The expression as typed.
    pub expression: String,
    /// Character offset of the problem in `expression` (0-based).
    pub position: usize,
    /// What is wrong.
    pub kind: ExprErrorKind,
}

impl fmt::Display for ExprErrorKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Empty => write!(f, "the expression is empty"),
            Self::Syntax(msg) => write!(f, "{msg}"),
            Self::UnknownName { name, known } => {
                write!(
                    f,
                    "unknown name '{name}'; known names: {}",
                    known.join(", ")
                )
            }
            Self::UnknownFunction { name } => write!(
                f,
                "unknown function '{name}'; functions: {}",
                super::FUNCTIONS
                    .iter()
                    .map(|(n, _)| *n)
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
            Self::WrongArgumentCount {
                name,
                expected,
                found,
            } => write!(
                f,
                "function '{name}' takes {expected} argument{}, {found} given",
                if *expected == 1 { "" } else { "s" }
            ),
            Self::NotAllowedHere { name, reason } => {
                write!(f, "'{name}' is not allowed here: {reason}")
            }
        }
    }
}

impl fmt::Display for ExprError {
    /// `label: message` then the expression and a caret under the position.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "{}, at character {}: {}",
            self.label,
            self.position + 1,
            self.kind
        )?;
        writeln!(f, "    {}", self.expression)?;
        write!(f, "    {}^", " ".repeat(self.position))
    }
}

impl std::error::Error for ExprError {}

/// All problems found while compiling a set of expressions.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CompileError {
    /// One entry per problem, in source order.
    pub errors: Vec<ExprError>,
}

impl fmt::Display for CompileError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (idx, err) in self.errors.iter().enumerate() {
            if idx > 0 {
                writeln!(f)?;
            }
            write!(f, "{err}")?;
        }
        Ok(())
    }
}

impl std::error::Error for CompileError {}
