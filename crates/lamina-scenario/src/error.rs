//! What can go wrong with a scenario file: it cannot be read, it is not well-formed scenario
//! RON, it is of a newer format, or it reads but does not make sense ([`Problem`]s).

use std::fmt;
use std::path::PathBuf;

use crate::source::Location;

/// How serious a [`Problem`] is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Severity {
    /// The scenario can still run, but probably not as meant.
    Warning,
    /// The scenario cannot run until this is fixed.
    Error,
}

/// One thing wrong with a scenario that reads as RON but does not make sense.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Problem {
    /// Error or warning.
    pub severity: Severity,
    /// Field path, e.g. `states[1].rate`, `cut.axes.1`, `strobe.period`.
    pub field: String,
    /// What is wrong and how to fix it; may span several lines (an expression with a caret
    /// under the position).
    pub message: String,
    /// Where the field is in the file, when the scenario was loaded from text.
    pub location: Option<Location>,
}

impl Problem {
    /// Whether this problem stops the scenario from running.
    pub fn is_error(&self) -> bool {
        self.severity == Severity::Error
    }
}

impl fmt::Display for Problem {
    /// `line 7, column 5: error in states[1].rate: message`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if let Some(location) = self.location {
            write!(f, "{location}: ")?;
        }
        let kind = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        write!(f, "{kind} in {}: {}", self.field, self.message)
    }
}

/// Why a scenario could not be loaded (or saved).
#[derive(Debug, thiserror::Error)]
pub enum ScenarioError {
    /// Reading or writing the file failed.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file.
        path: PathBuf,
        /// The underlying error.
        source: std::io::Error,
    },
    /// The text is not a well-formed scenario in RON: a syntax error, an unknown or missing field,
    /// a value of the wrong type or too large for its field, brackets nested deeper than a
    /// scenario can use, or bytes that are not UTF-8 text.
    #[error("{location}: {message}")]
    Syntax {
        /// Where the parser stopped.
        location: Location,
        /// Field path of the value or block involved, when known (empty at the top level).
        field: Option<String>,
        /// What is wrong, in plain words, naming the field.
        message: String,
    },
    /// The file is of a newer format than this version reads.
    #[error(
        "this file is format {found}; this Lamina reads format {supported} and older (the file was written by a newer Lamina)"
    )]
    NewerFormat {
        /// The format the file states.
        found: u64,
        /// The format this version reads.
        supported: u32,
    },
    /// A part of the scenario does not compile for the core (see [`Scenario::compile`]).
    ///
    /// [`Scenario::compile`]: crate::Scenario::compile
    #[error("{field}: {source}")]
    Compile {
        /// The block that does not compile: `states`, `cut` or `strobe`.
        field: &'static str,
        /// What the core said.
        source: lamina_core::run::SpecError,
    },
    /// The file reads but does not make sense; every problem found, errors and warnings.
    #[error("{}", list_problems(.0))]
    Invalid(Vec<Problem>),
}

fn list_problems(problems: &[Problem]) -> String {
    let n_errors = problems.iter().filter(|p| p.is_error()).count();
    let mut out = format!(
        "the scenario has {n_errors} error{}",
        if n_errors == 1 { "" } else { "s" }
    );
    for problem in problems {
        out.push('\n');
        out.push_str(&problem.to_string());
    }
    out
}
