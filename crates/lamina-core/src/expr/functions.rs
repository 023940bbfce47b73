//! The functions and constants an expression may use.

/// Functions with their number of arguments.
pub const FUNCTIONS: &[(&str, usize)] = &[
    ("sin", 1),
    ("cos", 1),
    ("tan", 1),
    ("asin", 1),
    ("acos", 1),
    ("atan", 1),
    ("atan2", 2),
    ("sinh", 1),
    ("cosh", 1),
    ("tanh", 1),
    ("exp", 1),
    ("ln", 1),
    ("log10", 1),
    ("sqrt", 1),
    ("abs", 1),
    ("min", 2),
    ("max", 2),
    ("sign", 1),
    ("floor", 1),
    ("ceil", 1),
    ("step", 1),
];

/// Names with a fixed meaning: the constants and the time.
pub const CONSTANTS: &[&str] = &["pi", "e", "t"];

/// Whether `name` is a function or constant name, and so cannot name a state or parameter.
pub fn is_reserved(name: &str) -> bool {
    CONSTANTS.contains(&name) || FUNCTIONS.iter().any(|(n, _)| *n == name)
}

/// Number of arguments of function `name`, if it is one.
pub fn arity(name: &str) -> Option<usize> {
    FUNCTIONS.iter().find(|(n, _)| *n == name).map(|(_, a)| *a)
}
